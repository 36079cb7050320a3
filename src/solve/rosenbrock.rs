//! Rosenbrock methods: linearly implicit, one LU factorization per step, no
//! Newton iteration. They need the exact Jacobian at the start of each step
//! (finite differences are the fallback) and suit small dense stiff systems at
//! rtol 1e-2 to 1e-8.
//!
//! A tableau is stored in the implementation form of Hairer & Wanner, *Solving
//! Ordinary Differential Equations II* (2nd ed., 1996), Sec. VI.4 (the
//! transformed variables `u_i` of their eq. (4.8)): with `W = I/(hγ) - J`,
//!
//! ```text
//! W u_i = f(t + c_i h, y + Σ_{j<i} a_ij u_j) + Σ_{j<i} (C_ij / h) u_j + d_i h ∂f/∂t
//! y_new = y + Σ b_i u_i,    error = Σ e_i u_i
//! ```
//!
//! The dense output of the Rodas family is
//! `y(t + θh) = (1-θ) y + θ (y_new + (1-θ)(q1 + θ q2))` with
//! `q_k = Σ_j h_kj u_j`.
// Index loops here mirror the formulas they implement.
#![allow(clippy::needless_range_loop)]

use super::linalg::{rates, shifted, Derivatives, Factored};
use super::stability::StabilityFunction;
use super::stepper::{weighted_rms, Attempt, Stats, StepFault, Stepper, Tolerance};
use crate::problem::Problem;

/// A Rosenbrock method in implementation form, with its facts.
#[derive(Debug)]
pub struct RosenbrockTableau {
    /// Stable method id.
    pub id: &'static str,
    /// Order of the solution.
    pub order: u32,
    /// Order of the embedded solution the error estimate compares against.
    pub embedded_order: u32,
    /// The diagonal `γ` of the method.
    pub gamma: f64,
    /// Stage-argument coefficients `a_ij`, row `i` has `i` entries.
    pub a: &'static [&'static [f64]],
    /// Coupling coefficients `C_ij`, row `i` has `i` entries.
    pub c_coupling: &'static [&'static [f64]],
    /// Abscissae `c_i`.
    pub c: &'static [f64],
    /// Time-derivative coefficients `d_i` (the row sums `γ_i` of the original `γ_ij`).
    pub d: &'static [f64],
    /// Solution weights `b_i` on the `u_i`.
    pub b: &'static [f64],
    /// Error weights `e_i` on the `u_i`.
    pub e: &'static [f64],
    /// Dense-output coefficients `h_kj` (two rows) on the `u_j`.
    pub dense: [&'static [f64]; 2],
    /// Where the coefficients come from.
    pub reference: &'static str,
}

impl RosenbrockTableau {
    /// Number of stages.
    pub fn stages(&self) -> usize {
        self.c.len()
    }

    /// The stability function (see [`StabilityFunction::Rosenbrock`]).
    pub fn stability_function(&self) -> StabilityFunction {
        StabilityFunction::Rosenbrock {
            gamma: self.gamma,
            a: self.a.iter().map(|r| r.to_vec()).collect(),
            coupling: self.c_coupling.iter().map(|r| r.to_vec()).collect(),
            b: self.b.to_vec(),
        }
    }
}

/// RODAS (here `rosenbrock-4`): order 4 with an embedded order-3 solution, 6 stages,
/// L-stable and stiffly accurate (both solutions), with a continuous extension
/// of order 3. One Jacobian and one factorization per step, six
/// right-hand-side evaluations. The default stiff method: use it for stiff
/// systems at rtol 1e-2 to 1e-8; at tighter tolerances `radau-iia-5` takes fewer
/// steps.
///
/// Source: Hairer & Wanner, *Solving ODEs II* (2nd ed., 1996), Sec. VI.4,
/// "RODAS" (γ = 1/4, c = 0.386, 0.21, 0.63); the 16-digit coefficients in
/// this implementation form are those of the authors' code `rodas.f`,
/// subroutine `RODCOE`, METH = 1, with its dense-output coefficients. The
/// section and the code are named from memory; the coefficients are checked
/// here by the observed convergence orders of the solution (4), the error
/// estimate (3) and the dense output (3). They are published decimals, not
/// fractions: they solve nonlinear order conditions.
// The digits as published, kept whole.
#[allow(clippy::excessive_precision)]
pub static RODAS4: RosenbrockTableau = RosenbrockTableau {
    id: "rosenbrock-4",
    order: 4,
    embedded_order: 3,
    gamma: 0.25,
    a: &[
        &[],
        &[1.544],
        &[0.9466785280815826, 0.2557011698983284],
        &[3.314825187068521, 2.896124015972201, 0.9986419139977817],
        &[1.221224509226641, 6.019134481288629, 12.53708332932087, -0.6878860361058950],
        &[1.221224509226641, 6.019134481288629, 12.53708332932087, -0.6878860361058950, 1.0],
    ],
    c_coupling: &[
        &[],
        &[-5.6688],
        &[-2.430093356833875, -0.2063599157091915],
        &[-0.1073529058151375, -9.594562251023355, -20.47028614809616],
        &[7.496443313967647, -10.24680431464352, -33.99990352819905, 11.70890893206160],
        &[8.083246795921522, -7.981132988064893, -31.52159432874371, 16.31930543123136, -6.058818238834054],
    ],
    c: &[0.0, 0.386, 0.21, 0.63, 1.0, 1.0],
    d: &[0.25, -0.1043, 0.1035, -0.03620000000000023, 0.0, 0.0],
    b: &[1.221224509226641, 6.019134481288629, 12.53708332932087, -0.6878860361058950, 1.0, 1.0],
    e: &[0.0, 0.0, 0.0, 0.0, 0.0, 1.0],
    dense: [
        &[10.12623508344586, -7.487995877610167, -34.80091861555747, -7.992771707568823, 1.025137723295662, 0.0],
        &[-0.6762803392801253, 6.087714651680015, 16.43084320892478, 24.76722511418386, -6.594389125716872, 0.0],
    ],
    reference: "Hairer & Wanner, Solving ODEs II, Sec. VI.4 (RODAS); coefficients of rodas.f RODCOE METH=1",
};

/// A Rosenbrock stepper running one [`RosenbrockTableau`].
///
/// The Jacobian, `∂f/∂t` and `f(t, y)` at the step's start are evaluated once
/// per accepted point and reused when a rejected step is retried from the same
/// point; the matrix `W` is refactored whenever `h` changes.
#[derive(Debug)]
pub struct Rosenbrock {
    tableau: &'static RosenbrockTableau,
    deriv: Derivatives,
    w: Factored,
    /// `h` of the factorization held in `w`.
    h_factored: f64,
    /// Whether `f0`, the Jacobian and `∂f/∂t` belong to the current point.
    at_point: bool,
    /// The spectral radius at the last Jacobian; `None` when not estimated.
    rho: Option<f64>,
    f0: Vec<f64>,
    u: Vec<Vec<f64>>,
    arg: Vec<f64>,
    fi: Vec<f64>,
    err: Vec<f64>,
    /// Dense data of the last successful attempt: `[y, y_new, q1, q2]`.
    trial: [Vec<f64>; 4],
}

impl Rosenbrock {
    /// A stepper for `n` states.
    pub fn new(tableau: &'static RosenbrockTableau, n: usize) -> Self {
        let s = tableau.stages();
        let z = || vec![0.0; n];
        Rosenbrock {
            tableau,
            deriv: Derivatives::new(n),
            w: Factored::default(),
            h_factored: f64::NAN,
            at_point: false,
            rho: Some(0.0),
            f0: z(),
            u: vec![z(); s],
            arg: z(),
            fi: z(),
            err: z(),
            trial: [z(), z(), z(), z()],
        }
    }

    /// The tableau this stepper runs.
    pub fn tableau(&self) -> &'static RosenbrockTableau {
        self.tableau
    }
}

impl Stepper for Rosenbrock {
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
        let tab = self.tableau;
        let n = y.len();
        if !self.at_point {
            rates(problem, t, y, &mut self.f0, stats)?;
            self.deriv.jacobian(problem, t, y, &self.f0, stats)?;
            self.deriv.time_derivative(problem, t, y, &self.f0, stats)?;
            if let Some(r) = self.rho.as_mut() {
                *r = self.deriv.spectral_radius();
            }
            self.at_point = true;
            self.w.clear();
        }
        if !self.w.is_factored() || self.h_factored != h {
            self.h_factored = f64::NAN;
            self.w.factor(n, shifted(&self.deriv.jac, n, 1.0 / (h * tab.gamma), 1.0), stats)?;
            self.h_factored = h;
        }
        for i in 0..tab.stages() {
            if i == 0 {
                self.fi.copy_from_slice(&self.f0);
            } else {
                self.arg.copy_from_slice(y);
                for (j, &a) in tab.a[i].iter().enumerate() {
                    if a != 0.0 {
                        for (x, uj) in self.arg.iter_mut().zip(&self.u[j]) {
                            *x += a * uj;
                        }
                    }
                }
                problem.rhs(t + tab.c[i] * h, &self.arg, &mut self.fi);
                stats.rhs_evals += 1;
            }
            let (done, rest) = self.u.split_at_mut(i);
            let ui = &mut rest[0];
            for k in 0..n {
                let mut v = self.fi[k] + tab.d[i] * h * self.deriv.dfdt[k];
                for (j, &cij) in tab.c_coupling[i].iter().enumerate() {
                    v += cij / h * done[j][k];
                }
                ui[k] = v;
            }
            self.w.solve(ui)?;
        }
        for k in 0..n {
            let mut yn = y[k];
            let mut e = 0.0;
            let mut q = [0.0; 2];
            for j in 0..tab.stages() {
                let uj = self.u[j][k];
                yn += tab.b[j] * uj;
                e += tab.e[j] * uj;
                q[0] += tab.dense[0][j] * uj;
                q[1] += tab.dense[1][j] * uj;
            }
            y_new[k] = yn;
            self.err[k] = e;
            self.trial[0][k] = y[k];
            self.trial[1][k] = yn;
            self.trial[2][k] = q[0];
            self.trial[3][k] = q[1];
        }
        if !y_new.iter().all(|v| v.is_finite()) {
            return Err(StepFault::NonFinite);
        }
        // A non-finite norm (a zero weight) rejects the step.
        let error = Some(weighted_rms(&self.err, y, y_new, tol)).filter(|e| e.is_finite()).unwrap_or(f64::INFINITY);
        Ok(Attempt { error: Some(error), stiffness: self.rho.map(|r| h.abs() * r) })
    }

    fn set_stiffness_estimate(&mut self, on: bool) {
        self.rho = on.then_some(0.0);
    }

    fn accept(&mut self) {
        self.at_point = false;
    }

    fn restart(&mut self) {
        self.at_point = false;
        self.w.clear();
    }

    fn dense(&self, theta: f64, out: &mut [f64]) {
        let [y0, y1, q1, q2] = &self.trial;
        for k in 0..out.len() {
            out[k] = (1.0 - theta) * y0[k] + theta * (y1[k] + (1.0 - theta) * (q1[k] + theta * q2[k]));
        }
    }

    fn dense_slope(&self, theta: f64, h: f64, out: &mut [f64]) {
        let [y0, y1, q1, q2] = &self.trial;
        let (a, b) = (1.0 - 2.0 * theta, theta * (2.0 - 3.0 * theta));
        for k in 0..out.len() {
            out[k] = (y1[k] - y0[k] + a * q1[k] + b * q2[k]) / h;
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::solve::testing::{exact_solution, fit_order, fixed_step_error, nonlinear_exact, DenseCheck};

    #[test]
    fn tableau_rows_are_consistent() {
        let t = &RODAS4;
        let s = t.stages();
        assert!(t.a.len() == s && t.c_coupling.len() == s && t.d.len() == s && t.b.len() == s && t.e.len() == s);
        for i in 0..s {
            assert_eq!(t.a[i].len(), i);
            assert_eq!(t.c_coupling[i].len(), i);
        }
        // Stiffly accurate: the last stage argument plus u_s is the solution.
        let last = t.a[s - 1];
        for j in 0..s - 1 {
            assert_eq!(last[j], t.b[j]);
        }
    }

    #[test]
    fn rodas4_converges_with_order_4() {
        // Analytic solution of the problem in `nonlinear_exact`; common practice: global error ~ h^p.
        let errs: Vec<(f64, f64)> = [20, 40, 80, 160]
            .iter()
            .map(|&m| {
                let mut st = Rosenbrock::new(&RODAS4, 2);
                (1.0 / m as f64, fixed_step_error(&mut st, m, DenseCheck::None))
            })
            .collect();
        let p = fit_order(&errs);
        assert!((p - 4.0).abs() < 0.2, "observed order {p}, errors {errs:?}");
    }

    #[test]
    fn rodas4_dense_output_has_order_3() {
        // The dense output is of order 3 (Hairer & Wanner II, Sec. VI.4, from memory);
        // checked against the analytic solution at the middle of every step.
        let errs: Vec<(f64, f64)> = [20, 40, 80, 160]
            .iter()
            .map(|&m| {
                let mut st = Rosenbrock::new(&RODAS4, 2);
                (1.0 / m as f64, fixed_step_error(&mut st, m, DenseCheck::Local(0.4)))
            })
            .collect();
        let p = fit_order(&errs);
        // Local dense error is O(h^4) for an order-3 continuous extension.
        assert!((p - 4.0).abs() < 0.25, "observed local order {p}, errors {errs:?}");
    }

    #[test]
    fn rodas4_error_estimate_has_embedded_order() {
        // The local error estimate of an order-3 embedded solution falls like h^4.
        let mut ests = Vec::new();
        for &h in &[0.1, 0.05, 0.025] {
            let mut p = nonlinear_exact();
            let mut st = Rosenbrock::new(&RODAS4, 2);
            let y0 = exact_solution(0.0);
            let mut y1 = [0.0; 2];
            let tol = Tolerance { relative: 0.0, absolute: 1.0 };
            let a = st.attempt(&mut p, 0.0, &y0, h, &tol, &mut y1, &mut Stats::default()).unwrap();
            ests.push((h, a.error.unwrap()));
        }
        let p = fit_order(&ests);
        assert!((p - 4.0).abs() < 0.3, "estimate order {p}: {ests:?}");
    }

    #[test]
    fn retry_from_same_point_reuses_jacobian() {
        let mut p = nonlinear_exact();
        let mut st = Rosenbrock::new(&RODAS4, 2);
        let y0 = exact_solution(0.0);
        let mut y1 = [0.0; 2];
        let mut stats = Stats::default();
        let tol = Tolerance::default();
        st.attempt(&mut p, 0.0, &y0, 0.1, &tol, &mut y1, &mut stats).unwrap();
        st.attempt(&mut p, 0.0, &y0, 0.05, &tol, &mut y1, &mut stats).unwrap();
        assert_eq!((stats.jacobians, stats.factorizations), (1, 2));
        // f(t, y) once, then 5 stage evaluations per attempt.
        assert_eq!(stats.rhs_evals, 1 + 5 + 5);
    }
}
