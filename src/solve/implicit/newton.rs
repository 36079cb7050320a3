//! The simplified Newton iteration's control, shared by the implicit
//! methods: the iteration bound, the convergence bound `κ` and the
//! contraction test (see the [module doc](super)).

use crate::solve::stepper::Tolerance;

/// Most Newton iterations per attempt.
pub(super) const NEWTON_MAX_ITER: usize = 7;

/// The Newton convergence bound `κ` for a tolerance (see the module doc).
pub(super) fn newton_kappa(tol: &Tolerance) -> f64 {
    let rtol = tol.relative.max(1e-14);
    (10.0 * f64::EPSILON / rtol).max(0.03f64.min(rtol.sqrt()))
}

/// The contraction bookkeeping of one Newton iteration.
#[derive(Clone, Copy, Debug, Default)]
pub(super) struct Contraction {
    last: Option<f64>,
    pub(super) rate: f64,
}

/// What one Newton iterate says about convergence.
pub(super) enum NewtonState {
    Converged,
    Going,
    Failed,
}

impl Contraction {
    /// Feed the weighted norm of the latest increment (iteration `k`, from 0).
    pub(super) fn update(&mut self, norm: f64, k: usize, kappa: f64) -> NewtonState {
        if !norm.is_finite() {
            return NewtonState::Failed;
        }
        let state = match self.last {
            _ if norm == 0.0 => NewtonState::Converged,
            None => NewtonState::Going,
            Some(prev) => {
                let rate = norm / prev;
                self.rate = rate;
                if rate >= 1.0 || rate.powi((NEWTON_MAX_ITER - k) as i32) / (1.0 - rate) * norm > kappa {
                    NewtonState::Failed
                } else if rate / (1.0 - rate) * norm <= kappa {
                    NewtonState::Converged
                } else {
                    NewtonState::Going
                }
            }
        };
        self.last = Some(norm);
        state
    }
}
