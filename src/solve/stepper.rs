//! The stepper contract: one step of a method, nothing more.
//!
//! A stepper advances `(t, y)` by a step `h` that it is given; it never picks
//! `h` (that is the controller's job), never locates events (that is the
//! event locator's job, working on [`Stepper::dense`]) and never loops.

use crate::problem::Problem;

/// Work counters of a run. Plain counts; wall time is measured outside the core.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq, serde::Serialize)]
#[serde(rename_all = "camelCase")]
pub struct Stats {
    /// Right-hand-side evaluations (each `Problem::rhs` call, including finite-difference Jacobians).
    pub rhs_evals: u64,
    /// Accepted steps.
    pub steps: u64,
    /// Rejected step attempts (error too large, non-finite, Newton failure).
    pub rejected: u64,
    /// Jacobian evaluations (exact or by finite differences).
    pub jacobians: u64,
    /// LU factorizations of an iteration matrix.
    pub factorizations: u64,
}

/// Error weights: a component's error `e_i` counts as
/// `e_i / (absolute + relative·max(|y_i|, |y_new_i|))`.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Tolerance {
    /// Relative tolerance. Default 1e-6.
    pub relative: f64,
    /// Absolute tolerance. Default 1e-9.
    pub absolute: f64,
}

impl Tolerance {
    /// The error weight of one component: `absolute + relative·max(|y|, |y_new|)`.
    #[inline]
    pub fn weight(&self, y: f64, y_new: f64) -> f64 {
        self.absolute + self.relative * max_of(y.abs(), y_new.abs())
    }
}

/// Weighted RMS norm of `e` with the weights of [`Tolerance::weight`]:
/// `sqrt(mean((e_i / (atol + rtol·max(|y_i|, |y_new_i|)))²))`; a step is
/// acceptable when it is ≤ 1.
pub fn weighted_rms(e: &[f64], y: &[f64], y_new: &[f64], tol: &Tolerance) -> f64 {
    if e.is_empty() {
        return 0.0;
    }
    let mut s = 0.0;
    for ((ei, yi), zi) in e.iter().zip(y).zip(y_new) {
        let r = ei / tol.weight(*yi, *zi);
        s += r * r;
    }
    (s / e.len() as f64).sqrt()
}

/// `a.max(b)` by comparison: the same value (a NaN operand is ignored, as
/// `f64::max` does), without the call to `fmax` that `f64::max` becomes on
/// wasm32. For the per-step paths.
#[inline]
pub(crate) fn max_of(a: f64, b: f64) -> f64 {
    if a > b || b.is_nan() {
        a
    } else {
        b
    }
}

/// `a.min(b)` by comparison, as [`max_of`].
#[inline]
pub(crate) fn min_of(a: f64, b: f64) -> f64 {
    if a < b || b.is_nan() {
        a
    } else {
        b
    }
}

/// The largest magnitude in `y` (NaNs skipped; 0 for none).
pub(crate) fn inf_norm(y: &[f64]) -> f64 {
    y.iter().fold(0.0, |m, v| max_of(m, v.abs()))
}

impl Default for Tolerance {
    fn default() -> Self {
        Tolerance { relative: 1e-6, absolute: 1e-9 }
    }
}

/// What one step attempt produced.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Attempt {
    /// Weighted RMS norm of the local error estimate (≤ 1 is acceptable), or
    /// `None` for a method without an error estimate (fixed step).
    pub error: Option<f64>,
    /// An estimate of `|h·λ|` for the dominant eigenvalue λ seen by this step,
    /// when the method provides one (used for stiffness detection).
    pub stiffness: Option<f64>,
}

/// Why a step attempt could not produce a result. The driver shrinks `h` and
/// retries; these are not errors of the run by themselves.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum StepFault {
    /// A stage or the result held a NaN or an infinity.
    NonFinite,
    /// The iteration matrix was singular.
    Singular,
    /// A Newton iteration did not converge.
    NewtonFailed,
}

/// One method's step.
pub trait Stepper {
    /// Attempt a step of size `h` (negative for backward runs) from the
    /// accepted state `(t, y)`. Writes the proposed state into `y_new`.
    fn attempt(
        &mut self,
        problem: &mut dyn Problem,
        t: f64,
        y: &[f64],
        h: f64,
        tol: &Tolerance,
        y_new: &mut [f64],
        stats: &mut Stats,
    ) -> Result<Attempt, StepFault>;

    /// The last attempt was accepted (for first-same-as-last reuse and the like).
    fn accept(&mut self);

    /// Whether [`Attempt::stiffness`] is read during this run (by the
    /// stiffness warning or a switching policy). A method whose estimate
    /// costs extra work, such as power iteration on each new Jacobian, skips
    /// it when it is not. By default the estimate is made.
    fn set_stiffness_estimate(&mut self, _on: bool) {}

    /// Forget any data carried between steps: after an event, a switch or a
    /// change of method the next step starts afresh.
    fn restart(&mut self);

    /// `f(t, y)` at the state the next attempt starts from, already
    /// evaluated (by the automatic initial step), for a method whose first
    /// stage it is. By default it is not used.
    fn seed_slope(&mut self, _f: &[f64]) {}

    /// Dense output over the step of the last successful attempt `[t, t + h]`
    /// (the step the driver is about to accept, or has just accepted): the
    /// state at `t + theta·h`, `0 ≤ theta ≤ 1`, into `out`. The driver calls
    /// [`Stepper::prepare_dense`] first.
    fn dense(&self, theta: f64, out: &mut [f64]);

    /// Make [`Stepper::dense`] ready for the last successful attempt. A method
    /// whose continuous extension needs extra stages computes them here, so
    /// that a run which needs no dense output does not pay for it. Called at
    /// most once per attempt, before any `dense` call for it.
    fn prepare_dense(&mut self, _problem: &mut dyn Problem, _stats: &mut Stats) {}

    /// The time derivative `dy/dt` of the dense output at `t + theta·h`, into
    /// `out` (for locating peaks and troughs). The default differentiates
    /// [`Stepper::dense`] numerically; a method with a polynomial continuous
    /// extension gives it exactly. `h` is the step of the last attempt.
    fn dense_slope(&self, theta: f64, h: f64, out: &mut [f64]) {
        let n = out.len();
        let d = 1e-5;
        let (a, b) = if theta + d <= 1.0 { (theta, theta + d) } else { (theta - d, theta) };
        let mut lo = vec![0.0; n];
        self.dense(a, &mut lo);
        self.dense(b, out);
        for (o, l) in out.iter_mut().zip(&lo) {
            *o = (*o - l) / (d * h);
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn weighted_rms_matches_definition() {
        let tol = Tolerance { relative: 0.5, absolute: 1.0 };
        // weights 1 + 0.5·max(|y|,|z|) = 2 and 3
        let v = weighted_rms(&[2.0, 3.0], &[2.0, 0.0], &[1.0, 4.0], &tol);
        assert!((v - 1.0).abs() < 1e-15);
    }
}
