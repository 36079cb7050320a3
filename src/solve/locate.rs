//! Locating crossings and turning points inside a step, on the dense output.
//!
//! Everything here works on a scalar function of `t` given as a closure and is
//! bounded: a fixed cap on iterations, whatever the function does.

/// Iteration cap of [`bracketed_root`] and [`golden_max`].
pub const MAX_ITER: usize = 200;

/// A root of `g` in the bracket `[a, b]` where `g(a)` and `g(b)` have opposite
/// signs (`ga = g(a)`, `gb = g(b)`), by the Illinois variant of regula falsi
/// (M. Dowell, P. Jarratt, "A modified regula falsi method for computing the
/// root of an equation", *BIT* 11 (1971) 168–174), with a bisection whenever
/// the bracket fails to halve in three steps. Stops when the bracket is at
/// most 4 ulps of `t` wide, or `g` is exactly zero.
///
/// Returns `(t_old_side, t_new_side)`: the final bracket ends on the side of
/// `a`'s sign and on the side of `b`'s sign, so that a caller can step just
/// across the crossing.
pub fn bracketed_root(mut g: impl FnMut(f64) -> f64, a: f64, b: f64, ga: f64, gb: f64) -> (f64, f64) {
    let (mut a, mut b, mut ga, mut gb) = (a, b, ga, gb);
    if ga == 0.0 {
        return (a, a);
    }
    if gb == 0.0 {
        return (b, b);
    }
    let mut side = 0i8;
    let mut width = (b - a).abs();
    let mut stall = 0;
    for _ in 0..MAX_ITER {
        let tol = 4.0 * f64::EPSILON * a.abs().max(b.abs()).max(f64::MIN_POSITIVE);
        if (b - a).abs() <= tol {
            break;
        }
        let mut m = (a * gb - b * ga) / (gb - ga);
        if stall >= 3 || !m.is_finite() || (m - a) * (m - b) > 0.0 || m == a || m == b {
            m = 0.5 * (a + b);
            stall = 0;
        }
        let gm = g(m);
        if gm == 0.0 || !gm.is_finite() {
            if gm == 0.0 {
                return (m, m);
            }
            // A non-finite value inside: shrink towards a by bisection.
            b = m;
            continue;
        }
        if (gm > 0.0) == (ga > 0.0) {
            a = m;
            ga = gm;
            if side == -1 {
                gb *= 0.5;
            }
            side = -1;
        } else {
            b = m;
            gb = gm;
            if side == 1 {
                ga *= 0.5;
            }
            side = 1;
        }
        let w = (b - a).abs();
        if w > 0.5 * width {
            stall += 1;
        } else {
            stall = 0;
            width = w;
        }
    }
    (a, b)
}

/// The maximum of a unimodal `f` on `[a, b]` by golden-section search, to a
/// relative width of about 1e-10 of the bracket (the value at a maximum is
/// flat, so this is far below the value's error). Returns `(t, f(t))`.
pub fn golden_max(mut f: impl FnMut(f64) -> f64, a: f64, b: f64) -> (f64, f64) {
    let r = 0.5 * (5f64.sqrt() - 1.0);
    let (mut a, mut b) = (a, b);
    let mut x1 = b - r * (b - a);
    let mut x2 = a + r * (b - a);
    let mut f1 = f(x1);
    let mut f2 = f(x2);
    let w0 = (b - a).abs();
    for _ in 0..MAX_ITER {
        if (b - a).abs() <= 1e-10 * w0 {
            break;
        }
        if f1 < f2 {
            a = x1;
            x1 = x2;
            f1 = f2;
            x2 = a + r * (b - a);
            f2 = f(x2);
        } else {
            b = x2;
            x2 = x1;
            f2 = f1;
            x1 = b - r * (b - a);
            f1 = f(x1);
        }
    }
    if f1 >= f2 {
        (x1, f1)
    } else {
        (x2, f2)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn illinois_finds_cube_root_of_two_to_ulps() {
        // Analytic: the root of t³ − 2 is 2^(1/3).
        let g = |t: f64| t * t * t - 2.0;
        let (a, b) = bracketed_root(g, 1.0, 2.0, g(1.0), g(2.0));
        let exact = 2f64.cbrt();
        assert!((a - exact).abs() <= 4.0 * f64::EPSILON * exact, "{a} {exact}");
        assert!((b - exact).abs() <= 4.0 * f64::EPSILON * exact);
        assert!(g(a) < 0.0 || g(a) == 0.0);
    }

    #[test]
    fn golden_finds_peak_of_parabola() {
        // Analytic: 1 − (t − 0.3)² peaks at t = 0.3.
        let (t, v) = golden_max(|t| 1.0 - (t - 0.3) * (t - 0.3), 0.0, 1.0);
        assert!((t - 0.3).abs() < 1e-8);
        assert!((v - 1.0).abs() < 1e-15);
    }
}
