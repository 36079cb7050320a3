//! Dense linear algebra for the implicit methods: Jacobians (exact, or by
//! finite differences when the model has none), iteration matrices and their
//! LU factorization (partial pivoting, in reused storage), and power iteration
//! for the dominant eigenvalue. The weighted error norm is
//! [`super::stepper::weighted_rms`], beside the tolerance weights.
//!
//! Storage follows [`crate::problem`]: a Jacobian is row-major,
//! `jac[i * n + j] = ∂f_i/∂y_j`.
// Index loops here mirror the formulas they implement.
#![allow(clippy::needless_range_loop)]

use nalgebra::Complex;

use super::stepper::{inf_norm, Stats, StepFault};
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
    /// power iteration from a fixed start, in reused scratch space, the
    /// estimate being `‖J v‖/‖v‖` at the last step. A magnitude only; complex
    /// pairs make it oscillate within a small factor, which is enough for
    /// stiffness detection. Each step rescales by the largest entry, which
    /// changes no direction and needs no square root.
    pub fn spectral_radius(&mut self) -> f64 {
        let n = self.dfdt.len();
        if n == 0 {
            return 0.0;
        }
        let (v, w) = (&mut self.shifted, &mut self.f_shifted);
        for (i, vi) in v.iter_mut().enumerate() {
            *vi = 1.0 + 0.37 * i as f64;
        }
        let rescaled = power_iteration(&self.jac, v, w, 7, |v, w| {
            let top = inf_norm(w);
            if top == 0.0 || !top.is_finite() {
                return Err(if top == 0.0 { 0.0 } else { f64::INFINITY });
            }
            let inv = 1.0 / top;
            for (vi, wi) in v.iter_mut().zip(w) {
                *vi = wi * inv;
            }
            Ok(())
        });
        if let Err(radius) = rescaled {
            return radius;
        }
        matvec(&self.jac, v, w);
        dot(w, w).sqrt() / dot(v, v).sqrt()
    }
}

/// `w = J v` for the row-major `n × n` matrix `jac`, `n = v.len() ≥ 1`.
fn matvec(jac: &[f64], v: &[f64], w: &mut [f64]) {
    for (wi, row) in w.iter_mut().zip(jac.chunks_exact(v.len())) {
        *wi = row.iter().zip(v).map(|(a, b)| a * b).sum::<f64>();
    }
}

fn dot(a: &[f64], b: &[f64]) -> f64 {
    a.iter().zip(b).map(|(x, y)| x * y).sum()
}

/// Power iteration, the one loop of [`Derivatives::spectral_radius`] and
/// [`dominant_eigenvalue`]: `rounds` times `w = J v`, then `rescale(v, w)`
/// writes the next `v` from `w`, or stops the iteration with `Err`.
fn power_iteration<E>(
    jac: &[f64],
    v: &mut [f64],
    w: &mut [f64],
    rounds: usize,
    mut rescale: impl FnMut(&mut [f64], &[f64]) -> Result<(), E>,
) -> Result<(), E> {
    for _ in 0..rounds {
        matvec(jac, v, w);
        rescale(v, w)?;
    }
    Ok(())
}

/// The eigenvalue of largest modulus of the `n × n` row-major matrix `j`, as
/// `(re, im)`, by power iteration. A dominant complex pair (an oscillation) is
/// found from three successive iterates `u, Ju, J²u`: `λ² = p λ + q` with
/// `p, q` fitted by least squares to `J²u ≈ p·Ju + q·u`. A fixed 80 iterations
/// from a fixed start vector; `None` for a zero or non-finite matrix.
pub fn dominant_eigenvalue(j: &[f64], n: usize) -> Option<(f64, f64)> {
    if n == 0 || j.iter().any(|v| !v.is_finite()) {
        return None;
    }
    let mut u: Vec<f64> = (0..n).map(|i| 1.0 + 0.1 * ((i * 7 + 3) % 11) as f64).collect();
    let mut v = vec![0.0; n];
    let mut w = vec![0.0; n];
    let normalized = power_iteration(j, &mut u, &mut v, 80, |u, v| {
        let nv = dot(v, v).sqrt();
        if nv == 0.0 || !nv.is_finite() {
            return Err(if nv == 0.0 { Some((0.0, 0.0)) } else { None });
        }
        u.iter_mut().zip(v).for_each(|(a, b)| *a = b / nv);
        Ok(())
    });
    if let Err(found) = normalized {
        return found;
    }
    matvec(j, &u, &mut v);
    matvec(j, &v, &mut w);
    // Least squares for w ≈ p v + q u.
    let (vv, vu, uu, wv, wu) = (dot(&v, &v), dot(&v, &u), dot(&u, &u), dot(&w, &v), dot(&w, &u));
    let det = vv * uu - vu * vu;
    if det.abs() <= 1e-10 * vv * uu {
        return Some((vu / uu, 0.0));
    }
    let p = (wv * uu - wu * vu) / det;
    let q = (vv * wu - vu * wv) / det;
    let disc = p * p + 4.0 * q;
    if disc >= 0.0 {
        let s = disc.sqrt();
        let (l1, l2) = (0.5 * (p + s), 0.5 * (p - s));
        Some((if l1.abs() >= l2.abs() { l1 } else { l2 }, 0.0))
    } else {
        Some((0.5 * p, 0.5 * (-disc).sqrt()))
    }
}

/// The Jacobian `∂f/∂y` at `(t, y)`: exact when the problem gives one, else by
/// forward differences (`dim + 1` evaluations of `f`, counted in `stats`); see
/// [`Derivatives::jacobian_at`]. Non-finite entries are returned as they are
/// ([`dominant_eigenvalue`] refuses them).
pub fn jacobian(problem: &mut dyn Problem, t: f64, y: &[f64], stats: &mut Stats) -> Vec<f64> {
    let mut d = Derivatives::new(y.len());
    let _ = d.jacobian_at(problem, t, y, stats);
    d.jac
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

/// An entry of a matrix that [`Factored`] factors: `f64`, or
/// `Complex<f64>` for the complex block of the transformed Radau system.
pub trait Entry: Copy + std::fmt::Debug + std::ops::Sub<Output = Self> + std::ops::Mul<Output = Self> + std::ops::Div<Output = Self> {
    /// Zero.
    const ZERO: Self;
    /// One.
    const ONE: Self;
    /// `|re| + |im|`: the pivot-search size (LAPACK's, common practice).
    fn norm1(self) -> f64;
    /// The modulus `|z|`.
    fn modulus(self) -> f64;
    /// Whether every part is finite.
    fn finite(self) -> bool;
}

impl Entry for f64 {
    const ZERO: f64 = 0.0;
    const ONE: f64 = 1.0;
    fn norm1(self) -> f64 {
        self.abs()
    }
    fn modulus(self) -> f64 {
        self.abs()
    }
    fn finite(self) -> bool {
        self.is_finite()
    }
}

impl Entry for Complex<f64> {
    const ZERO: Self = Complex::new(0.0, 0.0);
    const ONE: Self = Complex::new(1.0, 0.0);
    fn norm1(self) -> f64 {
        self.re.abs() + self.im.abs()
    }
    fn modulus(self) -> f64 {
        // `hypot` only where squaring would overflow or underflow.
        let m = (self.re * self.re + self.im * self.im).sqrt();
        if m.is_finite() && m > 1e-150 {
            m
        } else {
            self.re.hypot(self.im)
        }
    }
    fn finite(self) -> bool {
        self.re.is_finite() && self.im.is_finite()
    }
}

/// An LU-factored square matrix (Gaussian elimination with partial
/// pivoting), real (`T = f64`) or complex (`T = Complex<f64>`, for the
/// complex block of the transformed Radau system), kept between steps for
/// reuse. Factoring writes into storage kept from the last factorization, so
/// neither factoring nor solving allocates once the size is settled.
///
/// It replaced nalgebra's `LU` (checked against it in this module's tests on
/// random and ill-conditioned matrices), which allocates a matrix and a
/// permutation per factorization and divides by the (complex) pivots in
/// every solve; here the pivots' reciprocals are kept. Measured on the stiff
/// benchmark's cases (Van der Pol, Robertson; radau-iia-5, rosenbrock-4, auto), by
/// alternating runs of both builds: 6–22 % less time in wasm under Node and
/// 5–33 % natively (load average 1.7), with the same work counts. Natively
/// the instruction counts are about equal (cachegrind), so the gain is in
/// latency (no division by the pivots in each solve) and in allocation.
#[derive(Clone, Debug)]
pub struct Factored<T: Entry = f64> {
    n: usize,
    /// Row-major: `U` on and above the diagonal, the multipliers of the unit
    /// lower triangle `L` below it (rows in pivot order).
    lu: Vec<T>,
    /// The reciprocals of `U`'s diagonal.
    inv_diag: Vec<T>,
    /// Step `k` of the elimination swapped rows `k` and `swaps[k]`.
    swaps: Vec<usize>,
    factored: bool,
}

impl<T: Entry> Default for Factored<T> {
    fn default() -> Self {
        Factored { n: 0, lu: Vec::new(), inv_diag: Vec::new(), swaps: Vec::new(), factored: false }
    }
}

impl<T: Entry> Factored<T> {
    /// Factor the `n × n` matrix with entries `m(i, j)` (counted in
    /// `stats.factorizations`). A zero, tiny (below `n·ε` times the largest)
    /// or non-finite pivot gives [`StepFault::Singular`] and leaves nothing
    /// factored.
    pub fn factor(&mut self, n: usize, m: impl Fn(usize, usize) -> T, stats: &mut Stats) -> Result<(), StepFault> {
        stats.factorizations += 1;
        self.factored = false;
        if self.n != n {
            self.n = n;
            self.lu = vec![T::ZERO; n * n];
            self.inv_diag = vec![T::ZERO; n];
            self.swaps = vec![0; n];
        }
        for i in 0..n {
            for j in 0..n {
                self.lu[i * n + j] = m(i, j);
            }
        }
        let a = &mut self.lu[..];
        let mut scale: f64 = 0.0;
        for k in 0..n {
            let mut p = k;
            let mut size = a[k * n + k].norm1();
            for i in k + 1..n {
                let s = a[i * n + k].norm1();
                if s > size {
                    (p, size) = (i, s);
                }
            }
            self.swaps[k] = p;
            if p != k {
                for j in 0..n {
                    a.swap(k * n + j, p * n + j);
                }
            }
            let pivot = a[k * n + k];
            let modulus = pivot.modulus();
            if !(modulus > 0.0 && modulus.is_finite()) {
                return Err(StepFault::Singular);
            }
            if modulus > scale {
                scale = modulus;
            }
            let inv = T::ONE / pivot;
            self.inv_diag[k] = inv;
            let (upper, lower) = a.split_at_mut((k + 1) * n);
            let row_k = &upper[k * n + k + 1..];
            for row_i in lower.chunks_exact_mut(n) {
                let l = row_i[k] * inv;
                row_i[k] = l;
                for (x, &u) in row_i[k + 1..].iter_mut().zip(row_k) {
                    *x = *x - l * u;
                }
            }
        }
        let tiny = scale * f64::EPSILON * n as f64;
        if !(0..n).all(|i| a[i * n + i].modulus() > tiny) {
            return Err(StepFault::Singular);
        }
        self.factored = true;
        Ok(())
    }

    /// Whether a factorization is held.
    pub fn is_factored(&self) -> bool {
        self.factored
    }

    /// Forget the factorization.
    pub fn clear(&mut self) {
        self.factored = false;
    }

    /// Solve `M x = b` in place (`b` becomes `x`).
    pub fn solve(&self, b: &mut [T]) -> Result<(), StepFault> {
        let n = self.n;
        if !self.factored || b.len() != n {
            return Err(StepFault::Singular);
        }
        for (k, &p) in self.swaps.iter().enumerate() {
            b.swap(k, p);
        }
        // L y = P b (unit diagonal), then U x = y.
        for i in 1..n {
            let row = &self.lu[i * n..i * n + i];
            let mut s = b[i];
            for (l, x) in row.iter().zip(&b[..i]) {
                s = s - *l * *x;
            }
            b[i] = s;
        }
        for i in (0..n).rev() {
            let row = &self.lu[i * n + i + 1..(i + 1) * n];
            let mut s = b[i];
            for (u, x) in row.iter().zip(&b[i + 1..]) {
                s = s - *u * *x;
            }
            b[i] = s * self.inv_diag[i];
        }
        if b.iter().all(|v| v.finite()) {
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

    /// A fixed pseudo-random sequence in [-1, 1) (a 64-bit LCG, Knuth's
    /// MMIX constants; common practice, no source).
    struct Lcg(u64);
    impl Lcg {
        fn next(&mut self) -> f64 {
            self.0 = self.0.wrapping_mul(6364136223846793005).wrapping_add(1442695040888963407);
            (self.0 >> 11) as f64 / (1u64 << 52) as f64 - 1.0
        }
    }

    /// `M x = b` by ours and by nalgebra's LU (the reference library), with
    /// `|x_ours - x_nalgebra| / |x|` (max norms) returned.
    fn against_nalgebra<T: Entry + nalgebra::ComplexField<RealField = f64>>(n: usize, m: &[T], b: &[T]) -> f64 {
        let mut f = Factored::<T>::default();
        f.factor(n, |i, j| m[i * n + j], &mut Stats::default()).unwrap();
        let mut x = b.to_vec();
        f.solve(&mut x).unwrap();
        let lu = nalgebra::DMatrix::from_fn(n, n, |i, j| m[i * n + j]).lu();
        let want = lu.solve(&nalgebra::DVector::from_column_slice(b)).unwrap();
        let size = want.iter().map(|v| Entry::modulus(*v)).fold(0.0, f64::max);
        x.iter().zip(want.iter()).map(|(a, b)| Entry::modulus(*a - *b)).fold(0.0, f64::max) / size
    }

    #[test]
    fn lu_matches_nalgebra_on_random_matrices() {
        // Well-conditioned in the mean: both solutions agree to near rounding.
        let mut r = Lcg(7);
        for n in 1..=12 {
            for _ in 0..20 {
                let m: Vec<f64> = (0..n * n).map(|_| r.next()).collect();
                let b: Vec<f64> = (0..n).map(|_| r.next()).collect();
                let d = against_nalgebra(n, &m, &b);
                assert!(d < 1e-9, "real n = {n}: {d:e}");
                let mc: Vec<Complex<f64>> = (0..n * n).map(|_| Complex::new(r.next(), r.next())).collect();
                let bc: Vec<Complex<f64>> = (0..n).map(|_| Complex::new(r.next(), r.next())).collect();
                let d = against_nalgebra(n, &mc, &bc);
                assert!(d < 1e-9, "complex n = {n}: {d:e}");
            }
        }
    }

    #[test]
    fn lu_matches_nalgebra_on_ill_conditioned_matrices() {
        // Hilbert matrices (condition ~1e7 at n = 6, ~1e10 at n = 8; common
        // practice, no source): the two solutions agree to about cond·ε.
        for (n, bound) in [(4, 1e-10), (6, 1e-7), (8, 1e-4)] {
            let m: Vec<f64> = (0..n * n).map(|k| 1.0 / ((k / n + k % n) as f64 + 1.0)).collect();
            let b = vec![1.0; n];
            let d = against_nalgebra(n, &m, &b);
            assert!(d < bound, "Hilbert n = {n}: {d:e}");
        }
        // A stiff iteration matrix γ/h·I - J with eigenvalues from -1e-2 to
        // -1e8 and a complex shift, as the Radau blocks see them.
        let mut r = Lcg(11);
        let n = 5;
        let scales = [1e-2, 1.0, 1e3, 1e6, 1e8];
        let jac: Vec<f64> = (0..n * n).map(|k| r.next() * scales[k % n]).collect();
        let m: Vec<Complex<f64>> = (0..n * n).map(|k| Complex::new(if k / n == k % n { 2.0 } else { 0.0 }, if k / n == k % n { 1.5 } else { 0.0 }) - Complex::new(jac[k], 0.0)).collect();
        let b: Vec<Complex<f64>> = (0..n).map(|_| Complex::new(r.next(), r.next())).collect();
        assert!(against_nalgebra(n, &m, &b) < 1e-6);
        let mr: Vec<f64> = (0..n * n).map(|k| if k / n == k % n { 3.6 } else { 0.0 } - jac[k]).collect();
        assert!(against_nalgebra(n, &mr, &[1.0; 5]) < 1e-6);
    }

    #[test]
    fn lu_refactors_and_resizes_in_place() {
        // The same storage serves matrices of several sizes; a singular one
        // in between leaves nothing factored. Analytic: diag(2, 4) x = (1, 1).
        let mut f = Factored::default();
        let mut stats = Stats::default();
        f.factor(3, |i, j| if i == j { 1.0 } else { 0.5 }, &mut stats).unwrap();
        assert_eq!(f.factor(2, |_, _| 1.0, &mut stats), Err(StepFault::Singular));
        assert!(!f.is_factored());
        f.factor(2, |i, j| if i == j { 2.0 * (i + 1) as f64 } else { 0.0 }, &mut stats).unwrap();
        let mut b = [1.0, 1.0];
        f.solve(&mut b).unwrap();
        assert_eq!(b, [0.5, 0.25]);
        assert_eq!(f.solve(&mut [1.0; 3]), Err(StepFault::Singular));
        assert_eq!(stats.factorizations, 3);
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
    fn power_iteration_on_rotation_and_decay() {
        // Analytic: [[-1, 10], [-10, -1]] has eigenvalues -1 ± 10i.
        let (re, im) = dominant_eigenvalue(&[-1.0, 10.0, -10.0, -1.0], 2).unwrap();
        assert!((re + 1.0).abs() < 1e-9 && (im.abs() - 10.0).abs() < 1e-9, "{re} {im}");
        // Analytic: diag(-1000, -1) has dominant eigenvalue -1000.
        let (re, im) = dominant_eigenvalue(&[-1000.0, 0.0, 0.0, -1.0], 2).unwrap();
        assert!((re + 1000.0).abs() < 1e-6 && im == 0.0, "{re} {im}");
    }

    #[test]
    fn spectral_radius_of_diagonal() {
        // Analytic: eigenvalues of diag(-1000, -1) are -1000 and -1.
        let mut d = Derivatives::new(2);
        d.jac = vec![-1000.0, 0.0, 0.0, -1.0];
        assert!((d.spectral_radius() - 1000.0).abs() < 1.0);
    }
}
