//! The contract between a model and the solvers.
//!
//! A compiled sheet ([`crate::sheet::Model`]) implements [`Problem`]; so do the
//! hand-written reference problems in [`crate::problems`]. The solvers see
//! nothing else of a model.
//!
//! Conventions, stated once:
//! - states are `y[0..dim]`, the independent variable is `t`;
//! - Jacobians are dense, row-major: `jac[i * dim + j] = ∂f_i/∂y_j`;
//! - an event function `g` fires where it changes sign in the direction its
//!   [`Crossing`] names; `g = lhs - rhs` for a condition `lhs OP rhs`.

/// What happens when an event's condition becomes true.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum EventAction {
    /// End the run at the first crossing (`stop when`).
    Stop,
    /// Record every crossing and go on (`mark when`).
    Mark,
}

/// Which sign change of an event function fires the event.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Crossing {
    /// `g` goes from negative to positive (the condition `lhs > rhs` becomes true).
    Rising,
    /// `g` goes from positive to negative (the condition `lhs < rhs` becomes true).
    Falling,
    /// Either direction (the condition `lhs = rhs`).
    Either,
}

/// One event of a model.
#[derive(Clone, Debug, PartialEq)]
pub struct EventSpec {
    /// The condition text as written in the sheet, e.g. `h < 0.05`.
    pub name: String,
    /// Stop or mark.
    pub action: EventAction,
    /// Which sign change fires it.
    pub crossing: Crossing,
}

/// Why a rate went non-finite, in the model's own words.
#[derive(Clone, Debug, PartialEq)]
pub struct NonFiniteCause {
    /// The name of the helper or rate whose value went non-finite, e.g. `q` or `dh/dt`.
    pub name: String,
    /// What happened, e.g. `sqrt of a negative number`.
    pub what: String,
}

/// A system of first-order rate equations `y' = f(t, y)` with its events.
///
/// Methods take `&mut self` so that an evaluator may keep scratch space and
/// never allocate per call.
pub trait Problem {
    /// Number of states.
    fn dim(&self) -> usize;

    /// Names of the states, in order (`dim` of them).
    fn state_names(&self) -> &[String];

    /// Evaluate the rates: `dy = f(t, y)`. Non-finite values are allowed; the
    /// solver rejects such a step.
    fn rhs(&mut self, t: f64, y: &[f64], dy: &mut [f64]);

    /// Exact Jacobian `∂f/∂y`, row-major `dim × dim`. Returns `false` when the
    /// model has none, and the solver then uses finite differences.
    fn jacobian(&mut self, _t: f64, _y: &[f64], _jac: &mut [f64]) -> bool {
        false
    }

    /// Exact `∂f/∂t` (`dim` values). Returns `false` when the model has none.
    fn time_derivative(&mut self, _t: f64, _y: &[f64], _dfdt: &mut [f64]) -> bool {
        false
    }

    /// Names of the helpers (derived quantities reported beside the states).
    fn helper_names(&self) -> &[String] {
        &[]
    }

    /// Evaluate the helpers at `(t, y)` into `out` (`helper_names().len()` values).
    fn helpers(&mut self, _t: f64, _y: &[f64], _out: &mut [f64]) {}

    /// The helpers' rates of change along a trajectory through `(t, y)` whose
    /// states change at the rates `dy`: `out[m] = ∂h_m/∂t + Σ_j ∂h_m/∂y_j·dy[j]`
    /// (`helper_names().len()` values). Peaks and troughs of the helpers are
    /// located on these, like events. Returns `false` when the model has no
    /// exact derivatives of its helpers; the driver then searches the helpers'
    /// values instead.
    fn helper_rates(&mut self, _t: f64, _y: &[f64], _dy: &[f64], _out: &mut [f64]) -> bool {
        false
    }

    /// The model's events, in order.
    fn events(&self) -> &[EventSpec] {
        &[]
    }

    /// Evaluate every event function `g_i(t, y)` into `out`.
    fn event_values(&mut self, _t: f64, _y: &[f64], _out: &mut [f64]) {}

    /// Number of switch functions: the arguments of `step`, `sign`, `abs`,
    /// `min`/`max`, `clamp` and `floor` in the rates, where `f` is not smooth.
    fn switch_count(&self) -> usize {
        0
    }

    /// Evaluate every switch function into `out` (`switch_count()` values).
    /// The solver ends a step exactly where one changes sign.
    fn switch_values(&mut self, _t: f64, _y: &[f64], _out: &mut [f64]) {}

    /// After a non-finite rate at `(t, y)`, name the first helper or rate that
    /// went non-finite and say why. `None` when the model cannot tell.
    fn explain_nonfinite(&mut self, _t: f64, _y: &[f64]) -> Option<NonFiniteCause> {
        None
    }
}
