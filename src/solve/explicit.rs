//! The one generic explicit Runge–Kutta stepper: it runs any [`Tableau`].
//!
//! Per attempt it evaluates the stages, forms `y_new`, the weighted RMS norm of
//! the local error estimate (when the method has one) and Hairer's stiffness
//! estimate. It allocates only when built.

use super::stepper::{Attempt, Stats, StepFault, Stepper, Tolerance};
use super::tableau::{ErrorEstimate, Tableau};
use crate::problem::Problem;

/// The non-zero entries `(j, w_j)` of a weight vector.
fn sparse(w: &[f64]) -> Vec<(usize, f64)> {
    w.iter().enumerate().filter(|(_, x)| **x != 0.0).map(|(j, x)| (j, *x)).collect()
}

/// `acc = Σ_j w_j k_j` over the sparse weights `w`, with the slopes stored
/// stage-major (`k_j = k[j·dim .. (j+1)·dim]`, `dim = acc.len()`). Each
/// component is summed from 0 in the order of `w`; running over the stages
/// outside and the components inside keeps the components' sums
/// independent of one another, so that they proceed side by side.
#[inline(always)]
fn combine(acc: &mut [f64], k: &[f64], w: &[(usize, f64)]) {
    let dim = acc.len();
    acc.fill(0.0);
    for &(j, a) in w {
        for (x, v) in acc.iter_mut().zip(&k[j * dim..(j + 1) * dim]) {
            *x += a * v;
        }
    }
}

/// A stepper for one explicit tableau.
///
/// The stage slopes live in one stage-major buffer and every combination of
/// them (stage arguments, `y_new`, the error estimate) runs over the non-zero
/// coefficients only, component by component, so that a small system costs
/// little more than its rate evaluations. `N > 0` fixes the number of states
/// at compile time (the loops over the components unroll); `N = 0` takes it
/// at run time. [`ExplicitStepper::boxed`] picks the right one.
pub struct ExplicitStepper<const N: usize = 0> {
    tab: &'static Tableau,
    /// The tableau's coefficients as the step uses them.
    plan: &'static Plan,
    dim: usize,
    /// Stage slopes, stage-major: the method's stages, then any extra
    /// dense-output stages; slope `i` is `k[i·dim .. (i+1)·dim]`.
    k: Vec<f64>,
    /// Stage arguments of the stiffness pair.
    g_pair: [Vec<f64>; 2],
    stage: Vec<f64>,
    /// Scratch sums of [`combine`] (two, for the blended error estimate)
    /// when the size is not fixed (`N = 0`).
    acc: [Vec<f64>; 2],
    /// Start, end and step of the last successful attempt.
    y0: Vec<f64>,
    y1: Vec<f64>,
    t0: f64,
    h: f64,
    /// `k[0]` holds `f(t, y)` for the point the next attempt starts from.
    first_ready: bool,
    /// The dense stages of the last attempt have been computed.
    dense_ready: bool,
    /// The last attempt was accepted; the next attempt starts at its end.
    accepted: bool,
    /// The end slope `f(t + h, y_new)` of the last attempt is in `k[end]`.
    end: Option<usize>,
    /// Dense coefficient vectors: `y(θ) = y0 + Σ_j θ^(j+1) r[j]`.
    r: Vec<Vec<f64>>,
}

/// A tableau's coefficients in the form the step uses them: the non-zero
/// entries of each combination of slopes, and the dense-output weights.
/// Derived once per tableau (see [`plan`]) and shared by every stepper built
/// for it, so that building a stepper costs only its buffers.
struct Plan {
    fsal: bool,
    /// Non-zero `a_ij` of every stage row (the extra dense stages included).
    rows: Vec<Vec<(usize, f64)>>,
    c: Vec<f64>,
    /// Number of extra dense stages.
    extra: usize,
    /// Non-zero weights `b_i`.
    b: Vec<(usize, f64)>,
    /// Dense weights p[i][j] (θ^(j+1)) over all stages.
    p: Vec<Vec<f64>>,
    /// Non-zero weights of the error estimate (and of the order-3 difference
    /// of the blended estimate).
    e: Vec<(usize, f64)>,
    e3: Vec<(usize, f64)>,
    /// Number of slopes kept (the stages and the extra dense stages).
    slopes: usize,
    /// Degree of the dense output polynomial in θ.
    degree: usize,
}

impl Plan {
    fn new(tab: &Tableau) -> Plan {
        let s = tab.stages();
        let fsal = tab.fsal();
        let (p, extra) = tab.dense.weights(tab.b, fsal);
        let (e, e3) = match &tab.error {
            ErrorEstimate::None => (Vec::new(), Vec::new()),
            ErrorEstimate::Embedded { b_hat } => (tab.b.iter().zip(b_hat.iter()).map(|(b, bh)| b - bh).collect(), Vec::new()),
            ErrorEstimate::Blended { e5, e3 } => (e5.to_vec(), e3.to_vec()),
        };
        let mut rows: Vec<Vec<(usize, f64)>> = tab.a.iter().map(|r| sparse(r)).collect();
        let mut c = tab.c.to_vec();
        for (ci, ai) in &extra {
            c.push(*ci);
            rows.push(sparse(ai));
        }
        Plan {
            fsal,
            rows,
            c,
            extra: extra.len(),
            b: sparse(tab.b),
            slopes: p.len().max(s),
            degree: p.iter().map(|r| r.len()).max().unwrap_or(1),
            p,
            e: sparse(&e),
            e3: sparse(&e3),
        }
    }
}

/// The plan of `tab`, made on first use and kept for the life of the
/// program (one per tableau, of which there are a handful).
fn plan(tab: &'static Tableau) -> &'static Plan {
    static PLANS: std::sync::Mutex<Vec<(usize, &'static Plan)>> = std::sync::Mutex::new(Vec::new());
    let key = tab as *const Tableau as usize;
    let mut plans = PLANS.lock().unwrap_or_else(|poisoned| poisoned.into_inner());
    if let Some((_, p)) = plans.iter().find(|(k, _)| *k == key) {
        return p;
    }
    let p: &'static Plan = Box::leak(Box::new(Plan::new(tab)));
    plans.push((key, p));
    p
}

/// Largest system size with its own compiled stepper.
const FIXED_MAX: usize = 4;

impl ExplicitStepper {
    /// The stepper for `tab` on a system of `dim` states: one compiled for
    /// that size when `dim ≤ 4`, else the general one.
    pub fn boxed(tab: &'static Tableau, dim: usize) -> Box<dyn Stepper> {
        match dim {
            1 => Box::new(ExplicitStepper::<1>::new(tab, dim)),
            2 => Box::new(ExplicitStepper::<2>::new(tab, dim)),
            3 => Box::new(ExplicitStepper::<3>::new(tab, dim)),
            FIXED_MAX => Box::new(ExplicitStepper::<FIXED_MAX>::new(tab, dim)),
            _ => Box::new(ExplicitStepper::<0>::new(tab, dim)),
        }
    }
}

impl<const N: usize> ExplicitStepper<N> {
    /// A stepper for `tab` on a system of `dim` states (`dim` must equal `N`
    /// when `N > 0`).
    pub fn new(tab: &'static Tableau, dim: usize) -> Self {
        let plan = plan(tab);
        ExplicitStepper {
            tab,
            plan,
            dim,
            k: vec![0.0; plan.slopes * dim],
            g_pair: [vec![0.0; dim], vec![0.0; dim]],
            stage: vec![0.0; dim],
            acc: [vec![0.0; dim], vec![0.0; dim]],
            y0: vec![0.0; dim],
            y1: vec![0.0; dim],
            t0: 0.0,
            h: 0.0,
            first_ready: false,
            dense_ready: false,
            accepted: false,
            end: None,
            r: vec![vec![0.0; dim]; plan.degree],
        }
    }

    /// The tableau this stepper runs.
    pub fn tableau(&self) -> &'static Tableau {
        self.tab
    }

    /// The number of states: the constant `N` when it is fixed.
    #[inline(always)]
    fn n(&self) -> usize {
        if N > 0 {
            N
        } else {
            self.dim
        }
    }

    /// Evaluate stage `i` from `y0` (the first `i` slopes must be ready).
    fn eval_stage(&mut self, problem: &mut dyn Problem, i: usize, stats: &mut Stats) -> Result<(), StepFault> {
        let (h, dim) = (self.h, self.n());
        let (done, rest) = self.k.split_at_mut(i * dim);
        // With the size fixed the sums live in registers (a local array),
        // not in memory that a bounds check in the loop would have to keep
        // up to date.
        let mut fixed = [0.0; N];
        let acc: &mut [f64] = if N > 0 { &mut fixed } else { &mut self.acc[0][..dim] };
        combine(acc, done, &self.plan.rows[i]);
        let stage = &mut self.stage[..dim];
        for ((x, y), a) in stage.iter_mut().zip(&self.y0[..dim]).zip(&*acc) {
            *x = y + h * a;
        }
        if let Some((pi, pj)) = self.tab.stiffness_pair {
            if i == pi {
                self.g_pair[0][..dim].copy_from_slice(stage);
            } else if i == pj {
                self.g_pair[1][..dim].copy_from_slice(stage);
            }
        }
        let ki = &mut rest[..dim];
        problem.rhs(self.t0 + self.plan.c[i] * h, stage, ki);
        stats.rhs_evals += 1;
        if ki.iter().all(|v| v.is_finite()) {
            Ok(())
        } else {
            Err(StepFault::NonFinite)
        }
    }

    /// The weighted RMS norm of the local error estimate of the last attempt
    /// (`None` without an estimate), in one pass over the components.
    fn error_norm(&mut self, tol: &Tolerance) -> Option<f64> {
        let (h, dim) = (self.h, self.n());
        let blended = match &self.tab.error {
            ErrorEstimate::None => return None,
            ErrorEstimate::Embedded { .. } => false,
            ErrorEstimate::Blended { .. } => true,
        };
        if dim == 0 {
            return Some(0.0);
        }
        let [a5, a3] = &mut self.acc;
        let (mut f5, mut f3) = ([0.0; N], [0.0; N]);
        let (a5, a3): (&mut [f64], &mut [f64]) = if N > 0 { (&mut f5, &mut f3) } else { (&mut a5[..dim], &mut a3[..dim]) };
        combine(a5, &self.k, &self.plan.e);
        if blended {
            combine(a3, &self.k, &self.plan.e3);
        }
        let (mut s5, mut s3) = (0.0, 0.0);
        for q in 0..dim {
            let w = tol.weight(self.y0[q], self.y1[q]);
            let r = h * a5[q] / w;
            s5 += r * r;
            if blended {
                let r3 = h * a3[q] / w;
                s3 += r3 * r3;
            }
        }
        let e5 = (s5 / dim as f64).sqrt();
        if !blended {
            return Some(e5);
        }
        // e5² / sqrt(e5² + 0.01 e3²), as in `dop853`.
        let e3 = (s3 / dim as f64).sqrt();
        let den = (e5 * e5 + 0.01 * e3 * e3).sqrt();
        Some(if den > 0.0 { e5 * e5 / den } else { 0.0 })
    }

    /// Hairer's estimate `|h| ‖k_j − k_i‖ / ‖g_j − g_i‖` of `|h·λ|` from the
    /// stiffness pair `(i, j)` of the last attempt.
    fn stiffness_estimate(&self, h: f64) -> Option<f64> {
        let (i, j) = self.tab.stiffness_pair?;
        let dim = self.n();
        let (ki, kj) = (&self.k[i * dim..(i + 1) * dim], &self.k[j * dim..(j + 1) * dim]);
        let num: f64 = kj.iter().zip(ki).map(|(a, b)| (a - b) * (a - b)).sum();
        let den: f64 = self.g_pair[1].iter().zip(&self.g_pair[0]).map(|(a, b)| (a - b) * (a - b)).sum();
        (den > 0.0).then(|| h.abs() * (num / den).sqrt())
    }
}

impl<const N: usize> Stepper for ExplicitStepper<N> {
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
        let s = self.tab.stages();
        let dim = self.n();
        if self.accepted {
            // Reuse f(t, y) from the end of the accepted step when we have it.
            match self.end {
                Some(e) => {
                    let (head, tail) = self.k.split_at_mut(e * dim);
                    head[..dim].copy_from_slice(&tail[..dim]);
                    self.first_ready = true;
                }
                None => self.first_ready = false,
            }
            self.accepted = false;
        }
        self.t0 = t;
        self.h = h;
        self.dense_ready = false;
        self.end = None;
        self.y0[..dim].copy_from_slice(&y[..dim]);
        if !self.first_ready {
            let k0 = &mut self.k[..dim];
            problem.rhs(t, y, k0);
            stats.rhs_evals += 1;
            if !k0.iter().all(|v| v.is_finite()) {
                return Err(StepFault::NonFinite);
            }
            self.first_ready = true;
        }
        let last = if self.plan.fsal { s - 1 } else { s };
        for i in 1..last {
            self.eval_stage(problem, i, stats)?;
        }
        // y_new = y + h Σ b_i k_i
        let mut fixed = [0.0; N];
        let acc: &mut [f64] = if N > 0 { &mut fixed } else { &mut self.acc[0][..dim] };
        combine(acc, &self.k, &self.plan.b);
        let y1 = &mut self.y1[..dim];
        for ((x, y), a) in y1.iter_mut().zip(&self.y0[..dim]).zip(&*acc) {
            *x = y + h * a;
        }
        if !y1.iter().all(|v| v.is_finite()) {
            return Err(StepFault::NonFinite);
        }
        if self.plan.fsal {
            // The last stage argument is y_new itself.
            self.eval_stage(problem, s - 1, stats)?;
            self.end = Some(s - 1);
        }
        y_new[..dim].copy_from_slice(&self.y1[..dim]);
        let error = self.error_norm(tol);
        if let Some(e) = error {
            if !e.is_finite() {
                return Err(StepFault::NonFinite);
            }
        }
        Ok(Attempt { error, stiffness: self.stiffness_estimate(h) })
    }

    fn accept(&mut self) {
        self.accepted = true;
    }

    fn restart(&mut self) {
        self.first_ready = false;
        self.accepted = false;
        self.end = None;
    }

    fn seed_slope(&mut self, f: &[f64]) {
        if f.len() == self.dim && f.iter().all(|v| v.is_finite()) {
            self.restart();
            self.k[..self.dim].copy_from_slice(f);
            self.first_ready = true;
        }
    }

    fn prepare_dense(&mut self, problem: &mut dyn Problem, stats: &mut Stats) {
        if self.dense_ready {
            return;
        }
        let s = self.tab.stages();
        let mut ok = true;
        for m in 0..self.plan.extra {
            if self.eval_stage(problem, s + m, stats).is_err() {
                // A non-finite extra stage leaves a non-finite dense output;
                // the driver sees it in the values it reads.
                ok = false;
                break;
            }
        }
        if ok && self.end.is_none() && self.plan.extra > 0 {
            // The Hermite end slope is the extra stage with c = 1 and a = b:
            // the first stage of the next step.
            self.end = Some(s);
        }
        self.build_dense();
    }

    fn dense(&self, theta: f64, out: &mut [f64]) {
        if !self.dense_ready {
            // Linear interpolation when no continuous extension was prepared.
            for ((o, a), b) in out.iter_mut().zip(&self.y0).zip(&self.y1) {
                *o = a + theta * (b - a);
            }
            return;
        }
        out.copy_from_slice(&self.y0);
        let mut pw = theta;
        for rj in &self.r {
            for (o, v) in out.iter_mut().zip(rj) {
                *o += pw * v;
            }
            pw *= theta;
        }
    }

    fn dense_slope(&self, theta: f64, h: f64, out: &mut [f64]) {
        out.iter_mut().for_each(|x| *x = 0.0);
        if !self.dense_ready {
            for ((o, a), b) in out.iter_mut().zip(&self.y0).zip(&self.y1) {
                *o = (b - a) / h;
            }
            return;
        }
        let mut pw = 1.0;
        for (j, rj) in self.r.iter().enumerate() {
            let f = (j + 1) as f64 * pw / h;
            for (o, v) in out.iter_mut().zip(rj) {
                *o += f * v;
            }
            pw *= theta;
        }
    }
}

impl<const N: usize> ExplicitStepper<N> {
    /// `r[j] = h Σ_i p[i][j] k_i` from the slopes of the last attempt.
    fn build_dense(&mut self) {
        let dim = self.n();
        for (j, rj) in self.r.iter_mut().enumerate() {
            rj.iter_mut().for_each(|x| *x = 0.0);
            for (i, pi) in self.plan.p.iter().enumerate() {
                let w = pi.get(j).copied().unwrap_or(0.0);
                if w != 0.0 {
                    for (x, kv) in rj.iter_mut().zip(&self.k[i * dim..(i + 1) * dim]) {
                        *x += self.h * w * kv;
                    }
                }
            }
        }
        self.dense_ready = true;
    }
}
