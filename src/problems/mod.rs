//! The shared set of test problems: one definition serves the tests and the
//! benches. Each problem states where its exact solution or reference values
//! come from.

use crate::problem::{EventSpec, Problem};

pub mod nonstiff;
pub mod stiff;

/// A problem written as a Rust closure: the hand-written baseline for tests
/// and benches.
pub struct FnProblem<F> {
    names: Vec<String>,
    f: F,
    events: Vec<EventSpec>,
}

impl<F: FnMut(f64, &[f64], &mut [f64])> FnProblem<F> {
    /// A problem with the given state names and rate function `f(t, y, dy)`.
    pub fn new(names: &[&str], f: F) -> Self {
        FnProblem { names: names.iter().map(|s| s.to_string()).collect(), f, events: Vec::new() }
    }
}

impl<F: FnMut(f64, &[f64], &mut [f64])> Problem for FnProblem<F> {
    fn dim(&self) -> usize {
        self.names.len()
    }
    fn state_names(&self) -> &[String] {
        &self.names
    }
    fn rhs(&mut self, t: f64, y: &[f64], dy: &mut [f64]) {
        (self.f)(t, y, dy)
    }
    fn events(&self) -> &[EventSpec] {
        &self.events
    }
}
