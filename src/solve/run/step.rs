//! The step being accepted, as every part of the driver reads it.

use crate::problem::Problem;
use crate::solve::locate::bracketed_root;
use crate::solve::stepper::Stepper;

/// Samples per step for events, switches and peaks (θ = j/N).
pub(super) const SAMPLES: usize = 8;

/// `v > 0`: the side of zero a value is on (zero counts as the negative side).
pub(super) fn sign(v: f64) -> bool {
    v > 0.0
}

/// The step being accepted, as every part of the driver reads it: it runs
/// from `t` to `t_next = t + h`, ends in `y_new`, and `stepper` holds its
/// continuous extension (made ready with [`Stepper::prepare_dense`]).
#[derive(Clone, Copy)]
pub(super) struct StepView<'s> {
    /// Start of the step.
    pub t: f64,
    /// The step (negative in a backward run).
    pub h: f64,
    /// End of the step.
    pub t_next: f64,
    /// The state at `t_next`.
    pub y_new: &'s [f64],
    /// The stepper that took the step.
    pub stepper: &'s dyn Stepper,
}

impl StepView<'_> {
    /// The state at `tau` within the step: `y_new` at its end, else the
    /// continuous extension.
    pub fn dense_at(&self, tau: f64, out: &mut [f64]) {
        if tau == self.t_next {
            out.copy_from_slice(self.y_new);
        } else {
            self.stepper.dense((tau - self.t) / self.h, out);
        }
    }

    /// The sample times of the step `(t, t_next]`.
    pub fn sample_times(&self) -> Vec<f64> {
        (1..=SAMPLES).map(|j| if j == SAMPLES { self.t_next } else { self.t + self.h * j as f64 / SAMPLES as f64 }).collect()
    }

    /// Root of component `k` of a vector function `fv` (of `n` components)
    /// along the continuous extension in `[ta, tb]`, where it is `ga` and
    /// `gb`; returns (old side, new side).
    #[allow(clippy::too_many_arguments)]
    pub fn root(
        &self,
        problem: &mut dyn Problem,
        fv: impl Fn(&mut dyn Problem, f64, &[f64], &mut [f64]),
        k: usize,
        n: usize,
        ta: f64,
        tb: f64,
        ga: f64,
        gb: f64,
    ) -> (f64, f64) {
        let mut ys = vec![0.0; self.y_new.len()];
        let mut out = vec![0.0; n];
        let g = |tau: f64| {
            self.dense_at(tau, &mut ys);
            fv(&mut *problem, tau, &ys, &mut out);
            out[k]
        };
        bracketed_root(g, ta, tb, ga, gb)
    }
}
