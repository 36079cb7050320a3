//! What the driver watches for beyond accuracy: stiffness (Hairer's test on
//! the explicit methods' steps), fixed steps outside the stability region,
//! and a solution that grows without bound.

use crate::problem::Problem;
use crate::solve::linalg::{dominant_eigenvalue, jacobian};
use crate::solve::methods::MethodInfo;
use crate::solve::stability::{amplification, boundary_radius};
use crate::solve::stepper::{inf_norm, Stats};
use crate::solve::{num, Diagnostic, Level};

/// Consecutive steps over the stability limit before the stiffness warning
/// (Hairer's `dopri5` uses 15).
const STIFF_COUNT: u32 = 15;
/// Fraction of the real stability limit at which a step counts as limited by
/// stability. `dopri5` tests `h·|λ| > 3.25` for a limit of about 3.3 (0.98;
/// Hairer & Wanner, *Solving ODEs II*, Sec. IV.2; from memory). Measured with
/// Dormand–Prince 5(4) on y' = −1000 (y − cos t) − sin t, the steps settle at
/// h·|λ| ≈ 3.30 for rtol 1e-3 but at ≈ 2.72 (0.82 of the limit) for the
/// default rtol 1e-6, where the accuracy of the slow component in the stiff
/// regime holds them a little inside the limit; a stiff method still takes
/// steps hundreds of times longer there. 0.98 would miss that case, hence
/// 0.75. On the non-stiff bench problems it stays silent up to rtol 1e-2.
const STIFF_FRACTION: f64 = 0.75;
/// Non-stiff steps that reset the stiffness count (`dopri5`: 6).
const NONSTIFF_RESET: u32 = 6;
/// The blow-up test compares the solution's size with its size this many
/// accepted steps back.
const GROWTH_LOOKBACK: usize = 20;
/// The recent sizes kept for [`GROWTH_LOOKBACK`]: at most this many; when
/// full, the older half is dropped (so that each step costs O(1) on average
/// and the look-back always has its steps).
const GROWTH_KEPT: usize = 64;

/// Hairer's stiffness test (Hairer & Wanner, *Solving ODEs II*, Sec. IV.2,
/// "Automatic stiffness detection"; `dopri5`'s counts 15 and 6) on the steps
/// of an adaptive explicit method.
pub(super) struct Stiffness {
    stiff_count: u32,
    nonstiff_count: u32,
    warned: bool,
    /// The method's [`MethodInfo::stability_limit`] (0: not watched).
    limit: f64,
}

impl Stiffness {
    /// The test for a method with the stability limit `limit`.
    pub fn new(limit: f64) -> Self {
        Stiffness { stiff_count: 0, nonstiff_count: 0, warned: false, limit }
    }

    /// The same test for the next method, its counts cleared (a warning
    /// given stays given).
    pub fn restart(&self, limit: f64) -> Self {
        Stiffness { warned: self.warned, ..Stiffness::new(limit) }
    }

    /// The stability limit watched.
    pub fn limit(&self) -> f64 {
        self.limit
    }

    /// See an accepted step with the stepper's estimate `est` of `|h·λ|`;
    /// returns whether the test fires. An adaptive run warns (once, when
    /// `warn`) with `method`'s name at `t`.
    pub fn see(&mut self, est: Option<f64>, adaptive: bool, warn: bool, t: f64, method: &str, diagnostics: &mut Vec<Diagnostic>) -> bool {
        let Some(hl) = est else { return false };
        if !(self.limit > 0.0 && adaptive) {
            return false;
        }
        if !(hl > STIFF_FRACTION * self.limit) {
            self.nonstiff_count += 1;
            if self.nonstiff_count >= NONSTIFF_RESET {
                self.stiff_count = 0;
            }
            return false;
        }
        self.nonstiff_count = 0;
        self.stiff_count += 1;
        if self.stiff_count < STIFF_COUNT {
            return false;
        }
        // Under a switching policy (`auto`) the policy acts on the verdict instead.
        if !self.warned && warn {
            self.warned = true;
            diagnostics.push(Diagnostic {
                level: Level::Warning,
                code: "stiff",
                message: format!(
                    "from t ≈ {} on, {} took steps sized by its stability limit, not by the tolerance (h·|λ| ≈ {} on {} recent steps). The system is stiff there: an explicit method needs a great many small steps on it, and the extra steps buy no accuracy. Choose an implicit method (Rosenbrock 4(3) or Radau IIA in the method list) or `auto`, which switches to one by itself",
                    num(t),
                    method,
                    num(hl),
                    STIFF_COUNT
                ),
                t: Some(t),
            });
        }
        true
    }
}

/// Recent sizes of the solution, for the blow-up test.
pub(super) struct Growth {
    y0_norm: f64,
    norms: Vec<f64>,
}

impl Growth {
    /// Starting from the size of `y0`.
    pub fn new(y0: &[f64]) -> Self {
        let y0_norm = inf_norm(y0);
        Growth { y0_norm, norms: vec![y0_norm] }
    }

    /// The size of the state after an accepted step.
    pub fn push(&mut self, norm: f64) {
        self.norms.push(norm);
        if self.norms.len() > GROWTH_KEPT {
            self.norms.drain(..GROWTH_KEPT / 2);
        }
    }

    /// True when the solution `y` has grown a millionfold, or a thousandfold
    /// with a tenfold growth over the last [`GROWTH_LOOKBACK`] steps.
    pub fn growing(&self, y: &[f64]) -> bool {
        let now = inf_norm(y);
        let back = self.norms.len().saturating_sub(GROWTH_LOOKBACK);
        let then = self.norms.get(back).copied().unwrap_or(self.y0_norm);
        now > 1e6 * (1.0 + self.y0_norm) || (now > 1e3 * (1.0 + self.y0_norm) && now >= 10.0 * then.max(f64::MIN_POSITIVE))
    }
}

/// For fixed steps: warn when `h·λ` for the Jacobian's dominant eigenvalue
/// at `(t, y)` lies outside the method's stability region (once per run).
#[allow(clippy::too_many_arguments)]
pub(super) fn check_fixed_stability(
    problem: &mut dyn Problem,
    method: &MethodInfo,
    t: f64,
    y: &[f64],
    step: f64,
    stats: &mut Stats,
    diagnostics: &mut Vec<Diagnostic>,
) {
    if diagnostics.iter().any(|d| d.code == "unstable-step") {
        return;
    }
    let Some(tab) = method.tableau() else { return };
    let dim = y.len();
    if dim == 0 {
        return;
    }
    let jac = jacobian(problem, t, y, stats);
    let Some((re, im)) = dominant_eigenvalue(&jac, dim) else { return };
    if re >= 0.0 {
        // A growing mode grows in the true solution too.
        return;
    }
    let g = tab.stability_polynomial();
    let (zr, zi) = (step * re, step * im);
    if amplification(&g, zr, zi) <= 1.0 + 1e-9 {
        return;
    }
    let modulus = (re * re + im * im).sqrt();
    let r = boundary_radius(&g, im.atan2(re));
    let largest = r / modulus;
    let mode = if im.abs() > 1e-9 * modulus {
        format!("an oscillation with decay rate {} and frequency {} (rad per unit of t)", num(-re), num(im.abs()))
    } else {
        format!("a mode that decays at rate {} per unit of t", num(-re))
    };
    let advice = if largest > 0.0 {
        format!("The largest stable step there is about h = {}.", num(largest))
    } else {
        format!("No step size is stable for {} on this mode; use RK4 or an adaptive method.", method.name)
    };
    diagnostics.push(Diagnostic {
        level: Level::Warning,
        code: "unstable-step",
        message: format!(
            "the step h = {} is too large for {} near t = {}: the model has {}, so h·λ ≈ {}{} lies outside the method's stability region and the computed solution can grow or oscillate while the true one settles. {}",
            num(step),
            method.name,
            num(t),
            mode,
            num(zr),
            if zi != 0.0 { format!(" ± {}i", num(zi.abs())) } else { String::new() },
            advice
        ),
        t: Some(t),
    });
}
