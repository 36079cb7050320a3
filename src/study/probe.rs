//! Probes of a model at one point or along a trajectory: its Jacobian and
//! spectrum, whether its rate is Lipschitz, how fast it blows up, and how
//! close an event function comes to zero. Each returns numbers; the wording
//! lives in [`super::pitfalls`].

use super::stability::C64;
use crate::problem::{Crossing, Problem};
use nalgebra::DMatrix;

/// The Jacobian `∂f/∂y` at `(t, y)`: exact when the model has one, else by
/// forward differences. `None` when the rates there are not finite.
pub fn jacobian(problem: &mut dyn Problem, t: f64, y: &[f64]) -> Option<Vec<f64>> {
    let n = problem.dim();
    let mut jac = vec![0.0; n * n];
    if problem.jacobian(t, y, &mut jac) {
        return Some(jac);
    }
    let mut f0 = vec![0.0; n];
    problem.rhs(t, y, &mut f0);
    if f0.iter().any(|v| !v.is_finite()) {
        return None;
    }
    let mut yp = y.to_vec();
    let mut f1 = vec![0.0; n];
    for j in 0..n {
        let d = f64::EPSILON.sqrt() * y[j].abs().max(1.0);
        yp[j] = y[j] + d;
        problem.rhs(t, &yp, &mut f1);
        yp[j] = y[j];
        for i in 0..n {
            jac[i * n + j] = (f1[i] - f0[i]) / d;
        }
    }
    Some(jac)
}

/// The eigenvalues of the Jacobian at `(t, y)`, or `None` when it is not finite.
pub fn spectrum(problem: &mut dyn Problem, t: f64, y: &[f64]) -> Option<Vec<C64>> {
    let n = problem.dim();
    let jac = jacobian(problem, t, y)?;
    if n == 0 || jac.iter().any(|v| !v.is_finite()) {
        return None;
    }
    let m = DMatrix::from_row_slice(n, n, &jac);
    Some(m.complex_eigenvalues().iter().copied().collect())
}

/// Where a rate is not Lipschitz in a state at the start.
#[derive(Clone, Debug, PartialEq)]
pub struct NotLipschitz {
    /// The state the rate is not Lipschitz in.
    pub state: usize,
    /// The rate whose slope is unbounded.
    pub rate: usize,
    /// Difference quotients `|Δf/Δy|` for the trial offsets in [`LIPSCHITZ_OFFSETS`]
    /// (the largest first); they grow without bound as the offset shrinks.
    pub quotients: Vec<f64>,
    /// Whether the exact Jacobian itself came out non-finite there.
    pub exact_infinite: bool,
}

/// Offsets (relative to `max(|y_j|, 1)`) at which [`lipschitz_at`] probes the rates.
pub const LIPSCHITZ_OFFSETS: [f64; 3] = [1e-4, 1e-6, 1e-8];

/// Test whether `f` is Lipschitz in `y` at `(t, y)`: on a Lipschitz rate the
/// difference quotients `|f(y + δe_j) − f(y)| / δ` settle as `δ` shrinks; here
/// they are flagged when each hundredfold cut of `δ` multiplies them by 5 or
/// more (a `sqrt(y)` at 0 multiplies them by 10). A non-finite exact Jacobian
/// entry with finite rates is flagged too. Both signs of `δ` are tried, a side
/// whose rates go non-finite is skipped.
pub fn lipschitz_at(problem: &mut dyn Problem, t: f64, y: &[f64]) -> Option<NotLipschitz> {
    let n = problem.dim();
    let mut f0 = vec![0.0; n];
    problem.rhs(t, y, &mut f0);
    if f0.iter().any(|v| !v.is_finite()) {
        return None;
    }
    let mut jac = vec![0.0; n * n];
    let exact = problem.jacobian(t, y, &mut jac);
    let mut yp = y.to_vec();
    let mut f1 = vec![0.0; n];
    for j in 0..n {
        let scale = y[j].abs().max(1.0);
        for sign in [1.0, -1.0] {
            let mut q = vec![vec![0.0; LIPSCHITZ_OFFSETS.len()]; n];
            let mut finite = true;
            for (k, off) in LIPSCHITZ_OFFSETS.iter().enumerate() {
                let d = sign * off * scale;
                yp[j] = y[j] + d;
                problem.rhs(t, &yp, &mut f1);
                yp[j] = y[j];
                if f1.iter().any(|v| !v.is_finite()) {
                    finite = false;
                    break;
                }
                for i in 0..n {
                    q[i][k] = ((f1[i] - f0[i]) / d).abs();
                }
            }
            if !finite {
                continue;
            }
            for (i, qi) in q.into_iter().enumerate() {
                let grows = qi.windows(2).all(|w| w[1] >= 5.0 * w[0] && w[1] > 0.0);
                let inf = exact && !jac[i * n + j].is_finite();
                if grows || inf {
                    return Some(NotLipschitz { state: j, rate: i, quotients: qi, exact_infinite: inf });
                }
            }
        }
    }
    None
}

/// A fitted finite-time blow-up `y ≈ C / (T − t)^k`.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct BlowUp {
    /// The state that blows up.
    pub state: usize,
    /// The fitted blow-up time `T`.
    pub t_star: f64,
    /// The fitted exponent `k`.
    pub exponent: f64,
}

/// Fit `y_j ≈ C / (T − t)^k` to the state that grows fastest at the last two
/// points `(t_a, y_a)`, `(t_b, y_b)` of a trajectory. For such growth
/// `u = y / y'` equals `(T − t) / k`, so `k = −1 / (du/dt)` and `T = t + k u`
/// (for `y' = y²`, `y(0) = 1`: `u = 1 − t`, `k = 1`, `T = 1`). `None` unless
/// the fit describes growth faster than any exponential, ahead of `t_b`.
pub fn blow_up(problem: &mut dyn Problem, a: (f64, &[f64]), b: (f64, &[f64])) -> Option<BlowUp> {
    let n = problem.dim();
    let (mut fa, mut fb) = (vec![0.0; n], vec![0.0; n]);
    problem.rhs(a.0, a.1, &mut fa);
    problem.rhs(b.0, b.1, &mut fb);
    let j = (0..n).filter(|&j| b.1[j].is_finite()).max_by(|&i, &k| b.1[i].abs().total_cmp(&b.1[k].abs()))?;
    let (ua, ub) = (a.1[j] / fa[j], b.1[j] / fb[j]);
    let slope = (ub - ua) / (b.0 - a.0);
    let k = -1.0 / slope;
    let t_star = b.0 + k * ub;
    let ahead = (t_star - b.0) * (b.0 - a.0) > 0.0;
    (k.is_finite() && k > 0.0 && t_star.is_finite() && ahead).then_some(BlowUp { state: j, t_star, exponent: k })
}

/// An event function that came close to zero without clearly crossing it.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Graze {
    /// Where `g` came closest to zero.
    pub t: f64,
    /// The closest approach `g` (signed), from a parabola through the samples.
    pub gap: f64,
    /// The scale of `g` over the run (its largest magnitude).
    pub scale: f64,
}

/// Local extrema of the event function samples `g` at `t` whose value lies
/// within `rel · max|g|` of zero: the event was touched, not crossed
/// cleanly. `crossing` picks the side that matters: a falling event is grazed
/// by a minimum, a rising one by a maximum, an either-way one by both.
pub fn grazes(t: &[f64], g: &[f64], crossing: Crossing, rel: f64) -> Vec<Graze> {
    let scale = g.iter().filter(|v| v.is_finite()).fold(0.0f64, |m, v| m.max(v.abs()));
    let mut out = Vec::new();
    if scale == 0.0 || t.len() < 3 {
        return out;
    }
    for i in 1..t.len() - 1 {
        let (g0, g1, g2) = (g[i - 1], g[i], g[i + 1]);
        let is_min = g1 <= g0 && g1 < g2 || g1 < g0 && g1 <= g2;
        let is_max = g1 >= g0 && g1 > g2 || g1 > g0 && g1 >= g2;
        let wanted = match crossing {
            Crossing::Falling => is_min,
            Crossing::Rising => is_max,
            Crossing::Either => is_min && g1 > 0.0 || is_max && g1 < 0.0,
        };
        if !wanted {
            continue;
        }
        // Vertex of the parabola through the three samples.
        let (t0, t1, t2) = (t[i - 1], t[i], t[i + 1]);
        let d1 = (g1 - g0) / (t1 - t0);
        let d2 = (g2 - g1) / (t2 - t1);
        let c = (d2 - d1) / (t2 - t0);
        let (tv, gv) = if c != 0.0 && c.is_finite() {
            let tv = (0.5 * (t0 + t1) - d1 / (2.0 * c)).clamp(t0.min(t2), t0.max(t2));
            (tv, g1 + (tv - t1) * (d1 + c * (tv - t0)))
        } else {
            (t1, g1)
        };
        if gv.abs() <= rel * scale {
            out.push(Graze { t: tv, gap: gv, scale });
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::problems::FnProblem;

    #[test]
    fn sqrt_at_zero_is_not_lipschitz_and_decay_is() {
        let mut p = FnProblem::new(&["y"], |_t, y: &[f64], dy: &mut [f64]| dy[0] = y[0].sqrt());
        let hit = lipschitz_at(&mut p, 0.0, &[0.0]).unwrap();
        // sqrt(δ)/δ = δ^(−1/2): 100, 1000, 10000 for δ = 1e-4, 1e-6, 1e-8 (analytic).
        assert!((hit.quotients[0] - 100.0).abs() < 1e-9 && (hit.quotients[2] - 1e4).abs() < 1e-6);
        assert!(lipschitz_at(&mut p, 0.0, &[1.0]).is_none());
        let mut q = FnProblem::new(&["y"], |_t, y: &[f64], dy: &mut [f64]| dy[0] = -2.0 * y[0].abs());
        assert!(lipschitz_at(&mut q, 0.0, &[0.0]).is_none());
    }

    #[test]
    fn blow_up_of_y_squared_is_at_one() {
        // y' = y², y(0) = 1: y = 1/(1 − t), infinite at t = 1 (analytic).
        let mut p = FnProblem::new(&["y"], |_t, y: &[f64], dy: &mut [f64]| dy[0] = y[0] * y[0]);
        let b = blow_up(&mut p, (0.9, &[10.0]), (0.99, &[100.0])).unwrap();
        assert!((b.t_star - 1.0).abs() < 1e-12 && (b.exponent - 1.0).abs() < 1e-12, "{b:?}");
        // y' = y grows only exponentially: u = 1, no blow-up.
        let mut e = FnProblem::new(&["y"], |_t, y: &[f64], dy: &mut [f64]| dy[0] = y[0]);
        assert!(blow_up(&mut e, (1.0, &[1f64.exp()]), (2.0, &[2f64.exp()])).is_none());
    }

    #[test]
    fn spectrum_of_a_rotation() {
        let mut p = FnProblem::new(&["x", "v"], |_t, y: &[f64], dy: &mut [f64]| {
            dy[0] = y[1];
            dy[1] = -4.0 * y[0];
        });
        let mut s = spectrum(&mut p, 0.0, &[1.0, 0.0]).unwrap();
        s.sort_by(|a, b| a.im.total_cmp(&b.im));
        // x'' = −4x: eigenvalues ±2i (analytic).
        assert!((s[0] - C64::new(0.0, -2.0)).norm() < 1e-6 && (s[1] - C64::new(0.0, 2.0)).norm() < 1e-6, "{s:?}");
    }

    #[test]
    fn a_touch_is_a_graze_and_a_crossing_is_not() {
        let t: Vec<f64> = (0..=100).map(|i| i as f64 * 0.1).collect();
        // g = cos t − 1 touches 0 at t = 2π from below (a rising event `cos t > 1`).
        let g: Vec<f64> = t.iter().map(|t| t.cos() - 1.0 - 1e-7).collect();
        let hits = grazes(&t, &g, Crossing::Rising, 1e-3);
        assert_eq!(hits.len(), 1);
        assert!((hits[0].t - 2.0 * std::f64::consts::PI).abs() < 0.01, "{hits:?}");
        // g = cos t − 0.5 crosses cleanly: its extremes are far from zero.
        let g: Vec<f64> = t.iter().map(|t| t.cos() - 0.5).collect();
        assert!(grazes(&t, &g, Crossing::Rising, 1e-3).is_empty());
        assert!(grazes(&t, &g, Crossing::Either, 1e-3).is_empty());
    }
}
