//! `auto`, the default method: Dormand–Prince 5(4) while the problem is not
//! stiff, Radau IIA order 5 while it is.
//!
//! The policy plugs into the driver as a [`Switching`]: the driver runs the
//! current method through its normal machinery (events, `at` output, extrema,
//! non-finite handling) and asks the policy after each accepted step whether
//! to change method. The policy names the method by its registry id; the
//! driver looks it up (an id missing from the registry fails the run) and
//! records each change as an `info` diagnostic `method-switch` with its `t`.
//!
//! - **To the implicit method:** when Hairer's stiffness test fires on the
//!   explicit steps (`StepReport::stiff`: 15 recent steps with `|h·λ|` at the
//!   stability limit, the test of Hairer's `dopri5`; Hairer & Wanner, *Solving
//!   ODEs II*, Sec. IV.2).
//! - **Back to the explicit method:** when, for [`CALM_STEPS`] accepted steps
//!   in a row, the implicit method's `|h·ρ(J)|` (its step times the spectral
//!   radius of the Jacobian) lies below [`CALM_FRACTION`] of Dormand–Prince's
//!   stability limit on the negative real axis: the explicit method could then
//!   take the same steps stably, so stiffness no longer limits it. The
//!   hysteresis (a stricter bound and more steps than the test that switched
//!   in) keeps `auto` from flapping between methods.

use super::{StepReport, Switching};

/// The explicit method of `auto`.
pub const EXPLICIT: &str = "dormand-prince-5";
/// The implicit method of `auto`: fewest Jacobians and factorizations at
/// rtol 1e-4 to 1e-10 among ours (see `scripts/bench.d/stiff`).
pub const IMPLICIT: &str = "radau-iia-5";
/// Accepted implicit steps in a row that must look non-stiff before `auto`
/// switches back.
pub const CALM_STEPS: u32 = 25;
/// The fraction of the explicit method's stability limit that `|h·ρ(J)|` must
/// stay below to count as non-stiff.
pub const CALM_FRACTION: f64 = 0.5;

/// The switching policy of `auto`.
#[derive(Debug, Default)]
pub struct Auto {
    calm: u32,
    /// The explicit method's stability limit, learnt from its reports.
    explicit_limit: f64,
}

/// Builds the policy (the registry's `switching` entry for `auto`).
pub fn policy() -> Box<dyn Switching> {
    Box::new(Auto::default())
}

impl Switching for Auto {
    fn review(&mut self, report: &StepReport) -> Option<&'static str> {
        if !report.method.implicit {
            self.calm = 0;
            if report.stability_limit > 0.0 {
                self.explicit_limit = report.stability_limit;
            }
            return report.stiff.then_some(IMPLICIT);
        }
        let limit = if self.explicit_limit > 0.0 { self.explicit_limit } else { 3.3 };
        match report.stiffness {
            Some(s) if s < CALM_FRACTION * limit => self.calm += 1,
            _ => self.calm = 0,
        }
        if self.calm >= CALM_STEPS {
            self.calm = 0;
            Some(EXPLICIT)
        } else {
            None
        }
    }
}
