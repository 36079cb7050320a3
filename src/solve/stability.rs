//! Linear stability of one-step methods: the stability function `R(z)`, the
//! largest stable step for a given eigenvalue. The driver uses them to warn
//! about unstable fixed steps (with the dominant eigenvalue of the Jacobian
//! from [`super::linalg::dominant_eigenvalue`]) and to set the threshold of
//! the stiffness test; the studies (`crate::study::stability`) draw the
//! regions from them.
//!
//! Applied to the test equation `y' = λy`, every Runge–Kutta or Rosenbrock
//! method gives `y_{n+1} = R(hλ) y_n`. With stage matrix `A` and weights `b`,
//! `R(z) = 1 + z bᵀ (I − zA)⁻¹ 𝟙` (Hairer & Wanner, *Solving ODEs II*, 2nd ed.,
//! Sec. IV.3, eq. (3.3)); for an explicit method `A` is strictly lower
//! triangular and `R` is the polynomial `1 + Σ_k (bᵀA^(k−1)𝟙) z^k`. A mode of
//! the solution with eigenvalue λ stays bounded under steps of size `h` only
//! when `|R(hλ)| ≤ 1`.

use nalgebra::{Complex, DMatrix, DVector};


/// A complex number.
pub type C64 = Complex<f64>;

/// Slack on `|R(z)| ≤ 1` that absorbs rounding in the evaluation of `R`.
const NEUTRAL: f64 = 1e-12;

/// The stability function of a method, built from its coefficients.
#[derive(Clone, Debug, PartialEq)]
pub enum StabilityFunction {
    /// `R(z) = Σ_k c[k] z^k` with `c[0] = 1`: any explicit Runge–Kutta method.
    Polynomial(Vec<f64>),
    /// `R(z) = 1 + z bᵀ (I − zA)⁻¹ 𝟙` with a full `s × s` stage matrix `a`
    /// (row-major): implicit Runge–Kutta methods (Radau IIA, the θ-methods).
    Stages {
        /// Stage matrix, row-major, `s × s`.
        a: Vec<f64>,
        /// Weights, `s` of them.
        b: Vec<f64>,
    },
    /// A Rosenbrock method in the implementation form of Hairer & Wanner,
    /// *Solving ODEs II*, Sec. VI.4: on `y' = λy` with `z = hλ` the stages solve
    /// `(1/γ − z) u_i = z (y + Σ_{j<i} a_ij u_j) + Σ_{j<i} C_ij u_j` and
    /// `y_new = y + Σ b_i u_i`.
    Rosenbrock {
        /// The diagonal `γ`.
        gamma: f64,
        /// Stage-argument coefficients, row `i` holds `a_i0 … a_i(i−1)`.
        a: Vec<Vec<f64>>,
        /// Coupling coefficients `C_ij`, same shape as `a`.
        coupling: Vec<Vec<f64>>,
        /// Solution weights on the `u_i`.
        b: Vec<f64>,
    },
}

/// Coefficients `γ_k = b·A^(k-1)·1` of an explicit Runge–Kutta method's
/// stability polynomial `R(z) = 1 + Σ_k γ_k z^k`, for `k = 1..=stages`, with
/// trailing zeros dropped. Rows of `a` may be short (missing entries are 0).
pub fn increments(a: &[&[f64]], b: &[f64]) -> Vec<f64> {
    let s = b.len();
    let mut v = vec![1.0; s];
    let mut g = Vec::with_capacity(s);
    for _ in 0..s {
        g.push(b.iter().zip(&v).map(|(b, x)| b * x).sum());
        v = (0..s).map(|i| a.get(i).map_or(0.0, |row| row.iter().zip(&v).map(|(a, x)| a * x).sum())).collect();
    }
    while g.last() == Some(&0.0) {
        g.pop();
    }
    g
}

impl StabilityFunction {
    /// The stability polynomial of an explicit Runge–Kutta method with rows
    /// `a[i] = a_i0 … a_i(i−1)` and weights `b`: coefficients `bᵀA^(k−1)𝟙`.
    pub fn explicit(a: &[&[f64]], b: &[f64]) -> Self {
        Self::from_increments(&increments(a, b))
    }

    /// The polynomial `R(z) = 1 + Σ_k g[k-1] z^k` from the coefficients `g`
    /// of [`super::tableau::Tableau::stability_polynomial`].
    pub fn from_increments(g: &[f64]) -> Self {
        StabilityFunction::Polynomial(std::iter::once(1.0).chain(g.iter().copied()).collect())
    }

    /// The θ-method `y_new = y + h((1−θ) f(t, y) + θ f(t + h, y_new))`:
    /// backward Euler for θ = 1, the trapezoidal rule for θ = ½.
    /// `R(z) = (1 + (1−θ)z) / (1 − θz)`.
    pub fn theta(theta: f64) -> Self {
        StabilityFunction::Stages { a: vec![0.0, 0.0, 1.0 - theta, theta], b: vec![1.0 - theta, theta] }
    }

    /// Whether the method is explicit (its region is bounded).
    pub fn is_explicit(&self) -> bool {
        matches!(self, StabilityFunction::Polynomial(_))
    }

    /// `R(z)`.
    pub fn eval(&self, z: C64) -> C64 {
        let one = C64::new(1.0, 0.0);
        match self {
            StabilityFunction::Polynomial(c) => c.iter().rev().fold(C64::new(0.0, 0.0), |acc, &ck| acc * z + ck),
            StabilityFunction::Stages { a, b } => {
                let s = b.len();
                let m = DMatrix::from_fn(s, s, |i, j| if i == j { one } else { C64::new(0.0, 0.0) } - z * a[i * s + j]);
                match m.lu().solve(&DVector::from_element(s, one)) {
                    Some(x) => one + z * b.iter().zip(x.iter()).map(|(&bi, &xi)| xi * bi).sum::<C64>(),
                    None => C64::new(f64::INFINITY, 0.0),
                }
            }
            StabilityFunction::Rosenbrock { gamma, a, coupling, b } => {
                let diag = one / *gamma - z;
                let mut u: Vec<C64> = Vec::with_capacity(b.len());
                for i in 0..b.len() {
                    let mut rhs = one;
                    let mut cpl = C64::new(0.0, 0.0);
                    for j in 0..i {
                        rhs += u[j] * a[i].get(j).copied().unwrap_or(0.0);
                        cpl += u[j] * coupling[i].get(j).copied().unwrap_or(0.0);
                    }
                    u.push((z * rhs + cpl) / diag);
                }
                one + u.iter().zip(b).map(|(&ui, &bi)| ui * bi).sum::<C64>()
            }
        }
    }

    /// `|R(z)|`, the growth factor per step of a mode with `hλ = z`.
    pub fn growth(&self, z: C64) -> f64 {
        self.eval(z).norm()
    }

    /// Whether `z` lies in the stability region (`|R(z)| ≤ 1`, with a hair of slack).
    pub fn is_stable(&self, z: C64) -> bool {
        self.growth(z) <= 1.0 + NEUTRAL
    }

    /// The radius beyond which an explicit method's region cannot reach: the
    /// leading term dominates past `2 · max_k |c_k/c_n|^(1/(n−k))` (Cauchy's
    /// bound on the roots of `R(z) = ±1`, with margin).
    fn reach(&self) -> f64 {
        match self {
            StabilityFunction::Polynomial(c) if c.len() > 1 => {
                let n = c.len() - 1;
                let lead = c[n].abs();
                let bound = (0..n).map(|k| ((c[k].abs() + if k == 0 { 1.0 } else { 0.0 }) / lead).powf(1.0 / (n - k) as f64)).fold(0.0, f64::max);
                2.0 * bound.max(1.0)
            }
            _ => 1e6,
        }
    }

    /// The largest `r ≥ 0` such that `s·e^{iφ}` is stable for every `s` in
    /// `(0, r]`, where `φ` is the direction of `dir`. `None` when the whole ray
    /// is stable (an A-stable method in the left half plane). `Some(0.0)` when
    /// the ray leaves the region within `|z| < 0.01`, so that practically no
    /// step is stable (for example Heun's method on the imaginary axis, where
    /// `|R(iy)| = 1 + y⁴/8 + …`).
    pub fn stable_reach(&self, dir: C64) -> Option<f64> {
        let norm = dir.norm();
        if !(norm > 0.0) || !norm.is_finite() {
            return None;
        }
        let d = dir / norm;
        let reach = self.reach();
        // Scan geometrically near the origin and linearly beyond, then bisect the first exit.
        let mut prev = 0.0;
        let mut s = 1e-6 * reach.min(1.0);
        while s <= reach {
            if !self.is_stable(d * s) {
                let (mut lo, mut hi) = (prev, s);
                for _ in 0..60 {
                    let mid = 0.5 * (lo + hi);
                    if self.is_stable(d * mid) {
                        lo = mid;
                    } else {
                        hi = mid;
                    }
                }
                return Some(if lo < 1e-2 { 0.0 } else { lo });
            }
            prev = s;
            s = if s < 1e-2 { s * 2.0 } else { s + (reach / 4000.0).min(s * 0.05).max(1e-3) };
        }
        None
    }

    /// The largest stable step `h` for the eigenvalue `lambda`: `h·λ` and every
    /// smaller multiple stay in the region. `None`: any `h` is stable. For
    /// `λ = 0` any `h` is stable.
    pub fn largest_stable_step(&self, lambda: C64) -> Option<f64> {
        let r = self.stable_reach(lambda)?;
        Some(r / lambda.norm())
    }
}

/// `|R(z)|` at the complex `z = (re, im)` for `R(z) = 1 + Σ_k g[k-1] z^k`.
pub fn amplification(g: &[f64], re: f64, im: f64) -> f64 {
    StabilityFunction::from_increments(g).growth(C64::new(re, im))
}

/// The distance from the origin to the edge of the stability region of
/// `R(z) = 1 + Σ_k g[k-1] z^k` along the ray `z = r·e^(iφ)` (the first exit;
/// see [`StabilityFunction::stable_reach`]). 0 when practically no step is
/// stable along it (e.g. Euler on the imaginary axis).
pub fn boundary_radius(g: &[f64], phi: f64) -> f64 {
    StabilityFunction::from_increments(g).stable_reach(C64::from_polar(1.0, phi)).unwrap_or(f64::INFINITY)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn euler() -> StabilityFunction {
        StabilityFunction::explicit(&[&[]], &[1.0])
    }
    fn rk4() -> StabilityFunction {
        StabilityFunction::explicit(&[&[], &[0.5], &[0.0, 0.5], &[0.0, 0.0, 1.0]], &[1.0 / 6.0, 1.0 / 3.0, 1.0 / 3.0, 1.0 / 6.0])
    }

    #[test]
    fn rk4_polynomial_is_the_taylor_series() {
        // Any 4-stage order-4 method has R(z) = 1 + z + z²/2 + z³/6 + z⁴/24 (Hairer & Wanner, Solving ODEs II, Sec. IV.2, eq. (2.12)).
        let StabilityFunction::Polynomial(c) = rk4() else { panic!() };
        let want = [1.0, 1.0, 0.5, 1.0 / 6.0, 1.0 / 24.0];
        assert_eq!(c.len(), 5);
        for (a, b) in c.iter().zip(want) {
            assert!((a - b).abs() < 1e-15);
        }
    }

    #[test]
    fn real_and_imaginary_stability_limits() {
        // Euler: disc |1 + z| ≤ 1, real limit 2 (analytic).
        let e = euler().stable_reach(C64::new(-1.0, 0.0)).unwrap();
        assert!((e - 2.0).abs() < 1e-9, "{e}");
        // Euler and Heun have no stable segment of the imaginary axis (|R(iy)|² = 1 + y² and 1 + y⁴/4, analytic).
        assert_eq!(euler().stable_reach(C64::new(0.0, 1.0)), Some(0.0));
        let heun = StabilityFunction::explicit(&[&[], &[1.0]], &[0.5, 0.5]);
        assert_eq!(heun.stable_reach(C64::new(0.0, 1.0)), Some(0.0));
        // RK4: real limit 2.785293563405282 (the real root of 1 + z + z²/2 + z³/6 + z⁴/24 = 1 other than 0;
        // mpmath.findroot at 30 digits gives −2.78529356340528162353), imaginary limit 2√2 (analytic: |R(iy)|² = 1 − y⁶/72 + y⁸/576).
        let r = rk4().stable_reach(C64::new(-1.0, 0.0)).unwrap();
        assert!((r - 2.785293563405282).abs() < 1e-8, "{r}");
        let i = rk4().stable_reach(C64::new(0.0, 1.0)).unwrap();
        assert!((i - 2.0 * 2f64.sqrt()).abs() < 1e-6, "{i}");
        // RK4 with λ = −1000: largest stable h = 2.785e-3 (so h = 0.002 is stable, 0.01 is not).
        let h = rk4().largest_stable_step(C64::new(-1000.0, 0.0)).unwrap();
        assert!((h - 2.785293563405282e-3).abs() < 1e-11);
    }

    #[test]
    fn implicit_methods_are_a_stable() {
        // Backward Euler R = 1/(1 − z) and trapezoid R = (1 + z/2)/(1 − z/2) (analytic).
        let be = StabilityFunction::theta(1.0);
        let z = C64::new(-3.0, 2.0);
        assert!((be.eval(z) - C64::new(1.0, 0.0) / (C64::new(1.0, 0.0) - z)).norm() < 1e-14);
        let tr = StabilityFunction::theta(0.5);
        assert!((tr.eval(z) - (z * 0.5 + 1.0) / (-z * 0.5 + 1.0)).norm() < 1e-14);
        assert_eq!(be.largest_stable_step(C64::new(-1e6, 3.0)), None);
        assert_eq!(tr.largest_stable_step(C64::new(-1.0, 0.0)), None);
        // Backward Euler is stable for positive real z > 2 too, but not on (0, 2): the ray exits at once.
        assert_eq!(be.stable_reach(C64::new(1.0, 0.0)), Some(0.0));
    }
}
