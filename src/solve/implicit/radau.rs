//! Radau IIA of order 5: the tableau as exact data and its stepper, with the
//! transformed Newton iteration and step and Jacobian reuse.
// Index loops here mirror the formulas they implement.
#![allow(clippy::needless_range_loop)]

use nalgebra::Complex;

use super::newton::{newton_kappa, Contraction, NewtonState, NEWTON_MAX_ITER};
use crate::problem::Problem;
use crate::solve::linalg::{rates, shifted, Derivatives, Factored};
use crate::solve::stability::StabilityFunction;
use crate::solve::stepper::{weighted_rms, Attempt, Stats, StepFault, Stepper, Tolerance};

/// Radau keeps its factored Newton matrix while `h / h_factored` stays in
/// `[REUSE_LOW, REUSE_HIGH]`: the simplified Newton iteration converges to the
/// same collocation solution with a slightly wrong matrix, only a little
/// slower (a contraction of about `|1 - h/h_factored|` on stiff components).
const REUSE_LOW: f64 = 0.8;
/// See [`REUSE_LOW`].
const REUSE_HIGH: f64 = 1.25;

/// A number `(p + q·√6) / r`, exact data for the Radau IIA coefficients.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Sqrt6Number {
    /// Rational part numerator.
    pub p: i64,
    /// Coefficient of √6 in the numerator.
    pub q: i64,
    /// Denominator.
    pub r: i64,
}

impl Sqrt6Number {
    /// The value as `f64`.
    pub fn value(self) -> f64 {
        (self.p as f64 + self.q as f64 * 6f64.sqrt()) / self.r as f64
    }
}

const fn s6(p: i64, q: i64, r: i64) -> Sqrt6Number {
    Sqrt6Number { p, q, r }
}

/// The 3-stage Radau IIA collocation method, `radau-iia-5`, as data.
#[derive(Debug)]
pub struct RadauTableau {
    /// Stable method id.
    pub id: &'static str,
    /// Order of the solution.
    pub order: u32,
    /// Order of the embedded solution of the error estimate.
    pub embedded_order: u32,
    /// Runge–Kutta matrix `a_ij`.
    pub a: [[Sqrt6Number; 3]; 3],
    /// Nodes `c_i` (the weights `b` equal the last row of `a`: stiffly accurate).
    pub c: [Sqrt6Number; 3],
    /// Error-estimate weights `E_i`: the estimate is
    /// `(I - γ0 h J)^{-1} γ0 (h f(t, y) + Σ E_i z_i)`, `γ0` the real eigenvalue of `a`.
    pub e: [Sqrt6Number; 3],
    /// The transformation `T` with `T⁻¹ A⁻¹ T = Λ` (block diagonal: the real
    /// eigenvalue `γ`, then the rotation block of `α ± iβ`).
    pub t: [[f64; 3]; 3],
    /// `T⁻¹`.
    pub t_inv: [[f64; 3]; 3],
    /// Where the coefficients come from.
    pub reference: &'static str,
}

/// Radau IIA of order 5, `radau-iia-5`: 3 implicit stages, L-stable, stiffly
/// accurate, stage order 3; dense output is the collocation polynomial
/// (order 3). Embedded error estimate of order 3 with the stiff filter
/// `(I - γ0 hJ)^{-1}`. Use it for stiff problems at tight tolerances (rtol
/// 1e-8 to 1e-12), and where the Jacobian is costly: it reuses the Jacobian
/// across steps while Newton converges fast, and the factorization while `h`
/// stays within `[0.8, 1.25]` times the factored one.
///
/// The Newton system `(I - hA⊗J) ΔZ = …` of size `3n` is solved, as Hairer
/// & Wanner do, in the coordinates `W = (T⁻¹⊗I) Z` that block-diagonalise
/// `A⁻¹ = T Λ T⁻¹`, `Λ = [[γ, 0, 0], [0, α, -β], [0, β, α]]`: one real
/// `n × n` system with `γ/h·I - J` and one complex `n × n` system with
/// `(α + iβ)/h·I - J`. Each refactorization counts two LU factorizations
/// (the real and the complex matrix); the real one also serves as the error
/// filter.
///
/// Source: Hairer & Wanner, *Solving ODEs II* (2nd ed., 1996), Sec. IV.5,
/// Table 5.6 (the tableau), Sec. IV.8 (the transformed Newton iteration,
/// error estimate with `E`, step and Jacobian reuse); table and sections from
/// memory. The coefficients are checked by the simplifying assumptions B(5)
/// and C(3) in this module's tests; `T` and `T⁻¹` are the digits of the
/// authors' code `radau5.f` (named from memory), checked by `T⁻¹T = I` and
/// `T⁻¹A⁻¹T = Λ`.
// The digits as published, kept whole.
#[allow(clippy::excessive_precision)]
pub static RADAU5: RadauTableau = RadauTableau {
    id: "radau-iia-5",
    order: 5,
    embedded_order: 3,
    a: [
        [s6(88, -7, 360), s6(296, -169, 1800), s6(-2, 3, 225)],
        [s6(296, 169, 1800), s6(88, 7, 360), s6(-2, -3, 225)],
        [s6(16, -1, 36), s6(16, 1, 36), s6(4, 0, 36)],
    ],
    c: [s6(4, -1, 10), s6(4, 1, 10), s6(1, 0, 1)],
    e: [s6(-13, -7, 3), s6(-13, 7, 3), s6(-1, 0, 3)],
    t: [
        [9.1232394870892942792e-02, -0.14125529502095420843, -3.0029194105147424492e-02],
        [0.24171793270710701896, 0.20412935229379993199, 0.38294211275726193779],
        [0.96604818261509293619, 1.0, 0.0],
    ],
    t_inv: [
        [4.3255798900631553510, 0.33919925181580986954, 0.54177053993587487119],
        [-4.1787185915519047273, -0.32768282076106238708, 0.47662355450055045196],
        [-0.50287263494578687595, 2.5719269498556054292, -0.59603920482822492497],
    ],
    reference: "Hairer & Wanner, Solving ODEs II, Sec. IV.5 Table 5.6 and Sec. IV.8",
};

impl RadauTableau {
    /// The stability function `R(z) = 1 + z bᵀ (I − zA)⁻¹ 𝟙`, with `b` the
    /// last row of `a` (stiffly accurate).
    pub fn stability_function(&self) -> StabilityFunction {
        StabilityFunction::Stages { a: self.a.iter().flatten().map(|x| x.value()).collect(), b: self.a[2].iter().map(|x| x.value()).collect() }
    }

    /// The real eigenvalue `γ0` of `a`: `1/(3 + 3^(2/3) - 3^(1/3))`.
    pub fn gamma0(&self) -> f64 {
        1.0 / (3.0 + 3f64.powf(2.0 / 3.0) - 3f64.cbrt())
    }

    /// The eigenvalues of `a⁻¹`: the real `γ = 1/γ0` and the pair `α ± iβ`,
    /// as `[γ, α, β]`. Closed forms of `radau5.f` (from memory; checked in
    /// the tests against `T⁻¹A⁻¹T`): with `u = 81^(1/3)`, `v = 9^(1/3)`, the
    /// eigenvalues of `a` are `(6 + u - v)/30` and `a' ± ib'` with
    /// `a' = (12 - u + v)/60`, `b' = (u + v)√3/60`.
    pub fn inverse_eigenvalues(&self) -> [f64; 3] {
        let (u, v) = (81f64.cbrt(), 9f64.cbrt());
        let (re, im) = ((12.0 - u + v) / 60.0, (u + v) * 3f64.sqrt() / 60.0);
        let norm = re * re + im * im;
        [30.0 / (6.0 + u - v), re / norm, im / norm]
    }
}

/// The three stage blocks of `n` entries of `v` (`3n` long).
#[inline]
fn blocks(v: &[f64], n: usize) -> [&[f64]; 3] {
    let (a, rest) = v.split_at(n);
    let (b, c) = rest.split_at(n);
    [a, b, &c[..n]]
}

/// [`blocks`], mutable.
#[inline]
fn blocks_mut(v: &mut [f64], n: usize) -> [&mut [f64]; 3] {
    let (a, rest) = v.split_at_mut(n);
    let (b, c) = rest.split_at_mut(n);
    [a, b, &mut c[..n]]
}

/// The stepper of [`RADAU5`].
#[derive(Debug)]
pub struct Radau {
    c: [f64; 3],
    /// `1 / (c_k (c_k - c_a)(c_k - c_b))`, the Lagrange basis' normalisation.
    basis_scale: [f64; 3],
    e: [f64; 3],
    t: [[f64; 3]; 3],
    t_inv: [[f64; 3]; 3],
    /// `[γ, α, β]`, see [`RadauTableau::inverse_eigenvalues`].
    lambda: [f64; 3],
    deriv: Derivatives,
    /// `γ/h·I - J`: the real block of the Newton system and the error filter.
    real: Factored,
    /// `(α + iβ)/h·I - J`: the complex block of the Newton system.
    complex: Factored<Complex<f64>>,
    /// `h` of the held factorizations.
    h_factored: f64,
    /// `f(t, y)` belongs to the current point.
    at_point: bool,
    /// The Jacobian was evaluated at the current point.
    jac_current: bool,
    /// Evaluate a new Jacobian before the next attempt.
    need_jac: bool,
    /// No step since the last restart.
    first: bool,
    /// The previous attempt from this point had an error above 1.
    rejected: bool,
    /// The spectral radius at the last Jacobian; `None` when not estimated.
    rho: Option<f64>,
    f0: Vec<f64>,
    /// The stage increments `Z`, three blocks of `n`.
    z: Vec<f64>,
    /// The transformed increments `W = (T⁻¹⊗I) Z`.
    w: Vec<f64>,
    fz: Vec<f64>,
    /// The real block's right-hand side and solution.
    dw_real: Vec<f64>,
    /// The complex block's right-hand side and solution.
    dw_complex: Vec<Complex<f64>>,
    arg: Vec<f64>,
    err: Vec<f64>,
    last_rate: f64,
    last_iters: usize,
    /// `1 / (atol + rtol·|y_q|)`, the Newton norm's weights at the step's start.
    inv_scale: Vec<f64>,
    /// `(y0, z, h)` of the last successful attempt; `z` holds the three
    /// stage increments one after another.
    trial: (Vec<f64>, Vec<f64>, f64),
    /// `(z, h)` of the last accepted step.
    accepted: (Vec<f64>, f64),
    /// Whether `accepted` may seed the next step's Newton start.
    can_extrapolate: bool,
}

impl Radau {
    /// A stepper for `n` states.
    pub fn new(n: usize) -> Self {
        let t = &RADAU5;
        let z = |k: usize| vec![0.0; k];
        let c = t.c.map(Sqrt6Number::value);
        let basis_scale = [0, 1, 2].map(|k| {
            let (a, b) = (c[(k + 1) % 3], c[(k + 2) % 3]);
            1.0 / (c[k] * (c[k] - a) * (c[k] - b))
        });
        Radau {
            c,
            basis_scale,
            e: t.e.map(Sqrt6Number::value),
            t: t.t,
            t_inv: t.t_inv,
            lambda: t.inverse_eigenvalues(),
            deriv: Derivatives::new(n),
            real: Factored::default(),
            complex: Factored::default(),
            h_factored: f64::NAN,
            at_point: false,
            jac_current: false,
            need_jac: true,
            first: true,
            rejected: false,
            rho: Some(0.0),
            f0: z(n),
            z: z(3 * n),
            w: z(3 * n),
            fz: z(3 * n),
            dw_real: z(n),
            dw_complex: vec![Complex::new(0.0, 0.0); n],
            arg: z(n),
            err: z(n),
            last_rate: 0.0,
            last_iters: 0,
            inv_scale: z(n),
            trial: (z(n), z(3 * n), 0.0),
            accepted: (z(3 * n), 0.0),
            can_extrapolate: false,
        }
    }

    /// `ℓ_k(θ)`: the Lagrange basis on the nodes `0, c1, c2, c3` with `ℓ_k(0) = 0`.
    fn basis(&self, k: usize, theta: f64) -> f64 {
        let [a, b] = self.other_nodes(k);
        theta * (theta - a) * (theta - b) * self.basis_scale[k]
    }

    /// `dℓ_k/dθ`.
    fn basis_slope(&self, k: usize, theta: f64) -> f64 {
        let [a, b] = self.other_nodes(k);
        let d = (theta - a) * (theta - b) + theta * (theta - b) + theta * (theta - a);
        d * self.basis_scale[k]
    }

    fn other_nodes(&self, k: usize) -> [f64; 2] {
        match k {
            0 => [self.c[1], self.c[2]],
            1 => [self.c[0], self.c[2]],
            _ => [self.c[0], self.c[1]],
        }
    }

    fn factor(&mut self, n: usize, h: f64, stats: &mut Stats) -> Result<(), StepFault> {
        self.h_factored = f64::NAN;
        let jac = &self.deriv.jac;
        let [gamma, alpha, beta] = self.lambda.map(|v| v / h);
        self.real.factor(n, shifted(jac, n, gamma, 1.0), stats)?;
        self.complex.factor(n, |i, j| Complex::new(if i == j { alpha } else { 0.0 } - jac[i * n + j], if i == j { beta } else { 0.0 }), stats)?;
        self.h_factored = h;
        Ok(())
    }

    /// The simplified Newton iteration for the stage increments `z`, started
    /// from the current `z`. The iteration matrix is `I - h_f A⊗J` with `h_f`
    /// the factored step (`h_f = h` but for reuse); multiplied by `(hA)⁻¹` and
    /// written in the coordinates `w = (T⁻¹⊗I) z` it reads
    /// `(h_f/h)(Λ/h_f ⊗ I - I⊗J) Δw = (T⁻¹⊗I) F(z) - (Λ/h ⊗ I) w`, one real
    /// and one complex `n × n` block. (Scaling by `h_f/h` keeps the reused
    /// matrix exact on the non-stiff components, where `I - h_f A⊗J ≈ I`.)
    /// The convergence test measures `Δz`, in the weights at the step's start.
    /// Returns whether it converged; non-finite rates at a stage are a fault.
    fn newton(&mut self, problem: &mut dyn Problem, t: f64, y: &[f64], h: f64, tol: &Tolerance, stats: &mut Stats) -> Result<bool, StepFault> {
        let n = y.len();
        let kappa = newton_kappa(tol);
        let mut conv = Contraction::default();
        let (tm, ti) = (self.t, self.t_inv);
        let [gamma, alpha, beta] = self.lambda.map(|v| v / h);
        let reuse = h / self.h_factored;
        for (s, &yq) in self.inv_scale.iter_mut().zip(y) {
            *s = 1.0 / tol.weight(yq, yq);
        }
        {
            let [z0, z1, z2] = blocks(&self.z, n);
            let [w0, w1, w2] = blocks_mut(&mut self.w, n);
            for q in 0..n {
                let zq = [z0[q], z1[q], z2[q]];
                w0[q] = ti[0][0] * zq[0] + ti[0][1] * zq[1] + ti[0][2] * zq[2];
                w1[q] = ti[1][0] * zq[0] + ti[1][1] * zq[1] + ti[1][2] * zq[2];
                w2[q] = ti[2][0] * zq[0] + ti[2][1] * zq[1] + ti[2][2] * zq[2];
            }
        }
        for k in 0..NEWTON_MAX_ITER {
            for (i, (zi, fi)) in self.z.chunks_exact(n).zip(self.fz.chunks_exact_mut(n)).enumerate() {
                for ((a, &yq), &zq) in self.arg.iter_mut().zip(y).zip(zi) {
                    *a = yq + zq;
                }
                rates(problem, t + self.c[i] * h, &self.arg, fi, stats)?;
            }
            {
                let [f0, f1, f2] = blocks(&self.fz, n);
                let [w0, w1, w2] = blocks(&self.w, n);
                let (dr, dc) = (&mut self.dw_real[..n], &mut self.dw_complex[..n]);
                for q in 0..n {
                    let f = [f0[q], f1[q], f2[q]];
                    let tf = |i: usize| ti[i][0] * f[0] + ti[i][1] * f[1] + ti[i][2] * f[2];
                    dr[q] = reuse * (tf(0) - gamma * w0[q]);
                    dc[q] = Complex::new(reuse * (tf(1) - (alpha * w1[q] - beta * w2[q])), reuse * (tf(2) - (beta * w1[q] + alpha * w2[q])));
                }
            }
            if self.real.solve(&mut self.dw_real).is_err() || self.complex.solve(&mut self.dw_complex).is_err() {
                return Ok(false);
            }
            let mut sum = 0.0;
            {
                let [z0, z1, z2] = blocks_mut(&mut self.z, n);
                let [w0, w1, w2] = blocks_mut(&mut self.w, n);
                let (dr, dc, scale) = (&self.dw_real[..n], &self.dw_complex[..n], &self.inv_scale[..n]);
                for q in 0..n {
                    let dw = [dr[q], dc[q].re, dc[q].im];
                    w0[q] += dw[0];
                    w1[q] += dw[1];
                    w2[q] += dw[2];
                    let dz = [0, 1, 2].map(|i| tm[i][0] * dw[0] + tm[i][1] * dw[1] + tm[i][2] * dw[2]);
                    z0[q] += dz[0];
                    z1[q] += dz[1];
                    z2[q] += dz[2];
                    for d in dz {
                        sum += (d * scale[q]).powi(2);
                    }
                }
            }
            let norm = (sum / (3 * n) as f64).sqrt();
            self.last_iters = k + 1;
            match conv.update(norm, k, kappa) {
                NewtonState::Converged => {
                    self.last_rate = conv.rate;
                    return Ok(true);
                }
                NewtonState::Failed => return Ok(false),
                NewtonState::Going => {}
            }
        }
        Ok(false)
    }

    /// The Newton start: the previous collocation polynomial extrapolated, or zero.
    fn initial_guess(&mut self, h: f64, n: usize) {
        if !self.can_extrapolate || self.accepted.1 == 0.0 {
            self.z.iter_mut().for_each(|v| *v = 0.0);
            return;
        }
        let ratio = h / self.accepted.1;
        let l = [0, 1, 2].map(|i| {
            let theta = 1.0 + self.c[i] * ratio;
            [self.basis(0, theta), self.basis(1, theta), self.basis(2, theta)]
        });
        let [p0, p1, p2] = blocks(&self.accepted.0, n);
        for (zi, l) in self.z.chunks_exact_mut(n).zip(l) {
            for (((zq, a), b), c) in zi.iter_mut().zip(p0).zip(p1).zip(p2) {
                *zq = l[0] * a + l[1] * b + l[2] * c - c;
            }
        }
    }

    /// The filtered error estimate `(I - γ0 h_f J)⁻¹ γ0 (h f + Σ E_i z_i)`
    /// into `self.err`, from `f` (= `f(t, y)`, or `f(t, y + err)` for the
    /// refined estimate). The bracket uses the step's own `h` (its terms
    /// cancel exactly for polynomial solutions); the filter is the factored
    /// real block `γ/h_f·I - J = (I - γ0 h_f J)/(γ0 h_f)`, whose `h_f` may lag
    /// a little, so the bracket is divided by `h_f`.
    fn estimate(&mut self, f: &[f64], h: f64, n: usize) -> Result<(), StepFault> {
        let [z0, z1, z2] = blocks(&self.z, n);
        let e = self.e;
        for ((err, &fq), q) in self.err.iter_mut().zip(f).zip(0..n) {
            *err = (h * fq + (e[0] * z0[q] + e[1] * z1[q] + e[2] * z2[q])) / self.h_factored;
        }
        self.real.solve(&mut self.err)
    }
}

impl Stepper for Radau {
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
        if !self.at_point {
            rates(problem, t, y, &mut self.f0, stats)?;
            self.at_point = true;
        }
        let mut converged = false;
        while !converged {
            if self.need_jac {
                self.deriv.jacobian(problem, t, y, &self.f0, stats)?;
                if let Some(r) = self.rho.as_mut() {
                    *r = self.deriv.spectral_radius();
                }
                self.need_jac = false;
                self.jac_current = true;
                self.real.clear();
                self.complex.clear();
            }
            let ratio = h / self.h_factored;
            if !self.real.is_factored() || !self.complex.is_factored() || !(REUSE_LOW..=REUSE_HIGH).contains(&ratio) {
                self.factor(n, h, stats)?;
            }
            self.initial_guess(h, n);
            converged = self.newton(problem, t, y, h, tol, stats)?;
            if !converged {
                if self.jac_current {
                    // Factor again at the driver's smaller h next time.
                    self.real.clear();
                    self.complex.clear();
                    return Err(StepFault::NewtonFailed);
                }
                self.need_jac = true;
            }
        }
        for q in 0..n {
            y_new[q] = y[q] + self.z[2 * n + q];
        }
        if !y_new.iter().all(|v| v.is_finite()) {
            return Err(StepFault::NonFinite);
        }
        let f0 = std::mem::take(&mut self.f0);
        let est = self.estimate(&f0, h, n);
        self.f0 = f0;
        est?;
        let mut error = weighted_rms(&self.err, y, y_new, tol);
        if error > 1.0 && (self.first || self.rejected) {
            // Hairer's refinement on a first or repeated step: one more
            // filter pass through f(t, y + err) damps a stiff overestimate.
            for q in 0..n {
                self.arg[q] = y[q] + self.err[q];
            }
            let mut f = std::mem::take(&mut self.fz);
            problem.rhs(t, &self.arg, &mut f[..n]);
            stats.rhs_evals += 1;
            let refined = if f[..n].iter().all(|v| v.is_finite()) { Some(self.estimate(&f[..n], h, n)) } else { None };
            self.fz = f;
            if let Some(refined) = refined {
                refined?;
                error = weighted_rms(&self.err, y, y_new, tol);
            }
        }
        if !error.is_finite() {
            // A non-finite norm (a zero weight) rejects the step.
            error = f64::INFINITY;
        }
        self.rejected = error > 1.0;
        self.trial.0.copy_from_slice(y);
        self.trial.1.copy_from_slice(&self.z);
        self.trial.2 = h;
        Ok(Attempt { error: Some(error), stiffness: self.rho.map(|r| h.abs() * r) })
    }

    fn set_stiffness_estimate(&mut self, on: bool) {
        self.rho = on.then_some(0.0);
    }

    fn accept(&mut self) {
        self.accepted.0.copy_from_slice(&self.trial.1);
        self.accepted.1 = self.trial.2;
        self.can_extrapolate = true;
        self.at_point = false;
        self.jac_current = false;
        self.first = false;
        self.rejected = false;
        // Keep the Jacobian while Newton contracts fast (Hairer & Wanner's test).
        if self.last_iters > 2 && self.last_rate > 1e-3 {
            self.need_jac = true;
        }
    }

    fn restart(&mut self) {
        self.at_point = false;
        self.jac_current = false;
        self.need_jac = true;
        self.first = true;
        self.rejected = false;
        self.can_extrapolate = false;
        self.real.clear();
        self.complex.clear();
    }

    fn dense(&self, theta: f64, out: &mut [f64]) {
        let (y0, z, _) = &self.trial;
        let n = out.len();
        let l = [self.basis(0, theta), self.basis(1, theta), self.basis(2, theta)];
        for q in 0..n {
            out[q] = y0[q] + l[0] * z[q] + l[1] * z[n + q] + l[2] * z[2 * n + q];
        }
    }

    fn dense_slope(&self, theta: f64, h: f64, out: &mut [f64]) {
        let (_, z, _) = &self.trial;
        let n = out.len();
        let l = [self.basis_slope(0, theta), self.basis_slope(1, theta), self.basis_slope(2, theta)];
        for q in 0..n {
            out[q] = (l[0] * z[q] + l[1] * z[n + q] + l[2] * z[2 * n + q]) / h;
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::problems::FnProblem;
    use crate::solve::testing::*;

    #[test]
    fn radau5_has_order_5() {
        let p = order_of(&|| Box::new(Radau::new(2)), &[5, 10, 20, 40], || DenseCheck::None);
        assert!((p - 5.0).abs() < 0.2, "observed order {p}");
    }

    #[test]
    fn radau5_dense_output_is_the_collocation_polynomial() {
        // Stage order 3: the collocation polynomial's local error is O(h^4).
        let p = order_of(&|| Box::new(Radau::new(2)), &[5, 10, 20, 40], || DenseCheck::Local(0.3));
        assert!((p - 4.0).abs() < 0.25, "observed local order {p}");
    }


    #[test]
    fn radau_tableau_satisfies_b5_and_c3() {
        // Simplifying assumptions of Radau IIA order 5 (Hairer & Wanner II, Sec. IV.5):
        // B(5): Σ b_i c_i^(k-1) = 1/k, k = 1..5; C(3): Σ_j a_ij c_j^(k-1) = c_i^k / k, k = 1..3.
        let a = RADAU5.a.map(|r| r.map(Sqrt6Number::value));
        let c = RADAU5.c.map(Sqrt6Number::value);
        for k in 1..=5 {
            let s: f64 = (0..3).map(|i| a[2][i] * c[i].powi(k - 1)).sum();
            assert!((s - 1.0 / k as f64).abs() < 1e-14, "B({k})");
        }
        for i in 0..3 {
            for k in 1..=3 {
                let s: f64 = (0..3).map(|j| a[i][j] * c[j].powi(k - 1)).sum();
                assert!((s - c[i].powi(k) / k as f64).abs() < 1e-14, "C({k}) row {i}");
            }
        }
        // γ0 is an eigenvalue of A: det(A - γ0 I) = 0.
        let g = RADAU5.gamma0();
        let m = nalgebra::Matrix3::from_fn(|i, j| a[i][j] - if i == j { g } else { 0.0 });
        assert!(m.determinant().abs() < 1e-14);
        // The error weights annihilate polynomial solutions of degree ≤ 2:
        // h f0 + Σ E_i z_i = 0 for z_i = c_i^k h^k with f0 = 1 (k = 1) and f0 = 0 (k = 2, 3).
        let e = RADAU5.e.map(Sqrt6Number::value);
        for k in 1..=3 {
            let s: f64 = (0..3).map(|i| e[i] * c[i].powi(k)).sum::<f64>() + if k == 1 { 1.0 } else { 0.0 };
            assert!(s.abs() < 1e-13, "E exactness degree {k}: {s}");
        }
    }

    #[test]
    fn radau_transformation_block_diagonalises_the_inverse() {
        // T⁻¹T = I and T⁻¹A⁻¹T = Λ = [[γ, 0, 0], [0, α, -β], [0, β, α]]
        // (Hairer & Wanner II, Sec. IV.8; the digits of radau5.f, from memory).
        let a = nalgebra::Matrix3::from_fn(|i, j| RADAU5.a[i][j].value());
        let t = nalgebra::Matrix3::from_fn(|i, j| RADAU5.t[i][j]);
        let ti = nalgebra::Matrix3::from_fn(|i, j| RADAU5.t_inv[i][j]);
        assert!((ti * t - nalgebra::Matrix3::identity()).abs().max() < 1e-15);
        let [g, al, be] = RADAU5.inverse_eigenvalues();
        let lambda = nalgebra::Matrix3::new(g, 0.0, 0.0, 0.0, al, -be, 0.0, be, al);
        let got = ti * a.try_inverse().unwrap() * t;
        assert!((got - lambda).abs().max() < 1e-13, "{got}");
        assert!((g - 1.0 / RADAU5.gamma0()).abs() < 1e-14);
    }

    /// The collocation solution of one Radau step by the untransformed
    /// `3n × 3n` Newton iteration with nalgebra's LU (the method's defining
    /// equations `z = h(A⊗I)F(z)`, solved to rounding).
    fn collocation_by_full_system(t0: f64, y: [f64; 2], h: f64) -> [f64; 2] {
        let mut p = nonlinear_exact();
        let a = RADAU5.a.map(|r| r.map(Sqrt6Number::value));
        let c = RADAU5.c.map(Sqrt6Number::value);
        let mut jac = [0.0; 4];
        p.jacobian(t0, &y, &mut jac);
        let m = nalgebra::DMatrix::from_fn(6, 6, |r, s| if r == s { 1.0 } else { 0.0 } - h * a[r / 2][s / 2] * jac[(r % 2) * 2 + s % 2]);
        let lu = m.lu();
        let mut z = nalgebra::DVector::<f64>::zeros(6);
        for _ in 0..60 {
            let mut f = [[0.0; 2]; 3];
            for i in 0..3 {
                p.rhs(t0 + c[i] * h, &[y[0] + z[2 * i], y[1] + z[2 * i + 1]], &mut f[i]);
            }
            let res = nalgebra::DVector::from_fn(6, |r, _| -z[r] + h * (0..3).map(|j| a[r / 2][j] * f[j][r % 2]).sum::<f64>());
            z += lu.solve(&res).unwrap();
        }
        [y[0] + z[4], y[1] + z[5]]
    }

    #[test]
    fn transformed_newton_matches_the_full_collocation_system() {
        // The real and complex n × n blocks solve the same collocation
        // equations as the full 3n × 3n system, also with a reused
        // factorization (h within the reuse window of the factored one).
        let mut p = nonlinear_exact();
        let y0 = exact_solution(0.0);
        // Newton stops within κ = 1e-4 of the weights (~2e-8): about 2e-12.
        let tol = Tolerance { relative: 1e-8, absolute: 1e-8 };
        let mut st = Radau::new(2);
        let mut stats = Stats::default();
        let mut y1 = [0.0; 2];
        for (h, factorizations) in [(0.1, 2), (0.09, 2)] {
            st.attempt(&mut p, 0.0, &y0, h, &tol, &mut y1, &mut stats).unwrap();
            assert_eq!(stats.factorizations, factorizations, "h = {h}");
            let want = collocation_by_full_system(0.0, y0, h);
            for i in 0..2 {
                assert!((y1[i] - want[i]).abs() < 1e-10, "h = {h}: {} vs {}", y1[i], want[i]);
            }
        }
    }

    #[test]
    fn newton_failure_is_reported() {
        // y' = -y^9 with a huge step from y = 10: simplified Newton with the
        // starting Jacobian diverges; the attempt fails within its iteration bound.
        let mut p = FnProblem::new(&["y"], |_t, y: &[f64], dy: &mut [f64]| dy[0] = -y[0].powi(9));
        let mut st = Radau::new(1);
        let mut y1 = [0.0];
        let mut stats = Stats::default();
        let r = st.attempt(&mut p, 0.0, &[10.0], 1.0, &Tolerance::default(), &mut y1, &mut stats);
        assert_eq!(r, Err(StepFault::NewtonFailed));
        assert!(stats.rhs_evals < 60);
    }

}
