//! Solvers: the method registry, the steppers, step-size control, dense
//! output, event location and the driver that runs them.
//!
//! # The pieces
//! - [`methods`]: the registry ([`methods()`], [`method`]); each entry points
//!   at its family's data ([`methods::Family`]), from which its order, error
//!   order, controller constants, stability function and limit are read.
//! - [`tableau`]: explicit Runge–Kutta methods as data (exact fractions).
//! - [`explicit`]: the one generic stepper that runs any tableau.
//! - [`implicit`]: the implicit Runge–Kutta families, one file each (the
//!   θ-methods, Radau IIA), with their shared Newton control.
//! - [`rosenbrock`]: the Rosenbrock methods (linearly implicit).
//! - [`stepper`]: the [`Stepper`](stepper::Stepper) contract every method
//!   implements, the tolerances and the weighted error norm.
//! - [`control`]: the PI step-size controller and the automatic initial step.
//! - [`linalg`]: Jacobians, LU factorization and power iteration.
//! - [`locate`]: root finding and peak finding on the dense output.
//! - [`stability`]: stability functions and regions.
//! - [`auto`]: the switching policy of the `auto` method.
//! - `run`: [`solve`], the driver, split by concern (validation, output,
//!   events, switches, extrema, the stiffness and growth watch, the loop).
//!
//! # How a run goes
//! [`solve`] checks the [`Settings`], builds the stepper of the chosen method
//! and loops: the controller proposes `h`, the stepper attempts the step, the
//! controller accepts or rejects it. On an accepted step the driver samples the
//! dense output to find switch crossings (where it shortens the step to end
//! exactly past the switch and restarts the stepper), event crossings, peaks
//! and troughs, and the `at` output times. It never panics and its work is
//! bounded by `max_steps`; failures come back as [`Status::Failed`] with the
//! trajectory up to the failure.
//!
//! # Adding a method, and switching between methods
//! - A method is its family's data (a [`tableau::Tableau`], a
//!   [`implicit::RadauTableau`], …) plus one [`MethodInfo`] entry in the
//!   registry in `methods.rs`; a new family is a type implementing
//!   [`stepper::Stepper`] and a [`methods::Family`] variant. Stats such as
//!   `jacobians` and `factorizations` are counted by the stepper in the
//!   `stats` it is given.
//! - Switching method mid-run: a [`MethodInfo`] may carry
//!   `switching: Some(make_policy)`. The driver calls
//!   [`Switching::review`] after every accepted step with a [`StepReport`]
//!   (which includes the stiffness test's verdict); when it returns another
//!   method's id, the driver looks it up (an unknown id fails the run),
//!   builds that method's stepper, resets the controller's history, keeps the
//!   current `h`, records an `Info` diagnostic `method-switch` and continues
//!   from the current point. `auto` ([`auto::Auto`]) runs Dormand–Prince 5(4)
//!   and switches to Radau IIA 5 while the problem is stiff.

pub mod auto;
pub mod control;
pub mod explicit;
pub mod implicit;
pub mod linalg;
pub mod locate;
pub mod methods;
pub mod rosenbrock;
mod run;
pub mod stability;
pub mod stepper;
pub mod tableau;
#[cfg(test)]
pub(crate) mod testing;

pub use run::{invalid, solve, CEILING_OUTPUT};
pub use methods::{method, methods, MethodInfo};
pub use stepper::{Stats, Tolerance};

use crate::problem::NonFiniteCause;

/// What to solve with and how far. All fields have defaults
/// ([`Settings::default`]); set the ones you need with struct update syntax.
#[derive(Clone, Debug, PartialEq)]
pub struct Settings {
    /// Registry id of the method (see [`methods()`]). Default `"dormand-prince-5"`.
    pub method: String,
    /// End of the run; earlier than `t0` integrates backward. Must be finite.
    /// Default 1.
    pub to: f64,
    /// Step size `h` (> 0, finite) for the fixed-step methods, which need it.
    /// Given to an adaptive method it runs that method at this fixed step
    /// without error control (for convergence studies). The last step is
    /// shortened to land exactly on `to`. Default `None`.
    pub step: Option<f64>,
    /// Tolerances of the adaptive methods. Default relative 1e-6, absolute
    /// 1e-9. Valid: both finite and ≥ 0, not both 0; a relative tolerance in
    /// (0, 1e-14) is raised to 1e-14 with a note.
    pub tol: Tolerance,
    /// Output times. When given, the run reports the solution exactly at these
    /// times (from the continuous extension, never by forcing steps); they must
    /// be finite, inside the run's interval and ordered in the direction of the
    /// run, at most `max_output` of them. When `None` (default), the run
    /// reports every accepted step.
    pub at: Option<Vec<f64>>,
    /// Step limit (1 to 100 000 000). Default 1 000 000. The run fails with
    /// [`SolveError::MaxSteps`] there and keeps its partial result.
    pub max_steps: u64,
    /// Most output points kept without `at` (2 to 1 000 000), and most `at`
    /// times. Default 200 000. It is lowered to keep the stored values
    /// (points × (states + helpers)) within 10 million. Beyond it
    /// every other point is dropped (first and last kept) and a `decimated`
    /// note says so.
    pub max_output: usize,
    /// Most event crossings recorded (0 to 1 000 000). Default 10 000. Further `mark`
    /// crossings are dropped with a warning; a `stop` crossing still ends the run.
    pub max_events: usize,
    /// First step size (> 0, finite) for adaptive methods. Default `None`: the
    /// automatic initial step of [`control::initial_step`].
    pub first_step: Option<f64>,
    /// Largest step size (> 0, finite) for adaptive methods. Default `None`:
    /// the length of the run.
    pub max_step: Option<f64>,
    /// Locate every state's and helper's maximum and minimum over the run
    /// ([`Run::extrema`]). Default `true`. It costs no evaluations of the rates
    /// except for `dormand-prince-8`, whose continuous extension needs three more per step.
    pub extrema: bool,
}

impl Default for Settings {
    fn default() -> Self {
        Settings {
            method: "dormand-prince-5".to_string(),
            to: 1.0,
            step: None,
            tol: Tolerance::default(),
            at: None,
            max_steps: 1_000_000,
            max_output: 200_000,
            max_events: 10_000,
            first_step: None,
            max_step: None,
            extrema: true,
        }
    }
}

/// The result of a run: the trajectory, events, extrema and what went on.
#[derive(Clone, Debug, PartialEq)]
pub struct Run {
    /// Output times.
    pub t: Vec<f64>,
    /// `states[i][k]`: state `i` at `t[k]`.
    pub states: Vec<Vec<f64>>,
    /// `helpers[j][k]`: helper `j` at `t[k]`.
    pub helpers: Vec<Vec<f64>>,
    /// Event crossings in time order.
    pub events: Vec<EventHit>,
    /// Maximum and minimum of every state, then every helper, over the run.
    pub extrema: Vec<Extremum>,
    /// Notes, warnings and errors for the engineer, in the order they arose.
    pub diagnostics: Vec<Diagnostic>,
    /// How the run ended.
    pub status: Status,
    /// Work counters.
    pub stats: Stats,
}

/// How a run ended.
#[derive(Clone, Debug, PartialEq)]
pub enum Status {
    /// Reached `to`.
    Finished,
    /// A `stop` event ended the run; `event` is its index in the model's events.
    Stopped {
        /// Index of the event in [`crate::problem::Problem::events`].
        event: usize,
    },
    /// The run could not go on; the result holds the trajectory up to here.
    Failed(SolveError),
}

impl Status {
    /// The status in one word, as the JS API reports it: `finished`,
    /// `stopped` or `failed`.
    pub fn word(&self) -> &'static str {
        match self {
            Status::Finished => "finished",
            Status::Stopped { .. } => "stopped",
            Status::Failed(_) => "failed",
        }
    }
}

/// One crossing of an event.
#[derive(Clone, Debug, PartialEq)]
pub struct EventHit {
    /// Index of the event in [`crate::problem::Problem::events`].
    pub index: usize,
    /// The event's condition text.
    pub name: String,
    /// When it happened (within a few ulps).
    pub t: f64,
    /// The states there.
    pub states: Vec<f64>,
    /// The helpers there.
    pub helpers: Vec<f64>,
}

/// The largest and smallest value of one state or helper over the run.
#[derive(Clone, Debug, PartialEq)]
pub struct Extremum {
    /// Name of the state or helper.
    pub name: String,
    /// Largest value.
    pub max: f64,
    /// When it was reached.
    pub t_max: f64,
    /// Smallest value.
    pub min: f64,
    /// When it was reached.
    pub t_min: f64,
}

/// How serious a diagnostic is.
#[derive(Clone, Copy, Debug, PartialEq, Eq, serde::Serialize)]
#[serde(rename_all = "camelCase")]
pub enum Level {
    /// For information.
    Info,
    /// The result may be wrong or slow to get; read the message.
    Warning,
    /// The run failed.
    Error,
}

/// A plain-language note about a run.
#[derive(Clone, Debug, PartialEq)]
pub struct Diagnostic {
    /// How serious.
    pub level: Level,
    /// Stable kebab-case id: `stiff`, `unstable-step`, `blow-up`, `non-finite`,
    /// `max-steps`, `step-too-small`, `step-failed`, `decimated`, `max-events`,
    /// `tolerance-floor`, `method-switch`.
    pub code: &'static str,
    /// What happened and what to do, for an engineer.
    pub message: String,
    /// Where in the run, when it applies to a time.
    pub t: Option<f64>,
}

/// Why a run could not be done. Only [`SolveError::InvalidSettings`] is
/// returned as `Err` by [`solve`]; the others end a run as [`Status::Failed`].
#[derive(Clone, Debug, PartialEq)]
pub enum SolveError {
    /// A setting or input is out of its valid range.
    InvalidSettings {
        /// The setting, e.g. `step` or `tol.relative`.
        field: &'static str,
        /// What is wrong with it.
        reason: String,
    },
    /// The rates went non-finite (NaN or infinity) and smaller steps did not help.
    NonFinite {
        /// Where it happened.
        t: f64,
        /// The step being tried.
        h: f64,
        /// Which expression went non-finite, when the model can tell.
        cause: Option<NonFiniteCause>,
        /// The states there, by name.
        states: Vec<(String, f64)>,
    },
    /// The solution grows without bound (the step size collapsed while it grew).
    BlowUp {
        /// Where.
        t: f64,
        /// Largest state magnitude reached.
        magnitude: f64,
    },
    /// The step size fell below what the floating-point numbers can resolve.
    StepSizeTooSmall {
        /// Where.
        t: f64,
        /// The step that was too small.
        h: f64,
    },
    /// The step limit was reached before `to`.
    MaxSteps {
        /// Where the run stopped.
        t: f64,
        /// Steps taken.
        steps: u64,
    },
    /// A fixed step failed (an implicit method's iteration did not converge or
    /// its matrix was singular) and a fixed-step run cannot shrink it.
    StepFailed {
        /// Where.
        t: f64,
        /// The step.
        h: f64,
        /// What went wrong.
        fault: stepper::StepFault,
    },
}

impl SolveError {
    /// Where in the run it happened (`None` for invalid settings).
    pub fn time(&self) -> Option<f64> {
        match self {
            SolveError::InvalidSettings { .. } => None,
            SolveError::NonFinite { t, .. }
            | SolveError::BlowUp { t, .. }
            | SolveError::StepSizeTooSmall { t, .. }
            | SolveError::MaxSteps { t, .. }
            | SolveError::StepFailed { t, .. } => Some(*t),
        }
    }

    /// The stable diagnostic code of this error.
    pub fn code(&self) -> &'static str {
        match self {
            SolveError::InvalidSettings { .. } => "invalid-settings",
            SolveError::NonFinite { .. } => "non-finite",
            SolveError::BlowUp { .. } => "blow-up",
            SolveError::StepSizeTooSmall { .. } => "step-too-small",
            SolveError::MaxSteps { .. } => "max-steps",
            SolveError::StepFailed { .. } => "step-failed",
        }
    }
}

/// Formats a number for a message: up to 6 significant digits.
pub(crate) fn num(x: f64) -> String {
    if x == 0.0 || !x.is_finite() {
        return format!("{x}");
    }
    let a = x.abs();
    if (1e-4..1e6).contains(&a) {
        let digits = (5 - a.log10().floor() as i32).max(0) as usize;
        let s = format!("{x:.digits$}");
        if s.contains('.') {
            s.trim_end_matches('0').trim_end_matches('.').to_string()
        } else {
            s
        }
    } else {
        format!("{x:.5e}")
    }
}

impl std::fmt::Display for SolveError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            SolveError::InvalidSettings { field, reason } => write!(f, "invalid setting `{field}`: {reason}"),
            SolveError::NonFinite { t, h, cause, states } => {
                match cause {
                    Some(c) => write!(f, "{} in `{}` at t = {} (h = {})", c.what, c.name, num(*t), num(*h))?,
                    None => write!(f, "the rates became NaN or infinite at t = {} (h = {})", num(*t), num(*h))?,
                }
                if !states.is_empty() {
                    let list: Vec<String> = states.iter().map(|(n, v)| format!("{n} = {}", num(*v))).collect();
                    write!(f, "; there {}", list.join(", "))?;
                }
                write!(f, ". Smaller steps did not help: check the formula's valid range (a level that went negative, a division by zero).")
            }
            SolveError::BlowUp { t, magnitude } => write!(
                f,
                "the solution appears to blow up near t ≈ {} (values reached {}); the model may have a finite-time singularity or a sign error",
                num(*t),
                num(*magnitude)
            ),
            SolveError::StepSizeTooSmall { t, h } => write!(
                f,
                "the step size fell to {} at t = {}, below what the numbers can resolve; the rates may jump there or the problem may be stiff (try a stiff method)",
                num(*h),
                num(*t)
            ),
            SolveError::MaxSteps { t, steps } => write!(
                f,
                "stopped after {steps} steps at t = {}; results up to there are kept. Raise the step limit, loosen the tolerance, or try a stiff method if the steps were tiny",
                num(*t)
            ),
            SolveError::StepFailed { t, h, fault } => write!(
                f,
                "the fixed step h = {} failed at t = {} ({}); try a smaller step",
                num(*h),
                num(*t),
                match fault {
                    stepper::StepFault::NonFinite => "the rates became NaN or infinite",
                    stepper::StepFault::Singular => "the iteration matrix was singular",
                    stepper::StepFault::NewtonFailed => "the Newton iteration did not converge",
                }
            ),
        }
    }
}

impl std::error::Error for SolveError {}

/// What the driver tells a [`Switching`] policy after each accepted step.
#[derive(Clone, Copy, Debug)]
pub struct StepReport {
    /// Time at the end of the step.
    pub t: f64,
    /// The step just taken.
    pub h: f64,
    /// The method that took it.
    pub method: &'static MethodInfo,
    /// The stepper's stiffness estimate `|h·λ|`, when it gives one.
    pub stiffness: Option<f64>,
    /// The edge of the method's stability region on the negative real axis
    /// (0 when unknown).
    pub stability_limit: f64,
    /// Hairer's stiffness test has fired: 15 of the recent steps had
    /// `|h·λ|` at the stability limit.
    pub stiff: bool,
    /// Accepted steps so far.
    pub steps: u64,
}

/// A policy that may change method during a run (the `auto` method).
pub trait Switching {
    /// Called after every accepted step; return the registry id of the method
    /// to continue with, or `None` to keep the current one. The driver looks
    /// the id up; one missing from the registry fails the run.
    fn review(&mut self, report: &StepReport) -> Option<&'static str>;
}
