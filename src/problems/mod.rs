//! The shared set of test problems: one definition serves the tests and the
//! benches. Each problem states where its exact solution or reference values
//! come from.

use crate::problem::{EventSpec, Problem};

pub mod nonstiff;
pub mod stiff;

/// A named problem of the shared set, with where it starts and ends and what
/// the right answer is.
pub struct TestProblem {
    /// Short stable name, e.g. `arenstorf`.
    pub name: &'static str,
    /// Start of the run.
    pub t0: f64,
    /// Initial state.
    pub y0: Vec<f64>,
    /// End of the run.
    pub t_end: f64,
    /// The state at `t_end`, when known.
    pub reference: Option<Vec<f64>>,
    /// Where `reference` comes from (analytic, a published value with its
    /// source, or a committed SciPy/mpmath script).
    pub source: &'static str,
    /// Whether the problem is stiff.
    pub stiff: bool,
    /// Builds the problem.
    pub make: fn() -> Box<dyn Problem>,
}

/// Every problem of the shared set.
pub fn all() -> Vec<TestProblem> {
    let mut v = nonstiff::all();
    v.extend(stiff::all());
    v
}

/// The problem of the shared set with this name.
pub fn by_name(name: &str) -> Option<TestProblem> {
    all().into_iter().find(|p| p.name == name)
}

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
