//! Linear stability: the stability polynomial of an explicit method, its
//! stability region along a ray, and the dominant eigenvalue of the Jacobian
//! by power iteration. Used to warn about unstable fixed steps and to set the
//! threshold of the stiffness test.

use super::stepper::Stats;
use crate::problem::Problem;

/// `|R(z)|` for `R(z) = 1 + Σ_k g[k-1] z^k` at the complex `z = (re, im)`.
pub fn amplification(g: &[f64], re: f64, im: f64) -> f64 {
    // Horner on the complex argument.
    let (mut pr, mut pi) = (0.0, 0.0);
    for &c in g.iter().rev() {
        let (nr, ni) = (pr * re - pi * im + c, pr * im + pi * re);
        pr = nr;
        pi = ni;
    }
    let (r, i) = (1.0 + pr * re - pi * im, pr * im + pi * re);
    (r * r + i * i).sqrt()
}

/// The distance `r` from the origin to the edge of the stability region
/// `|R(z)| ≤ 1` along the ray `z = r·e^(iφ)` (the first exit). 0 when the ray
/// leaves the region at once (e.g. Euler on the imaginary axis).
pub fn boundary_radius(g: &[f64], phi: f64) -> f64 {
    let (c, s) = (phi.cos(), phi.sin());
    let inside = |r: f64| amplification(g, r * c, r * s) <= 1.0 + 1e-12;
    let dr = 1e-2;
    let mut r = dr;
    while r < 100.0 {
        if !inside(r) {
            break;
        }
        r += dr;
    }
    if r >= 100.0 {
        return 100.0;
    }
    let (mut lo, mut hi) = (r - dr, r);
    if lo <= 0.0 {
        // Out already at the first probe: look closer to the origin.
        lo = 0.0;
        let mut probe = dr;
        while probe > 1e-9 && !inside(probe) {
            probe *= 0.5;
        }
        if probe <= 1e-9 {
            return 0.0;
        }
        lo = lo.max(probe);
    }
    for _ in 0..60 {
        let m = 0.5 * (lo + hi);
        if inside(m) {
            lo = m;
        } else {
            hi = m;
        }
    }
    lo
}

/// The Jacobian `∂f/∂y` at `(t, y)`: exact when the problem gives one, else by
/// forward differences (`dim + 1` evaluations of `f`, counted in `stats`).
pub fn jacobian(problem: &mut dyn Problem, t: f64, y: &[f64], stats: &mut Stats) -> Vec<f64> {
    let n = y.len();
    let mut jac = vec![0.0; n * n];
    stats.jacobians += 1;
    if problem.jacobian(t, y, &mut jac) {
        return jac;
    }
    let mut f0 = vec![0.0; n];
    problem.rhs(t, y, &mut f0);
    stats.rhs_evals += 1;
    let mut yp = y.to_vec();
    let mut f1 = vec![0.0; n];
    for j in 0..n {
        let d = f64::EPSILON.sqrt() * y[j].abs().max(1e-5);
        yp[j] = y[j] + d;
        problem.rhs(t, &yp, &mut f1);
        stats.rhs_evals += 1;
        let dd = yp[j] - y[j];
        for i in 0..n {
            jac[i * n + j] = (f1[i] - f0[i]) / dd;
        }
        yp[j] = y[j];
    }
    jac
}

fn matvec(j: &[f64], x: &[f64], out: &mut [f64]) {
    let n = x.len();
    for (i, o) in out.iter_mut().enumerate() {
        *o = j[i * n..(i + 1) * n].iter().zip(x).map(|(a, b)| a * b).sum();
    }
}

fn dot(a: &[f64], b: &[f64]) -> f64 {
    a.iter().zip(b).map(|(x, y)| x * y).sum()
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
    for _ in 0..80 {
        matvec(j, &u, &mut v);
        let nv = dot(&v, &v).sqrt();
        if nv == 0.0 || !nv.is_finite() {
            return if nv == 0.0 { Some((0.0, 0.0)) } else { None };
        }
        u.iter_mut().zip(&v).for_each(|(a, b)| *a = b / nv);
    }
    matvec(j, &u, &mut v);
    matvec(j, &v, &mut w);
    // Least squares for w ≈ p v + q u.
    let (vv, vu, uu, wv, wu) = (dot(&v, &v), dot(&v, &u), dot(&u, &u), dot(&w, &v), dot(&w, &u));
    let det = vv * uu - vu * vu;
    let real = || {
        let l = vu / uu;
        Some((l, 0.0))
    };
    if det.abs() <= 1e-10 * vv * uu {
        return real();
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

#[cfg(test)]
mod tests {
    use super::*;
    use crate::solve::tableau::{EULER, RK4};

    #[test]
    fn rk4_real_boundary() {
        // RK4's real stability interval ends at about -2.785 (Hairer & Wanner,
        // Solving ODEs II, Sec. IV.2, Fig. 2.1; value from memory).
        let r = boundary_radius(&RK4.stability_polynomial(), std::f64::consts::PI);
        assert!((r - 2.785).abs() < 1e-3, "{r}");
        // Euler: the disc |1 + z| ≤ 1 meets the negative real axis at -2 (analytic).
        let r = boundary_radius(&EULER.stability_polynomial(), std::f64::consts::PI);
        assert!((r - 2.0).abs() < 1e-9, "{r}");
        // Euler is unstable on the imaginary axis (analytic: |1 + iy| > 1).
        assert!(boundary_radius(&EULER.stability_polynomial(), 0.5 * std::f64::consts::PI) < 1e-5);
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
}
