//! Dense linear algebra for the implicit methods: Jacobians (exact, or by
//! finite differences when the model has none), iteration matrices and their
//! LU factorization (nalgebra's partial-pivoting LU). The weighted error norm
//! is the explicit stepper's [`super::explicit::weighted_rms`].
//!
//! Storage follows [`crate::problem`]: a Jacobian is row-major,
//! `jac[i * n + j] = ∂f_i/∂y_j`.
// Index loops here mirror the formulas they implement.
#![allow(clippy::needless_range_loop)]

use nalgebra::{ComplexField, DMatrix, DVectorViewMut, Dyn, LU};

use super::stepper::{Stats, StepFault};
use crate::problem::Problem;

/// `∂f/∂y` and `∂f/∂t` at one point, exact when the model provides them and
/// by forward differences otherwise.
#[derive(Clone, Debug, Default)]
pub struct Derivatives {
    /// Row-major `n × n` Jacobian `∂f/∂y`.
    pub jac: Vec<f64>,
    /// `∂f/∂t` (`n` values).
    pub dfdt: Vec<f64>,
    shifted: Vec<f64>,
    f_shifted: Vec<f64>,
}

impl Derivatives {
    /// Workspace for a system of `n` states.
    pub fn new(n: usize) -> Self {
        Derivatives { jac: vec![0.0; n * n], dfdt: vec![0.0; n], shifted: vec![0.0; n], f_shifted: vec![0.0; n] }
    }

    /// Evaluate the Jacobian at `(t, y)`, where `f0 = f(t, y)`.
    ///
    /// The forward-difference fallback perturbs `y_j` by
    /// `sqrt(ε·max(1e-5, |y_j|))` (the increment of Hairer & Wanner's codes,
    /// common practice) and costs `n` right-hand-side evaluations. Counts one
    /// Jacobian either way.
    pub fn jacobian(&mut self, problem: &mut dyn Problem, t: f64, y: &[f64], f0: &[f64], stats: &mut Stats) -> Result<(), StepFault> {
        stats.jacobians += 1;
        if !problem.jacobian(t, y, &mut self.jac) {
            self.differences(problem, t, y, f0, stats);
        }
        self.finite_jacobian()
    }

    /// [`Derivatives::jacobian`] where `f(t, y)` is not at hand: it is
    /// evaluated (and counted) only when finite differences need it.
    pub fn jacobian_at(&mut self, problem: &mut dyn Problem, t: f64, y: &[f64], stats: &mut Stats) -> Result<(), StepFault> {
        stats.jacobians += 1;
        if !problem.jacobian(t, y, &mut self.jac) {
            let mut f0 = vec![0.0; y.len()];
            problem.rhs(t, y, &mut f0);
            stats.rhs_evals += 1;
            self.differences(problem, t, y, &f0, stats);
        }
        self.finite_jacobian()
    }

    /// The forward-difference Jacobian around `f0 = f(t, y)`.
    fn differences(&mut self, problem: &mut dyn Problem, t: f64, y: &[f64], f0: &[f64], stats: &mut Stats) {
        let n = y.len();
        self.shifted.copy_from_slice(y);
        for j in 0..n {
            let delta = (f64::EPSILON * y[j].abs().max(1e-5)).sqrt();
            self.shifted[j] = y[j] + delta;
            problem.rhs(t, &self.shifted, &mut self.f_shifted);
            stats.rhs_evals += 1;
            self.shifted[j] = y[j];
            for i in 0..n {
                self.jac[i * n + j] = (self.f_shifted[i] - f0[i]) / delta;
            }
        }
    }

    fn finite_jacobian(&self) -> Result<(), StepFault> {
        if self.jac.iter().all(|v| v.is_finite()) {
            Ok(())
        } else {
            Err(StepFault::NonFinite)
        }
    }

    /// Evaluate `∂f/∂t` at `(t, y)`, where `f0 = f(t, y)`; by a forward
    /// difference in `t` (one right-hand-side evaluation) when the model has
    /// no exact one.
    pub fn time_derivative(&mut self, problem: &mut dyn Problem, t: f64, y: &[f64], f0: &[f64], stats: &mut Stats) -> Result<(), StepFault> {
        if !problem.time_derivative(t, y, &mut self.dfdt) {
            let delta = (f64::EPSILON * t.abs().max(1e-5)).sqrt();
            problem.rhs(t + delta, y, &mut self.f_shifted);
            stats.rhs_evals += 1;
            for i in 0..y.len() {
                self.dfdt[i] = (self.f_shifted[i] - f0[i]) / delta;
            }
        }
        if self.dfdt.iter().all(|v| v.is_finite()) {
            Ok(())
        } else {
            Err(StepFault::NonFinite)
        }
    }

    /// An estimate of the spectral radius of the Jacobian: eight steps of
    /// power iteration from a fixed start, in reused scratch space. A
    /// magnitude only; complex pairs make it oscillate within a small factor,
    /// which is enough for stiffness detection.
    pub fn spectral_radius(&mut self) -> f64 {
        let n = self.dfdt.len();
        let (v, w) = (&mut self.shifted, &mut self.f_shifted);
        for (i, vi) in v.iter_mut().enumerate() {
            *vi = 1.0 + 0.37 * i as f64;
        }
        let mut estimate = 0.0;
        for _ in 0..8 {
            let norm_v = v.iter().map(|x| x * x).sum::<f64>().sqrt();
            if norm_v == 0.0 || !norm_v.is_finite() {
                return estimate;
            }
            for (i, wi) in w.iter_mut().enumerate() {
                *wi = self.jac[i * n..(i + 1) * n].iter().zip(v.iter()).map(|(a, b)| a * b).sum::<f64>() / norm_v;
            }
            estimate = w.iter().map(|x| x * x).sum::<f64>().sqrt();
            std::mem::swap(v, w);
        }
        estimate
    }
}

/// Evaluate the rates `out = f(t, y)` (counted); a non-finite value is a
/// [`StepFault::NonFinite`].
pub fn rates(problem: &mut dyn Problem, t: f64, y: &[f64], out: &mut [f64], stats: &mut Stats) -> Result<(), StepFault> {
    problem.rhs(t, y, out);
    stats.rhs_evals += 1;
    if out.iter().all(|v| v.is_finite()) {
        Ok(())
    } else {
        Err(StepFault::NonFinite)
    }
}

/// An LU-factored square matrix (nalgebra's partial-pivoting LU), real
/// (`T = f64`) or complex (`T = Complex<f64>`, for the complex block of the
/// transformed Radau system), kept between steps for reuse.
///
/// A hand-written row-major elimination was measured against it at n = 2 to
/// 32 (one factorization plus one solve, native): it was no faster (within
/// ±20 %, slower at n = 9 and 16), so nalgebra's stays.
#[derive(Clone, Debug)]
pub struct Factored<T: ComplexField<RealField = f64> = f64> {
    lu: Option<LU<T, Dyn, Dyn>>,
}

impl<T: ComplexField<RealField = f64>> Default for Factored<T> {
    fn default() -> Self {
        Factored { lu: None }
    }
}

impl<T: ComplexField<RealField = f64>> Factored<T> {
    /// Factor the `n × n` matrix with entries `m(i, j)` (counted in
    /// `stats.factorizations`). A zero, tiny (below `n·ε` times the largest)
    /// or non-finite pivot gives [`StepFault::Singular`] and leaves nothing
    /// factored.
    pub fn factor(&mut self, n: usize, m: impl Fn(usize, usize) -> T, stats: &mut Stats) -> Result<(), StepFault> {
        stats.factorizations += 1;
        self.lu = None;
        let lu = LU::new(DMatrix::from_fn(n, n, m));
        let packed = lu.lu_internal();
        let scale = (0..n).map(|i| packed[(i, i)].clone().modulus()).fold(0.0, f64::max);
        let pivots_ok = scale.is_finite() && scale > 0.0 && (0..n).all(|i| packed[(i, i)].clone().modulus() > scale * f64::EPSILON * n as f64);
        if !pivots_ok {
            return Err(StepFault::Singular);
        }
        self.lu = Some(lu);
        Ok(())
    }

    /// Whether a factorization is held.
    pub fn is_factored(&self) -> bool {
        self.lu.is_some()
    }

    /// Forget the factorization.
    pub fn clear(&mut self) {
        self.lu = None;
    }

    /// Solve `M x = b` in place (`b` becomes `x`).
    pub fn solve(&self, b: &mut [T]) -> Result<(), StepFault> {
        let lu = self.lu.as_ref().ok_or(StepFault::Singular)?;
        let n = b.len();
        let mut view = DVectorViewMut::from_slice(b, n);
        if !lu.solve_mut(&mut view) {
            return Err(StepFault::Singular);
        }
        if b.iter().all(|v| v.is_finite()) {
            Ok(())
        } else {
            Err(StepFault::NonFinite)
        }
    }
}

/// The entries of the iteration matrix `diag·I - scale·J` for a row-major
/// `n × n` Jacobian.
pub fn shifted(jac: &[f64], n: usize, diag: f64, scale: f64) -> impl Fn(usize, usize) -> f64 + '_ {
    move |i, j| if i == j { diag } else { 0.0 } - scale * jac[i * n + j]
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::problems::FnProblem;

    #[test]
    fn solve_matches_known_solution() {
        // Analytic: [[4, 1], [2, 3]] x = [1, 2] has x = [1/10, 3/5].
        let mut f = Factored::default();
        let mut stats = Stats::default();
        let m = [4.0, 1.0, 2.0, 3.0];
        f.factor(2, |i, j| m[i * 2 + j], &mut stats).unwrap();
        let mut b = [1.0, 2.0];
        f.solve(&mut b).unwrap();
        assert!((b[0] - 0.1).abs() < 1e-15 && (b[1] - 0.6).abs() < 1e-15);
        assert_eq!(stats.factorizations, 1);
    }

    #[test]
    fn singular_matrix_is_a_fault() {
        let mut f = Factored::default();
        let mut stats = Stats::default();
        let m = [1.0, 2.0, 2.0, 4.0];
        let r = f.factor(2, |i, j| m[i * 2 + j], &mut stats);
        assert_eq!(r, Err(StepFault::Singular));
        assert!(!f.is_factored());
        assert_eq!(f.solve(&mut [1.0, 1.0]), Err(StepFault::Singular));
    }

    #[test]
    fn finite_difference_jacobian_matches_analytic() {
        // f = (y0·y1, sin y0 + t y1): J = [[y1, y0], [cos y0, t]] (analytic), ∂f/∂t = (0, y1).
        let mut p = FnProblem::new(&["a", "b"], |t, y: &[f64], dy: &mut [f64]| {
            dy[0] = y[0] * y[1];
            dy[1] = y[0].sin() + t * y[1];
        });
        let (t, y) = (0.5, [0.3, -1.2]);
        let mut f0 = [0.0; 2];
        p.rhs(t, &y, &mut f0);
        let mut d = Derivatives::new(2);
        let mut stats = Stats::default();
        d.jacobian(&mut p, t, &y, &f0, &mut stats).unwrap();
        d.time_derivative(&mut p, t, &y, &f0, &mut stats).unwrap();
        let exact = [y[1], y[0], y[0].cos(), t];
        for (a, b) in d.jac.iter().zip(exact) {
            assert!((a - b).abs() < 1e-6, "{a} vs {b}");
        }
        assert!((d.dfdt[1] - y[1]).abs() < 1e-6 && d.dfdt[0].abs() < 1e-6);
        assert_eq!((stats.rhs_evals, stats.jacobians), (3, 1));
    }

    #[test]
    fn spectral_radius_of_diagonal() {
        // Analytic: eigenvalues of diag(-1000, -1) are -1000 and -1.
        let mut d = Derivatives::new(2);
        d.jac = vec![-1000.0, 0.0, 0.0, -1.0];
        assert!((d.spectral_radius() - 1000.0).abs() < 1.0);
    }
}
