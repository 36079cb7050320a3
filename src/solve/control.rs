//! Step-size control: the PI controller and the automatic initial step.
//!
//! The stepper returns a weighted RMS error norm `err` (≤ 1 is acceptable);
//! this module alone decides the next `h`.

use super::explicit::weighted_rms;
use super::stepper::{Stats, Tolerance};
use crate::problem::Problem;

/// The PI step-size controller of Gustafsson, as given in Hairer & Wanner,
/// *Solving ODEs II*, 2nd ed., Sec. IV.2, eq. (2.43c), and used by Hairer's
/// `dopri5`/`dop853` codes:
///
/// ```text
/// h_new = h · clamp(safety · err^(-α) · err_prev^β, fac_min, fac_max)
/// ```
///
/// with `k` the order of the error estimate (`err ∝ h^k`) and `err_prev` the
/// error of the previous accepted step (1e-4 at the start, as in `dopri5`).
/// Constants: `β = 0.2 / k` (0.04 for Dormand–Prince 5(4), the default of
/// `dopri5`, which recommends β ≤ 0.1), `α = 1/k − 0.75 β` (`dopri5`'s
/// `expo1`), `safety = 0.9`, `fac_min = 0.2`, `fac_max = 10`.
/// After a rejection the step may not grow in the next step, and a rejected
/// step shrinks by `max(fac_min, safety · err^(-1/k))` (the plain I
/// controller, which reacts fastest).
#[derive(Clone, Debug)]
pub struct PiController {
    alpha: f64,
    beta: f64,
    inv_k: f64,
    /// `ln err_prev`: with it each step costs one `ln` and one `exp`
    /// instead of two powers.
    ln_err_prev: f64,
    rejected: bool,
}

/// `ln 1e-4`, the starting `ln err_prev`.
const LN_ERR_START: f64 = -9.210340371976184;

/// Safety factor on the predicted step.
pub const SAFETY: f64 = 0.9;
/// Largest shrink factor per step.
pub const FAC_MIN: f64 = 0.2;
/// Largest growth factor per step.
pub const FAC_MAX: f64 = 10.0;

impl PiController {
    /// A controller for an error estimate of order `k` (≥ 1).
    pub fn new(k: u32) -> Self {
        let k = k.max(1) as f64;
        let beta = 0.2 / k;
        PiController { alpha: 1.0 / k - 0.75 * beta, beta, inv_k: 1.0 / k, ln_err_prev: LN_ERR_START, rejected: false }
    }

    /// Forget the history (after an event, a switch or a change of method).
    pub fn reset(&mut self) {
        self.ln_err_prev = LN_ERR_START;
        self.rejected = false;
    }

    /// The factor for the next step after an accepted step with error `err`.
    pub fn accepted(&mut self, err: f64) -> f64 {
        let ln_err = err.ln();
        let fac = if err <= 0.0 {
            FAC_MAX
        } else {
            // safety · err^(-α) · err_prev^β
            (SAFETY * (self.beta * self.ln_err_prev - self.alpha * ln_err).exp()).clamp(FAC_MIN, FAC_MAX)
        };
        let fac = if self.rejected { fac.min(1.0) } else { fac };
        // err_prev = max(err, 1e-4); f64::max also drops the -inf of ln(0).
        self.ln_err_prev = ln_err.max(LN_ERR_START);
        self.rejected = false;
        fac
    }

    /// The factor for the retry after a rejected step with error `err` (> 1).
    pub fn rejected(&mut self, err: f64) -> f64 {
        self.rejected = true;
        if err.is_finite() {
            (SAFETY * err.powf(-self.inv_k)).clamp(FAC_MIN, 1.0)
        } else {
            FAC_MIN
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
    let zero = vec![0.0; n];
    let mut f0 = vec![0.0; n];
    problem.rhs(t0, y0, &mut f0);
    stats.rhs_evals += 1;
    let d0 = weighted_rms(y0, y0, &zero, tol);
    let d1 = weighted_rms(&f0, y0, &zero, tol);
    if !d1.is_finite() {
        return h_max.min(1e-6);
    }
    let mut h0 = if d0 < 1e-5 || d1 < 1e-5 { 1e-6 } else { 0.01 * d0 / d1 };
    h0 = h0.min(h_max);
    let y1: Vec<f64> = y0.iter().zip(&f0).map(|(y, f)| y + dir * h0 * f).collect();
    let mut f1 = vec![0.0; n];
    problem.rhs(t0 + dir * h0, &y1, &mut f1);
    stats.rhs_evals += 1;
    let df: Vec<f64> = f1.iter().zip(&f0).map(|(a, b)| a - b).collect();
    let d2 = weighted_rms(&df, y0, &zero, tol) / h0;
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
