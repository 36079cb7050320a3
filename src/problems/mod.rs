//! The shared set of test problems: one definition serves the tests and the
//! benches. Each problem states where its exact solution or reference values
//! come from.

use crate::problem::{EventSpec, NonFiniteCause, Problem};

pub mod bench;
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
    let find = |v: Vec<TestProblem>| v.into_iter().find(|p| p.name == name);
    find(nonstiff::all()).or_else(|| find(stiff::all()))
}

/// A vector function `f(t, y, out)` of an optional part of a [`FnProblem`].
pub type VecFn = Box<dyn FnMut(f64, &[f64], &mut [f64])>;

/// A problem written as a Rust closure: the hand-written baseline for tests
/// and benches. The rates are a generic closure (inlined); events, helpers,
/// switches, the Jacobian and the non-finite explanation are optional boxed
/// closures added with the `with_*` builders.
pub struct FnProblem<F> {
    names: Vec<String>,
    f: F,
    events: Vec<EventSpec>,
    event_fn: Option<VecFn>,
    helper_names: Vec<String>,
    helper_fn: Option<VecFn>,
    switches: usize,
    switch_fn: Option<VecFn>,
    jac_fn: Option<VecFn>,
    explain_fn: Option<Box<dyn FnMut(f64, &[f64]) -> Option<NonFiniteCause>>>,
}

impl<F: FnMut(f64, &[f64], &mut [f64])> FnProblem<F> {
    /// A problem with the given state names and rate function `f(t, y, dy)`.
    pub fn new(names: &[&str], f: F) -> Self {
        FnProblem {
            names: names.iter().map(|s| s.to_string()).collect(),
            f,
            events: Vec::new(),
            event_fn: None,
            helper_names: Vec::new(),
            helper_fn: None,
            switches: 0,
            switch_fn: None,
            jac_fn: None,
            explain_fn: None,
        }
    }

    /// Add events with their functions `g(t, y, out)` (one value per event).
    pub fn with_events(mut self, events: Vec<EventSpec>, g: impl FnMut(f64, &[f64], &mut [f64]) + 'static) -> Self {
        self.events = events;
        self.event_fn = Some(Box::new(g));
        self
    }

    /// Add helpers (derived quantities) with their function `h(t, y, out)`.
    pub fn with_helpers(mut self, names: &[&str], h: impl FnMut(f64, &[f64], &mut [f64]) + 'static) -> Self {
        self.helper_names = names.iter().map(|s| s.to_string()).collect();
        self.helper_fn = Some(Box::new(h));
        self
    }

    /// Add `n` switch functions `s(t, y, out)` where the rates are not smooth.
    pub fn with_switches(mut self, n: usize, s: impl FnMut(f64, &[f64], &mut [f64]) + 'static) -> Self {
        self.switches = n;
        self.switch_fn = Some(Box::new(s));
        self
    }

    /// Add the exact Jacobian `jac(t, y, out)`, row-major.
    pub fn with_jacobian(mut self, j: impl FnMut(f64, &[f64], &mut [f64]) + 'static) -> Self {
        self.jac_fn = Some(Box::new(j));
        self
    }

    /// Add the explanation of a non-finite rate.
    pub fn with_explain(mut self, e: impl FnMut(f64, &[f64]) -> Option<NonFiniteCause> + 'static) -> Self {
        self.explain_fn = Some(Box::new(e));
        self
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
    fn jacobian(&mut self, t: f64, y: &[f64], jac: &mut [f64]) -> bool {
        match self.jac_fn.as_mut() {
            Some(j) => {
                j(t, y, jac);
                true
            }
            None => false,
        }
    }
    fn helper_names(&self) -> &[String] {
        &self.helper_names
    }
    fn helpers(&mut self, t: f64, y: &[f64], out: &mut [f64]) {
        if let Some(h) = self.helper_fn.as_mut() {
            h(t, y, out)
        }
    }
    fn events(&self) -> &[EventSpec] {
        &self.events
    }
    fn event_values(&mut self, t: f64, y: &[f64], out: &mut [f64]) {
        if let Some(g) = self.event_fn.as_mut() {
            g(t, y, out)
        }
    }
    fn switch_count(&self) -> usize {
        self.switches
    }
    fn switch_values(&mut self, t: f64, y: &[f64], out: &mut [f64]) {
        if let Some(s) = self.switch_fn.as_mut() {
            s(t, y, out)
        }
    }
    fn explain_nonfinite(&mut self, t: f64, y: &[f64]) -> Option<NonFiniteCause> {
        self.explain_fn.as_mut().and_then(|e| e(t, y))
    }
}
