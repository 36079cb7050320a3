//! Step-size control: the PI controller and the automatic initial step.
//!
//! The stepper returns a weighted RMS error norm `err` (≤ 1 is acceptable);
//! this module alone decides the next `h`.

use super::explicit::weighted_rms;
use super::stepper::{max_of, Stats, Tolerance};
use crate::problem::Problem;

/// The constants of the step-size controller for one method (see
/// [`PiController`] for the formula). Each explicit pair carries its own in
/// its [`Tableau`](super::tableau::Tableau).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct StepControl {
    /// `β·k`, the weight of the previous step's error times the order `k` of
    /// the estimate; 0 gives the plain (I) controller.
    pub beta_k: f64,
    /// Safety factor on the predicted step.
    pub safety: f64,
    /// Smallest factor by which one step can shrink the next.
    pub fac_min: f64,
    /// Largest factor by which one step can grow the next.
    pub fac_max: f64,
    /// A rejected step is retried with `err^(-α)`, the exponent of accepted
    /// steps, as the Hairer codes do; otherwise with `err^(-1/k)`, the plain
    /// controller's exponent, which shrinks faster.
    pub reject_alpha: bool,
}

impl StepControl {
    /// The defaults of Hairer's `dopri5` code (from memory): `β = 0.04` for
    /// `k = 5` (so `β·k = 0.2`), safety 0.9, factors 0.2 to 10, rejection
    /// with `α`. Used by Dormand–Prince 5(4) and Bogacki–Shampine 3(2).
    pub const DOPRI5: StepControl = StepControl { beta_k: 0.2, safety: 0.9, fac_min: 0.2, fac_max: 10.0, reject_alpha: true };
    /// The defaults of Hairer's `dop853` code (from memory): `β = 0` (its
    /// documentation allows up to 0.04), safety 0.9, factors 0.333 to 6,
    /// rejection with `α`. Used by Dormand–Prince 8(5,3).
    pub const DOP853: StepControl = StepControl { beta_k: 0.0, safety: 0.9, fac_min: 0.333, fac_max: 6.0, reject_alpha: true };
    /// For methods without constants of their own (the stiff methods):
    /// `β·k = 0.2`, safety 0.9, factors 0.2 to 10, rejection with `1/k`.
    pub const GENERAL: StepControl = StepControl { beta_k: 0.2, safety: 0.9, fac_min: 0.2, fac_max: 10.0, reject_alpha: false };
}

/// The PI step-size controller: Gustafsson's controller in the form of
/// Hairer & Wanner, *Solving ODEs II*, 2nd ed., Sec. IV.2, eq. (2.43c), as
/// Hairer's `dopri5` and `dop853` codes run it:
///
/// ```text
/// accepted: h_new = h · clamp(safety · err^(-α) · err_prev^β, fac_min, fac_max)
/// rejected: h_new = h · max(fac_min, safety · err^(-α))     (reject_alpha)
///           h_new = h · max(fac_min, safety · err^(-1/k))   (otherwise)
/// α = 1/k − 0.75 β                                           (`dopri5`'s expo1)
/// ```
///
/// with `k` the order of the error estimate (`err ∝ h^k`: 5 for
/// Dormand–Prince 5(4), 8 for the blended estimate of 8(5,3), 3 for
/// Bogacki–Shampine 3(2)) and `err_prev` the error of the previous accepted
/// step, at least 1e-4 (and 1e-4 at the start, as in `dopri5`). The step
/// after a rejection may not grow. The constants per method are a
/// [`StepControl`]. Gustafsson's own choice `α = 0.7/k`, `β = 0.4/k` is the
/// same formula with `β·k = 0.4`; `dopri5` recommends `β ≤ 0.1` and defaults
/// to 0.04. Compared side by side on the non-stiff bench problems
/// (`scripts/bench.d/solver`), the codes' defaults need a few per cent fewer
/// evaluations at equal achieved error than `β·k = 0.4` or the plain
/// controller; none wins on every problem.
#[derive(Clone, Debug)]
pub struct PiController {
    alpha: f64,
    beta: f64,
    /// Exponent of a rejected step: `α` or `1/k`.
    reject: f64,
    control: StepControl,
    /// `ln err_prev`: with it each step costs one `ln` and one `exp`
    /// instead of two powers.
    ln_err_prev: f64,
    rejected: bool,
}

/// `ln 1e-4`, the starting `ln err_prev`.
const LN_ERR_START: f64 = -9.210340371976184;

impl PiController {
    /// A controller for an error estimate of order `k` (≥ 1) with the
    /// constants `control`.
    pub fn new(k: u32, control: StepControl) -> Self {
        let k = k.max(1) as f64;
        let beta = control.beta_k / k;
        let alpha = 1.0 / k - 0.75 * beta;
        let reject = if control.reject_alpha { alpha } else { 1.0 / k };
        PiController { alpha, beta, reject, control, ln_err_prev: LN_ERR_START, rejected: false }
    }

    /// Forget the history (after an event, a switch or a change of method).
    pub fn reset(&mut self) {
        self.ln_err_prev = LN_ERR_START;
        self.rejected = false;
    }

    /// The factor for the next step after an accepted step with error `err`
    /// (`fac_max` for `err = 0`).
    pub fn accepted(&mut self, err: f64) -> f64 {
        let c = &self.control;
        let ln_err = err.ln();
        let fac = if err <= 0.0 {
            c.fac_max
        } else {
            // safety · err^(-α) · err_prev^β
            (c.safety * (self.beta * self.ln_err_prev - self.alpha * ln_err).exp()).clamp(c.fac_min, c.fac_max)
        };
        let fac = if self.rejected { fac.min(1.0) } else { fac };
        // err_prev = max(err, 1e-4), which also drops the -inf of ln(0).
        self.ln_err_prev = max_of(ln_err, LN_ERR_START);
        self.rejected = false;
        fac
    }

    /// The factor for the retry after a rejected step with error `err` (> 1).
    pub fn rejected(&mut self, err: f64) -> f64 {
        self.rejected = true;
        let c = &self.control;
        if err.is_finite() {
            (c.safety * err.powf(-self.reject)).clamp(c.fac_min, 1.0)
        } else {
            c.fac_min
        }
    }
}

/// The automatic initial step of Hairer, Nørsett & Wanner, *Solving ODEs I*,
/// 2nd ed., Sec. II.4, p. 169 (the `hinit` routine of `dopri5`):
///
/// 1. `d0 = ‖y0‖`, `d1 = ‖f(t0, y0)‖` in the weighted RMS norm;
/// 2. `h0 = 0.01 · d0 / d1` (or 1e-6 when either is below 1e-5);
/// 3. one explicit Euler step of `h0`, `d2 = ‖f(t0 + h0, y1) − f0‖ / h0`;
/// 4. `h1 = (0.01 / max(d1, d2))^(1/(p+1))` (or `max(1e-6, 1e-3 h0)` when both are ≤ 1e-15);
/// 5. `h = min(100 h0, h1, h_max)`.
///
/// Costs two evaluations of `f`. Returns the magnitude of `h`.
#[allow(clippy::too_many_arguments)]
pub fn initial_step(
    problem: &mut dyn Problem,
    t0: f64,
    y0: &[f64],
    dir: f64,
    order: u32,
    tol: &Tolerance,
    h_max: f64,
    stats: &mut Stats,
) -> f64 {
    let n = y0.len();
    // One scratch buffer: zeros, f(t0, y0), the Euler step and f there.
    let mut buf = vec![0.0; 4 * n];
    let (zero, rest) = buf.split_at_mut(n);
    let (f0, rest) = rest.split_at_mut(n);
    let (y1, f1) = rest.split_at_mut(n);
    let zero = &*zero;
    problem.rhs(t0, y0, f0);
    stats.rhs_evals += 1;
    let d0 = weighted_rms(y0, y0, zero, tol);
    let d1 = weighted_rms(f0, y0, zero, tol);
    if !d1.is_finite() {
        return h_max.min(1e-6);
    }
    let mut h0 = if d0 < 1e-5 || d1 < 1e-5 { 1e-6 } else { 0.01 * d0 / d1 };
    h0 = h0.min(h_max);
    for ((x, y), f) in y1.iter_mut().zip(y0).zip(&*f0) {
        *x = y + dir * h0 * f;
    }
    problem.rhs(t0 + dir * h0, y1, f1);
    stats.rhs_evals += 1;
    // f1 - f0, in place of f1.
    for (a, b) in f1.iter_mut().zip(&*f0) {
        *a -= b;
    }
    let d2 = weighted_rms(f1, y0, zero, tol) / h0;
    let m = d1.max(d2);
    let h1 = if !m.is_finite() {
        h0 * 1e-3
    } else if m <= 1e-15 {
        (h0 * 1e-3).max(1e-6)
    } else {
        (0.01 / m).powf(1.0 / (order as f64 + 1.0))
    };
    (100.0 * h0).min(h1).min(h_max)
}
