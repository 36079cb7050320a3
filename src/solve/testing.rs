//! Helpers for the steppers' unit tests: a smooth nonlinear problem with an
//! exact solution and exact derivatives, fixed-step runs, a plain adaptive
//! loop and order fits. Used by the tests of every implicit family.
// Index loops here mirror the formulas they implement.
#![allow(clippy::needless_range_loop)]

use crate::problem::Problem;
use crate::solve::stepper::{Stats, Stepper, Tolerance};

/// The exact solution `u(t) = (cos t, 1 + sin(2t)/2)` of [`nonlinear_exact`].
pub fn exact_solution(t: f64) -> [f64; 2] {
    [t.cos(), 1.0 + (2.0 * t).sin() / 2.0]
}

fn exact_rate(t: f64) -> [f64; 2] {
    [-t.sin(), (2.0 * t).cos()]
}

/// `f(t, y) = u'(t) + A(y - u) + ½(y0 y1 - u0 u1)(1, -1)` with
/// `A = [[-2, 1], [1, -3]]`: nonlinear, non-autonomous, solved exactly by
/// `u` (constructed so; analytic).
pub struct Manufactured;

const A: [[f64; 2]; 2] = [[-2.0, 1.0], [1.0, -3.0]];

impl Problem for Manufactured {
    fn dim(&self) -> usize {
        2
    }
    fn state_names(&self) -> &[String] {
        &[]
    }
    fn rhs(&mut self, t: f64, y: &[f64], dy: &mut [f64]) {
        let (u, du) = (exact_solution(t), exact_rate(t));
        let c = 0.5 * (y[0] * y[1] - u[0] * u[1]);
        for i in 0..2 {
            dy[i] = du[i] + A[i][0] * (y[0] - u[0]) + A[i][1] * (y[1] - u[1]) + if i == 0 { c } else { -c };
        }
    }
    fn jacobian(&mut self, _t: f64, y: &[f64], jac: &mut [f64]) -> bool {
        jac.copy_from_slice(&[A[0][0] + 0.5 * y[1], A[0][1] + 0.5 * y[0], A[1][0] - 0.5 * y[1], A[1][1] - 0.5 * y[0]]);
        true
    }
    fn time_derivative(&mut self, t: f64, _y: &[f64], dfdt: &mut [f64]) -> bool {
        let (u, du) = (exact_solution(t), exact_rate(t));
        let ddu = [-t.cos(), -2.0 * (2.0 * t).sin()];
        let dc = 0.5 * (du[0] * u[1] + u[0] * du[1]);
        for i in 0..2 {
            dfdt[i] = ddu[i] - A[i][0] * du[0] - A[i][1] * du[1] - if i == 0 { dc } else { -dc };
        }
        true
    }
}

/// The manufactured problem.
pub fn nonlinear_exact() -> Manufactured {
    Manufactured
}

/// Where to measure in [`fixed_step_error`].
pub enum DenseCheck {
    /// The global error at `t = 1`.
    None,
    /// The dense-output error at `θ` of a single step of size `1/m` from `t = 0`.
    Local(f64),
}

/// `m` fixed steps of `1/m` over `[0, 1]` on the manufactured problem.
pub fn fixed_step_error(st: &mut dyn Stepper, m: usize, check: DenseCheck) -> f64 {
    let mut p = nonlinear_exact();
    let h = 1.0 / m as f64;
    let tol = Tolerance { relative: 1e-12, absolute: 1e-12 };
    let mut y = exact_solution(0.0).to_vec();
    let mut y1 = y.clone();
    let mut stats = Stats::default();
    let steps = if let DenseCheck::Local(_) = check { 1 } else { m };
    for k in 0..steps {
        st.attempt(&mut p, k as f64 * h, &y, h, &tol, &mut y1, &mut stats).unwrap();
        st.accept();
        y.copy_from_slice(&y1);
    }
    let (t, y) = match check {
        DenseCheck::None => (1.0, y),
        DenseCheck::Local(theta) => {
            let mut out = vec![0.0; 2];
            st.dense(theta, &mut out);
            (theta * h, out)
        }
    };
    let u = exact_solution(t);
    (0..2).map(|i| (y[i] - u[i]).abs()).fold(0.0, f64::max)
}

/// A plain adaptive loop (elementary controller `0.9·err^(-1/(q+1))`
/// clamped to [0.2, 5]) for the steppers' own tests; the driver has the
/// real controller. Returns the end state and the work counts.
pub fn adaptive(st: &mut dyn Stepper, p: &mut dyn Problem, y0: &[f64], t_end: f64, tol: &Tolerance, q: u32) -> (Vec<f64>, Stats) {
    let (mut t, mut h) = (0.0f64, 1e-6f64);
    let mut y = y0.to_vec();
    let mut y1 = y.clone();
    let mut stats = Stats::default();
    while t < t_end && stats.steps + stats.rejected < 100_000 {
        h = h.min(t_end - t);
        match st.attempt(p, t, &y, h, tol, &mut y1, &mut stats) {
            Ok(a) => {
                let err = a.error.unwrap_or(0.0);
                let fac = (0.9 * err.max(1e-10).powf(-1.0 / (q as f64 + 1.0))).clamp(0.2, 5.0);
                if err <= 1.0 {
                    st.accept();
                    t += h;
                    y.copy_from_slice(&y1);
                    stats.steps += 1;
                } else {
                    stats.rejected += 1;
                }
                h *= fac;
            }
            Err(_) => {
                stats.rejected += 1;
                h *= 0.25;
            }
        }
    }
    (y, stats)
}

/// Least-squares slope of `log err` against `log h`.
pub fn fit_order(data: &[(f64, f64)]) -> f64 {
    let pts: Vec<(f64, f64)> = data.iter().map(|(h, e)| (h.ln(), e.ln())).collect();
    let k = pts.len() as f64;
    let (mx, my) = (pts.iter().map(|p| p.0).sum::<f64>() / k, pts.iter().map(|p| p.1).sum::<f64>() / k);
    let sxy: f64 = pts.iter().map(|p| (p.0 - mx) * (p.1 - my)).sum();
    let sxx: f64 = pts.iter().map(|p| (p.0 - mx).powi(2)).sum();
    sxy / sxx
}

/// The observed order of a stepper: [`fit_order`] over fixed-step runs with
/// `m` steps for each `m` of `ms`, measured as `check` says.
pub fn order_of(make: &dyn Fn() -> Box<dyn Stepper>, ms: &[usize], check: fn() -> DenseCheck) -> f64 {
    let errs: Vec<(f64, f64)> = ms.iter().map(|&m| (1.0 / m as f64, fixed_step_error(make().as_mut(), m, check()))).collect();
    fit_order(&errs)
}
