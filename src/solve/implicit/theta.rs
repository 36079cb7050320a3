//! The θ-methods: backward Euler and the trapezoidal rule, fixed step, one
//! implicit stage solved by simplified Newton iteration.
// Index loops here mirror the formulas they implement.
#![allow(clippy::needless_range_loop)]

use super::newton::{newton_kappa, Contraction, NewtonState, NEWTON_MAX_ITER};
use crate::problem::Problem;
use crate::solve::linalg::{rates, shifted, Derivatives, Factored};
use crate::solve::stability::StabilityFunction;
use crate::solve::stepper::{weighted_rms, Attempt, Stats, StepFault, Stepper, Tolerance};

/// A fixed-step one-stage θ-method: `y1 = y0 + h[(1-θ) f(t0, y0) + θ f(t1, y1)]`.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct ThetaMethod {
    /// Stable method id.
    pub id: &'static str,
    /// The implicitness `θ`: 1 for backward Euler, 1/2 for the trapezoidal rule.
    pub theta: f64,
    /// Order of the method.
    pub order: u32,
    /// Where the method is described.
    pub reference: &'static str,
}

impl ThetaMethod {
    /// The stability function `R(z) = (1 + (1−θ)z) / (1 − θz)`.
    pub fn stability_function(&self) -> StabilityFunction {
        StabilityFunction::theta(self.theta)
    }
}

/// Backward (implicit) Euler, `backward-euler`: order 1, one stage, L-stable. Fixed
/// step with the user's `h`; for comparison views, to show a method that
/// stays stable at any `h` on a stiff decay. Dense output is linear.
/// Source: Hairer & Wanner, *Solving ODEs II*, Sec. IV.3 (implicit Euler;
/// section from memory).
pub static BACKWARD_EULER: ThetaMethod =
    ThetaMethod { id: "backward-euler", theta: 1.0, order: 1, reference: "Hairer & Wanner, Solving ODEs II, Sec. IV.3 (implicit Euler)" };

/// Trapezoidal rule, `trapezoid`: order 2, A-stable but not L-stable (stiff
/// components are not damped, they flip sign each step). Fixed step with the
/// user's `h`; for comparison views. Dense output is the cubic Hermite
/// interpolant. Source: Hairer & Wanner, *Solving ODEs II*, Sec. IV.3
/// (trapezoidal rule; section from memory).
pub static TRAPEZOID: ThetaMethod =
    ThetaMethod { id: "trapezoid", theta: 0.5, order: 2, reference: "Hairer & Wanner, Solving ODEs II, Sec. IV.3 (trapezoidal rule)" };

/// The stepper of a [`ThetaMethod`]. The Jacobian is taken at the start of
/// each step; the iteration matrix `I - θhJ` is factored once per step.
#[derive(Debug)]
pub struct ThetaStepper {
    method: &'static ThetaMethod,
    deriv: Derivatives,
    m: Factored,
    at_point: bool,
    /// The spectral radius at the last Jacobian; `None` when not estimated.
    rho: Option<f64>,
    f0: Vec<f64>,
    f1: Vec<f64>,
    delta: Vec<f64>,
    /// `[y0, y1, h·f0, h·f1]` of the last successful attempt.
    trial: [Vec<f64>; 4],
}

impl ThetaStepper {
    /// A stepper for `n` states.
    pub fn new(method: &'static ThetaMethod, n: usize) -> Self {
        let z = || vec![0.0; n];
        ThetaStepper {
            method,
            deriv: Derivatives::new(n),
            m: Factored::default(),
            at_point: false,
            rho: Some(0.0),
            f0: z(),
            f1: z(),
            delta: z(),
            trial: [z(), z(), z(), z()],
        }
    }
}

impl Stepper for ThetaStepper {
    fn attempt(
        &mut self,
        problem: &mut dyn Problem,
        t: f64,
        y: &[f64],
        h: f64,
        tol: &Tolerance,
        y_new: &mut [f64],
        stats: &mut Stats,
    ) -> Result<Attempt, StepFault> {
        let n = y.len();
        let th = self.method.theta;
        if !self.at_point {
            rates(problem, t, y, &mut self.f0, stats)?;
            self.deriv.jacobian(problem, t, y, &self.f0, stats)?;
            if let Some(r) = self.rho.as_mut() {
                *r = self.deriv.spectral_radius();
            }
            self.at_point = true;
        }
        self.m.factor(n, shifted(&self.deriv.jac, n, 1.0, th * h), stats)?;
        let kappa = newton_kappa(tol);
        y_new.copy_from_slice(y);
        let mut conv = Contraction::default();
        let mut converged = false;
        for k in 0..NEWTON_MAX_ITER {
            rates(problem, t + h, y_new, &mut self.f1, stats)?;
            for i in 0..n {
                self.delta[i] = -(y_new[i] - y[i] - h * ((1.0 - th) * self.f0[i] + th * self.f1[i]));
            }
            if self.m.solve(&mut self.delta).is_err() {
                break;
            }
            for i in 0..n {
                y_new[i] += self.delta[i];
            }
            match conv.update(weighted_rms(&self.delta, y, y_new, tol), k, kappa) {
                NewtonState::Converged => {
                    converged = true;
                    break;
                }
                NewtonState::Failed => break,
                NewtonState::Going => {}
            }
        }
        if !converged {
            return Err(StepFault::NewtonFailed);
        }
        if !y_new.iter().all(|v| v.is_finite()) {
            return Err(StepFault::NonFinite);
        }
        for i in 0..n {
            // At convergence f(t1, y1) follows from the method's own formula.
            let hf1 = if th == 1.0 { y_new[i] - y[i] } else { ((y_new[i] - y[i]) - (1.0 - th) * h * self.f0[i]) / th };
            self.trial[0][i] = y[i];
            self.trial[1][i] = y_new[i];
            self.trial[2][i] = h * self.f0[i];
            self.trial[3][i] = hf1;
        }
        Ok(Attempt { error: None, stiffness: self.rho.map(|r| h.abs() * r) })
    }

    fn set_stiffness_estimate(&mut self, on: bool) {
        self.rho = on.then_some(0.0);
    }

    fn accept(&mut self) {
        self.at_point = false;
    }

    fn restart(&mut self) {
        self.at_point = false;
    }

    fn dense(&self, theta: f64, out: &mut [f64]) {
        let [y0, y1, hf0, hf1] = &self.trial;
        if self.method.theta == 1.0 {
            for k in 0..out.len() {
                out[k] = y0[k] + theta * (y1[k] - y0[k]);
            }
        } else {
            // Cubic Hermite interpolation on [y0, h f0, y1, h f1].
            let (s, s2, s3) = (theta, theta * theta, theta * theta * theta);
            let (h00, h10, h01, h11) = (2.0 * s3 - 3.0 * s2 + 1.0, s3 - 2.0 * s2 + s, -2.0 * s3 + 3.0 * s2, s3 - s2);
            for k in 0..out.len() {
                out[k] = h00 * y0[k] + h10 * hf0[k] + h01 * y1[k] + h11 * hf1[k];
            }
        }
    }

    fn dense_slope(&self, theta: f64, h: f64, out: &mut [f64]) {
        let [y0, y1, hf0, hf1] = &self.trial;
        if self.method.theta == 1.0 {
            for k in 0..out.len() {
                out[k] = (y1[k] - y0[k]) / h;
            }
        } else {
            let (s, s2) = (theta, theta * theta);
            let (d00, d10, d01, d11) = (6.0 * s2 - 6.0 * s, 3.0 * s2 - 4.0 * s + 1.0, -6.0 * s2 + 6.0 * s, 3.0 * s2 - 2.0 * s);
            for k in 0..out.len() {
                out[k] = (d00 * y0[k] + d10 * hf0[k] + d01 * y1[k] + d11 * hf1[k]) / h;
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::problems::FnProblem;
    use crate::solve::testing::*;

    #[test]
    fn backward_euler_has_order_1() {
        // Analytic solution; common practice: global error ~ h^p.
        let p = order_of(&|| Box::new(ThetaStepper::new(&BACKWARD_EULER, 2)), &[50, 100, 200, 400], || DenseCheck::None);
        assert!((p - 1.0).abs() < 0.2, "observed order {p}");
    }

    #[test]
    fn trapezoid_has_order_2() {
        let p = order_of(&|| Box::new(ThetaStepper::new(&TRAPEZOID, 2)), &[25, 50, 100, 200], || DenseCheck::None);
        assert!((p - 2.0).abs() < 0.2, "observed order {p}");
    }


    /// y' = -1000(y - cos t) - sin t, y(0) = 1: exact solution y = cos t (analytic).
    fn stiff_scalar() -> FnProblem<impl FnMut(f64, &[f64], &mut [f64])> {
        FnProblem::new(&["y"], |t, y: &[f64], dy: &mut [f64]| dy[0] = -1000.0 * (y[0] - t.cos()) - t.sin())
    }

    #[test]
    fn backward_euler_is_stable_on_the_stiff_scalar_at_h_0_01() {
        // Analytic y = cos t; BE's local error here is O(h/1000) per step, so the
        // global error stays ~1e-5 at h = 0.01 over [0, 10].
        let mut p = stiff_scalar();
        let mut st = ThetaStepper::new(&BACKWARD_EULER, 1);
        let (mut y, mut y1, mut stats) = (vec![1.0], vec![0.0], Stats::default());
        let tol = Tolerance::default();
        let h = 0.01;
        let mut worst: f64 = 0.0;
        for k in 0..1000 {
            st.attempt(&mut p, k as f64 * h, &y, h, &tol, &mut y1, &mut stats).unwrap();
            st.accept();
            y.copy_from_slice(&y1);
            worst = worst.max((y[0] - ((k + 1) as f64 * h).cos()).abs());
        }
        assert!(worst < 1e-4, "worst error {worst}");
        // FnProblem has no exact Jacobian: one finite-difference column per step.
        assert_eq!(stats.jacobians, 1000);
    }

    #[test]
    fn singular_iteration_matrix_is_a_fault_not_a_hang() {
        // y' = y with h = 1 makes I - hJ = 0 for backward Euler.
        let mut p = FnProblem::new(&["y"], |_t, y: &[f64], dy: &mut [f64]| dy[0] = y[0]);
        let mut st = ThetaStepper::new(&BACKWARD_EULER, 1);
        let mut y1 = [0.0];
        let r = st.attempt(&mut p, 0.0, &[1.0], 1.0, &Tolerance::default(), &mut y1, &mut Stats::default());
        assert_eq!(r, Err(StepFault::Singular));
    }
}
