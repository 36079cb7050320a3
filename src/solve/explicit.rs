//! The one generic explicit Runge–Kutta stepper: it runs any [`Tableau`].
//!
//! Per attempt it evaluates the stages, forms `y_new`, the weighted RMS norm of
//! the local error estimate (when the method has one) and Hairer's stiffness
//! estimate. It allocates only when built.

use super::stepper::{Attempt, Stats, StepFault, Stepper, Tolerance};
use super::tableau::{ErrorEstimate, Tableau};
use crate::problem::Problem;

/// The weighted RMS norm of the error estimates, shared with the implicit methods.
pub use super::linalg::weighted_rms;

/// A stepper for one explicit tableau.
pub struct ExplicitStepper {
    tab: &'static Tableau,
    fsal: bool,
    /// Stage slopes: the method's stages, then any extra dense-output stages.
    k: Vec<Vec<f64>>,
    a: Vec<Vec<f64>>,
    c: Vec<f64>,
    /// Extra dense stages (c, a over all earlier stages).
    extra: Vec<(f64, Vec<f64>)>,
    /// Dense weights p[i][j] (θ^(j+1)) over all stages.
    p: Vec<Vec<f64>>,
    e: Vec<f64>,
    e3: Vec<f64>,
    /// Stage arguments of the stiffness pair.
    g_pair: [Vec<f64>; 2],
    stage: Vec<f64>,
    err: Vec<f64>,
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

impl ExplicitStepper {
    /// A stepper for `tab` on a system of `dim` states.
    pub fn new(tab: &'static Tableau, dim: usize) -> Self {
        let s = tab.stages();
        let fsal = tab.fsal();
        let (p, extra) = tab.dense.weights(tab.b, fsal);
        let n = p.len().max(s);
        let deg = p.iter().map(|r| r.len()).max().unwrap_or(1);
        let (e, e3) = match &tab.error {
            ErrorEstimate::None => (Vec::new(), Vec::new()),
            ErrorEstimate::Embedded { b_hat } => (tab.b.iter().zip(b_hat.iter()).map(|(b, bh)| b - bh).collect(), Vec::new()),
            ErrorEstimate::Blended { e5, e3 } => (e5.to_vec(), e3.to_vec()),
        };
        let mut a: Vec<Vec<f64>> = tab.a.iter().map(|r| r.to_vec()).collect();
        let mut c = tab.c.to_vec();
        for (ci, ai) in &extra {
            c.push(*ci);
            a.push(ai.clone());
        }
        ExplicitStepper {
            tab,
            fsal,
            k: vec![vec![0.0; dim]; n],
            a,
            c,
            extra,
            p,
            e,
            e3,
            g_pair: [vec![0.0; dim], vec![0.0; dim]],
            stage: vec![0.0; dim],
            err: vec![0.0; dim],
            y0: vec![0.0; dim],
            y1: vec![0.0; dim],
            t0: 0.0,
            h: 0.0,
            first_ready: false,
            dense_ready: false,
            accepted: false,
            end: None,
            r: vec![vec![0.0; dim]; deg],
        }
    }

    /// The tableau this stepper runs.
    pub fn tableau(&self) -> &'static Tableau {
        self.tab
    }

    /// Evaluate stage `i` from `y0` (the first `i` slopes must be ready).
    fn eval_stage(&mut self, problem: &mut dyn Problem, i: usize, stats: &mut Stats) -> Result<(), StepFault> {
        let h = self.h;
        self.stage.copy_from_slice(&self.y0);
        for (j, &aij) in self.a[i].iter().enumerate() {
            if aij != 0.0 {
                let kj = &self.k[j];
                for (s, kv) in self.stage.iter_mut().zip(kj) {
                    *s += h * aij * kv;
                }
            }
        }
        if let Some((pi, pj)) = self.tab.stiffness_pair {
            if i == pi {
                self.g_pair[0].copy_from_slice(&self.stage);
            } else if i == pj {
                self.g_pair[1].copy_from_slice(&self.stage);
            }
        }
        let (t, ci) = (self.t0, self.c[i]);
        problem.rhs(t + ci * h, &self.stage, &mut self.k[i]);
        stats.rhs_evals += 1;
        if self.k[i].iter().all(|v| v.is_finite()) {
            Ok(())
        } else {
            Err(StepFault::NonFinite)
        }
    }

    /// `h Σ w_i k_i` into `self.err`.
    fn combine(&mut self, w_is_e3: bool) {
        let w = if w_is_e3 { &self.e3 } else { &self.e };
        self.err.iter_mut().for_each(|x| *x = 0.0);
        for (wi, ki) in w.iter().zip(&self.k) {
            if *wi != 0.0 {
                for (x, kv) in self.err.iter_mut().zip(ki) {
                    *x += self.h * wi * kv;
                }
            }
        }
    }
}

fn diff_norm(a: &[f64], b: &[f64]) -> f64 {
    a.iter().zip(b).map(|(x, y)| (x - y) * (x - y)).sum::<f64>().sqrt()
}

impl Stepper for ExplicitStepper {
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
        if self.accepted {
            // Reuse f(t, y) from the end of the accepted step when we have it.
            match self.end {
                Some(e) => {
                    self.k.swap(0, e);
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
        self.y0.copy_from_slice(y);
        if !self.first_ready {
            problem.rhs(t, y, &mut self.k[0]);
            stats.rhs_evals += 1;
            if !self.k[0].iter().all(|v| v.is_finite()) {
                return Err(StepFault::NonFinite);
            }
            self.first_ready = true;
        }
        let last = if self.fsal { s - 1 } else { s };
        for i in 1..last {
            self.eval_stage(problem, i, stats)?;
        }
        // y_new = y + h Σ b_i k_i
        self.y1.copy_from_slice(y);
        for (bi, ki) in self.tab.b.iter().zip(&self.k) {
            if *bi != 0.0 {
                for (x, kv) in self.y1.iter_mut().zip(ki) {
                    *x += h * bi * kv;
                }
            }
        }
        if !self.y1.iter().all(|v| v.is_finite()) {
            return Err(StepFault::NonFinite);
        }
        if self.fsal {
            // The last stage argument is y_new itself.
            self.eval_stage(problem, s - 1, stats)?;
            self.end = Some(s - 1);
        }
        y_new.copy_from_slice(&self.y1);
        let error = match &self.tab.error {
            ErrorEstimate::None => None,
            ErrorEstimate::Embedded { .. } => {
                self.combine(false);
                Some(weighted_rms(&self.err, y, &self.y1, tol))
            }
            ErrorEstimate::Blended { .. } => {
                self.combine(false);
                let e5 = weighted_rms(&self.err, y, &self.y1, tol);
                self.combine(true);
                let e3 = weighted_rms(&self.err, y, &self.y1, tol);
                let den = (e5 * e5 + 0.01 * e3 * e3).sqrt();
                Some(if den > 0.0 { e5 * e5 / den } else { 0.0 })
            }
        };
        if let Some(e) = error {
            if !e.is_finite() {
                return Err(StepFault::NonFinite);
            }
        }
        let stiffness = self.tab.stiffness_pair.and_then(|(i, j)| {
            let den = diff_norm(&self.g_pair[1], &self.g_pair[0]);
            let num = diff_norm(&self.k[j], &self.k[i]);
            (den > 0.0).then(|| h.abs() * num / den)
        });
        Ok(Attempt { error, stiffness })
    }

    fn accept(&mut self) {
        self.accepted = true;
    }

    fn restart(&mut self) {
        self.first_ready = false;
        self.accepted = false;
        self.end = None;
    }

    fn prepare_dense(&mut self, problem: &mut dyn Problem, stats: &mut Stats) {
        if self.dense_ready {
            return;
        }
        let s = self.tab.stages();
        let mut ok = true;
        for m in 0..self.extra.len() {
            if self.eval_stage(problem, s + m, stats).is_err() {
                // A non-finite extra stage leaves a non-finite dense output;
                // the driver sees it in the values it reads.
                ok = false;
                break;
            }
        }
        if ok && self.end.is_none() && !self.extra.is_empty() {
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

impl ExplicitStepper {
    /// `r[j] = h Σ_i p[i][j] k_i` from the slopes of the last attempt.
    fn build_dense(&mut self) {
        for (j, rj) in self.r.iter_mut().enumerate() {
            rj.iter_mut().for_each(|x| *x = 0.0);
            for (pi, ki) in self.p.iter().zip(&self.k) {
                let w = pi.get(j).copied().unwrap_or(0.0);
                if w != 0.0 {
                    for (x, kv) in rj.iter_mut().zip(ki) {
                        *x += self.h * w * kv;
                    }
                }
            }
        }
        self.dense_ready = true;
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn weighted_rms_matches_definition() {
        let tol = Tolerance { rtol: 0.5, atol: 1.0 };
        // weights 1 + 0.5·max(|y|,|z|) = 2 and 3
        let v = weighted_rms(&[2.0, 3.0], &[2.0, 0.0], &[1.0, 4.0], &tol);
        assert!((v - 1.0).abs() < 1e-15);
    }
}
