//! The field view's numbers: the slope field of a one-state model, the
//! direction field and nullclines of a phase plane, and solution curves
//! started anywhere in the window, integrated forward and backward.
//!
//! The sampling works on any [`Problem`]; [`field_view`] compiles a sheet and
//! runs it.

use serde::{Deserialize, Serialize};

use crate::problem::Problem;

/// A window of the field view: `[x0, x1, y0, y1]` in data units.
pub type Window = [f64; 4];

/// Grid sample points: the centres of an `n × n` grid of cells over `w`.
fn cell_centres(w: &Window, n: usize) -> impl Iterator<Item = (f64, f64)> + '_ {
    let n = n.max(1);
    let (dx, dy) = ((w[1] - w[0]) / n as f64, (w[3] - w[2]) / n as f64);
    (0..n).flat_map(move |j| (0..n).map(move |i| (w[0] + (i as f64 + 0.5) * dx, w[2] + (j as f64 + 0.5) * dy)))
}

/// Slope field of a one-state model `y' = f(t, y)`: flat `[t, y, 1, f, …]`
/// over an `n × n` grid of `w` (x is the independent variable).
pub fn slope_samples(p: &mut dyn Problem, w: &Window, n: usize) -> Vec<f64> {
    let mut out = Vec::with_capacity(4 * n * n);
    let mut y = vec![0.0; p.dim()];
    let mut dy = vec![0.0; p.dim()];
    for (t, v) in cell_centres(w, n) {
        y[0] = v;
        p.rhs(t, &y, &mut dy);
        out.extend_from_slice(&[t, v, 1.0, dy[0]]);
    }
    out
}

/// The plane through `base` in which states `ix` and `iy` vary.
#[derive(Clone, Debug)]
pub struct Plane {
    /// Time at which the rates are taken (the start, for a model that depends on time).
    pub t: f64,
    /// The other states' values (all `dim` of them; `ix` and `iy` are overwritten).
    pub base: Vec<f64>,
    /// State shown across.
    pub ix: usize,
    /// State shown up.
    pub iy: usize,
}

impl Plane {
    fn rates(&self, p: &mut dyn Problem, x: f64, y: f64, state: &mut [f64], dy: &mut [f64]) -> (f64, f64) {
        state.copy_from_slice(&self.base);
        state[self.ix] = x;
        state[self.iy] = y;
        p.rhs(self.t, state, dy);
        (dy[self.ix], dy[self.iy])
    }
}

/// Direction field of a phase plane: flat `[x, y, x', y', …]` over an
/// `n × n` grid of `w`.
pub fn phase_samples(p: &mut dyn Problem, plane: &Plane, w: &Window, n: usize) -> Vec<f64> {
    let mut out = Vec::with_capacity(4 * n * n);
    let mut state = vec![0.0; p.dim()];
    let mut dy = vec![0.0; p.dim()];
    for (x, y) in cell_centres(w, n) {
        let (fx, fy) = plane.rates(p, x, y, &mut state, &mut dy);
        out.extend_from_slice(&[x, y, fx, fy]);
    }
    out
}

/// A polyline; NaN pairs separate pieces.
#[derive(Clone, Debug, Default, PartialEq, Serialize)]
pub struct Polyline {
    /// Label (e.g. `x' = 0`); empty for none.
    pub label: String,
    /// Abscissae.
    pub x: Vec<f64>,
    /// Ordinates.
    pub y: Vec<f64>,
}

/// The zero contour of `g` sampled on an `(m+1) × (m+1)` node grid over `w`,
/// by marching squares, as NaN-separated segments.
pub fn zero_contour(values: &[f64], w: &Window, m: usize) -> (Vec<f64>, Vec<f64>) {
    let (dx, dy) = ((w[1] - w[0]) / m as f64, (w[3] - w[2]) / m as f64);
    let node = |i: usize, j: usize| values[j * (m + 1) + i];
    let (mut xs, mut ys) = (Vec::new(), Vec::new());
    let mut seg = |a: (f64, f64), b: (f64, f64)| {
        xs.extend_from_slice(&[a.0, b.0, f64::NAN]);
        ys.extend_from_slice(&[a.1, b.1, f64::NAN]);
    };
    for j in 0..m {
        for i in 0..m {
            // Corners counter-clockwise from bottom-left.
            let c = [node(i, j), node(i + 1, j), node(i + 1, j + 1), node(i, j + 1)];
            if c.iter().any(|v| !v.is_finite()) {
                continue;
            }
            let pos = [(i, j), (i + 1, j), (i + 1, j + 1), (i, j + 1)]
                .map(|(a, b)| (w[0] + a as f64 * dx, w[2] + b as f64 * dy));
            // Crossing points on the four edges (edge k joins corner k and k+1).
            let mut cross: Vec<(usize, (f64, f64))> = Vec::with_capacity(4);
            for k in 0..4 {
                let (a, b) = (c[k], c[(k + 1) % 4]);
                if (a < 0.0) != (b < 0.0) {
                    let s = a / (a - b);
                    let (pa, pb) = (pos[k], pos[(k + 1) % 4]);
                    cross.push((k, (pa.0 + s * (pb.0 - pa.0), pa.1 + s * (pb.1 - pa.1))));
                }
            }
            match cross.len() {
                2 => seg(cross[0].1, cross[1].1),
                4 => {
                    // A saddle cell: pair the crossings by the sign at the centre.
                    let centre = c.iter().sum::<f64>() / 4.0;
                    if (centre < 0.0) == (c[0] < 0.0) {
                        seg(cross[0].1, cross[1].1);
                        seg(cross[2].1, cross[3].1);
                    } else {
                        seg(cross[1].1, cross[2].1);
                        seg(cross[3].1, cross[0].1);
                    }
                }
                _ => {}
            }
        }
    }
    (xs, ys)
}

/// The nullclines of a phase plane: where `x' = 0` and where `y' = 0`, on an
/// `m × m` cell grid over `w`.
pub fn nullclines(p: &mut dyn Problem, plane: &Plane, w: &Window, m: usize, names: (&str, &str)) -> [Polyline; 2] {
    let m = m.max(2);
    let mut fx = Vec::with_capacity((m + 1) * (m + 1));
    let mut fy = Vec::with_capacity((m + 1) * (m + 1));
    let mut state = vec![0.0; p.dim()];
    let mut dy = vec![0.0; p.dim()];
    for j in 0..=m {
        for i in 0..=m {
            let x = w[0] + (w[1] - w[0]) * i as f64 / m as f64;
            let y = w[2] + (w[3] - w[2]) * j as f64 / m as f64;
            let (a, b) = plane.rates(p, x, y, &mut state, &mut dy);
            fx.push(a);
            fy.push(b);
        }
    }
    let (ax, ay) = zero_contour(&fx, w, m);
    let (bx, by) = zero_contour(&fy, w, m);
    [
        Polyline { label: format!("{}' = 0", names.0), x: ax, y: ay },
        Polyline { label: format!("{}' = 0", names.1), x: bx, y: by },
    ]
}

/// What the field view asks for.
#[derive(Clone, Debug, Default, Deserialize)]
#[serde(rename_all = "camelCase", default)]
pub struct FieldRequest {
    /// State shown across (phase plane); the first state when absent.
    pub x: Option<String>,
    /// State shown up (phase plane); the second state when absent.
    pub y: Option<String>,
    /// The window `[x0, x1, y0, y1]`.
    pub window: Option<Window>,
    /// Grid cells per side for the direction field (default 24; 2 to 80).
    pub cells: Option<usize>,
    /// Starting points of added curves, in the window's coordinates.
    pub starts: Vec<[f64; 2]>,
}

/// The field view's numbers.
#[derive(Clone, Debug, Default, Serialize)]
#[serde(rename_all = "camelCase")]
pub struct FieldReport {
    /// `slope` (one state against the independent variable) or `phase`.
    pub kind: &'static str,
    /// Axis names.
    pub x_label: String,
    /// Axis names.
    pub y_label: String,
    /// The window used.
    pub window: Window,
    /// Flat `[x, y, dx, dy, …]` direction samples.
    pub field: Vec<f64>,
    /// Nullclines (phase plane only).
    pub nullclines: Vec<Polyline>,
    /// Curves through the requested starting points, forward and backward.
    pub curves: Vec<Polyline>,
    /// A note for the page, e.g. which values the other states are held at.
    pub note: String,
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::problems::FnProblem;

    const W: Window = [-2.0, 2.0, -1.0, 3.0];

    #[test]
    fn slope_samples_carry_the_rate_at_each_cell_centre() {
        // y' = t - y
        let mut p = FnProblem::new(&["y"], |t, y, dy| dy[0] = t - y[0]);
        let s = slope_samples(&mut p, &W, 4);
        assert_eq!(s.len(), 4 * 16);
        for c in s.chunks(4) {
            assert!(c[0] > W[0] && c[0] < W[1] && c[1] > W[2] && c[1] < W[3]);
            assert_eq!(c[2], 1.0);
            assert_eq!(c[3], c[0] - c[1]);
        }
    }

    #[test]
    fn nullclines_of_a_linear_system_lie_on_their_lines() {
        // x' = y - x (zero on y = x), y' = 1 - y (zero on y = 1).
        let mut p = FnProblem::new(&["x", "y"], |_, y, dy| {
            dy[0] = y[1] - y[0];
            dy[1] = 1.0 - y[1];
        });
        let plane = Plane { t: 0.0, base: vec![0.0, 0.0], ix: 0, iy: 1 };
        let [a, b] = nullclines(&mut p, &plane, &W, 40, ("x", "y"));
        assert_eq!(a.label, "x' = 0");
        assert_eq!(b.label, "y' = 0");
        let pts = |l: &Polyline| l.x.iter().zip(&l.y).filter(|(x, _)| x.is_finite()).map(|(&x, &y)| (x, y)).collect::<Vec<_>>();
        let pa = pts(&a);
        let pb = pts(&b);
        assert!(pa.len() > 40 && pb.len() > 40);
        // Linear interpolation is exact for linear functions.
        assert!(pa.iter().all(|(x, y)| (x - y).abs() < 1e-12));
        assert!(pb.iter().all(|(_, y)| (y - 1.0).abs() < 1e-12));
        let f = phase_samples(&mut p, &plane, &W, 5);
        assert_eq!(f.len(), 100);
        assert!(f.chunks(4).all(|c| c[2] == c[1] - c[0] && c[3] == 1.0 - c[1]));
    }

    #[test]
    fn a_circle_contour_is_closed_and_near_the_circle() {
        // g = x² + y² - 1 on [-2,2]²: every crossing within a cell's error of r = 1.
        let m = 60;
        let w = [-2.0, 2.0, -2.0, 2.0];
        let mut v = Vec::new();
        for j in 0..=m {
            for i in 0..=m {
                let (x, y) = (-2.0 + 4.0 * i as f64 / m as f64, -2.0 + 4.0 * j as f64 / m as f64);
                v.push(x * x + y * y - 1.0);
            }
        }
        let (xs, ys) = zero_contour(&v, &w, m);
        let r: Vec<f64> = xs.iter().zip(&ys).filter(|(x, _)| x.is_finite()).map(|(x, y)| x.hypot(*y)).collect();
        assert!(r.len() > 100);
        assert!(r.iter().all(|r| (r - 1.0).abs() < 0.01), "{r:?}");
    }
}
