//! The errors a run can end with, explained where the run can tell more.

use crate::problem::Problem;
use crate::solve::stepper::Stats;
use crate::solve::SolveError;

/// Find where the rates went non-finite near `(t, y)` with step `h`: at the
/// point itself, or along an Euler step inside the step.
pub(super) fn explain_nonfinite(problem: &mut dyn Problem, t: f64, y: &[f64], h: f64, stats: &mut Stats) -> SolveError {
    let dim = y.len();
    let mut f = vec![0.0; dim];
    problem.rhs(t, y, &mut f);
    stats.rhs_evals += 1;
    let (tp, yp) = if f.iter().all(|v| v.is_finite()) {
        // Probe along an Euler step: the trouble lies inside the step.
        let yp: Vec<f64> = y.iter().zip(&f).map(|(a, b)| a + h * b).collect();
        let mut fp = vec![0.0; dim];
        problem.rhs(t + h, &yp, &mut fp);
        stats.rhs_evals += 1;
        if fp.iter().all(|v| v.is_finite()) || yp.iter().any(|v| !v.is_finite()) {
            (t, y.to_vec())
        } else {
            (t + h, yp)
        }
    } else {
        (t, y.to_vec())
    };
    let cause = problem.explain_nonfinite(tp, &yp);
    let states = problem.state_names().iter().cloned().zip(yp.iter().copied()).collect();
    SolveError::NonFinite { t: tp, h, cause, states }
}

/// Where in the run an error happened, when it applies to a time.
pub(super) fn failure_time(e: &SolveError) -> Option<f64> {
    match e {
        SolveError::InvalidSettings { .. } => None,
        SolveError::NonFinite { t, .. }
        | SolveError::BlowUp { t, .. }
        | SolveError::StepSizeTooSmall { t, .. }
        | SolveError::MaxSteps { t, .. }
        | SolveError::StepFailed { t, .. } => Some(*t),
    }
}
