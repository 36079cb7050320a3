//! Fields of a model over a window: the slope field of a one-state model,
//! the direction field and nullclines of a phase plane, and solution curves
//! started anywhere in the window, integrated forward and backward.
//!
//! Everything works on any [`Problem`]; `api::field` turns a sheet and the
//! page's request into a call of these and a report.
//!
//! - [`contour`]: zero contours by marching squares, joined into polylines.

pub mod contour;

use serde::Serialize;

use crate::problem::Problem;
use crate::solve;

pub use contour::zero_contour;

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

/// Most steps a curve of the field view may take each way.
pub const CURVE_STEP_CAP: u64 = 20_000;

/// Grow `[lo, hi]` by `pad` of its length, or to a unit-scale range when it is a point.
fn padded(lo: f64, hi: f64, pad: f64) -> (f64, f64) {
    if !(lo.is_finite() && hi.is_finite()) {
        return (-1.0, 1.0);
    }
    let span = hi - lo;
    if span <= 1e-12 * hi.abs().max(lo.abs()).max(1e-300) {
        let d = hi.abs().max(1.0) * 0.5;
        return (lo - d, hi + d);
    }
    (lo - pad * span, hi + pad * span)
}

/// The window that frames a run's trajectory (padded), for the field view's
/// auto-range.
pub fn auto_window(x: &[f64], y: &[f64]) -> Window {
    let range = |v: &[f64]| {
        v.iter().filter(|a| a.is_finite()).fold((f64::INFINITY, f64::NEG_INFINITY), |(lo, hi), &a| (lo.min(a), hi.max(a)))
    };
    let (x0, x1) = range(x);
    let (y0, y1) = range(y);
    let (x0, x1) = padded(x0, x1, 0.08);
    let (y0, y1) = padded(y0, y1, 0.12);
    [x0, x1, y0, y1]
}

/// Run `model` from `(t, y)` to `to` with the default adaptive method (it
/// switches to a stiff one where needed) and a step cap; the trajectory as
/// far as it got (a failed run keeps its partial result).
pub fn trajectory(model: &mut dyn Problem, t: f64, y: &[f64], to: f64, tol: solve::Tolerance) -> solve::Run {
    let settings = solve::Settings {
        method: "auto".into(),
        to,
        tol,
        max_steps: CURVE_STEP_CAP,
        extrema: false,
        max_events: 0,
        ..Default::default()
    };
    match solve::solve(model, t, y, &settings) {
        Ok(run) => run,
        Err(_) => solve::Run {
            t: vec![],
            states: vec![vec![]; y.len()],
            helpers: vec![],
            events: vec![],
            extrema: vec![],
            diagnostics: vec![],
            status: solve::Status::Finished,
            stats: Default::default(),
        },
    }
}

/// Join a backward and a forward run through one point into one polyline of
/// the two shown coordinates (`None` = the independent variable).
pub fn join(back: &solve::Run, fwd: &solve::Run, ix: Option<usize>, iy: usize) -> Polyline {
    let coord = |r: &solve::Run, k: usize, i: Option<usize>| match i {
        None => r.t[k],
        Some(i) => r.states[i][k],
    };
    let mut line = Polyline::default();
    for k in (0..back.t.len()).rev() {
        line.x.push(coord(back, k, ix));
        line.y.push(coord(back, k, Some(iy)));
    }
    for k in 1.min(fwd.t.len())..fwd.t.len() {
        line.x.push(coord(fwd, k, ix));
        line.y.push(coord(fwd, k, Some(iy)));
    }
    line
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
        // Each is one polyline across the window, not a segment per cell.
        assert_eq!(a.x.iter().filter(|v| v.is_nan()).count(), 1);
        assert_eq!(b.x.iter().filter(|v| v.is_nan()).count(), 1);
        assert!(pb.iter().all(|(_, y)| (y - 1.0).abs() < 1e-12));
        let f = phase_samples(&mut p, &plane, &W, 5);
        assert_eq!(f.len(), 100);
        assert!(f.chunks(4).all(|c| c[2] == c[1] - c[0] && c[3] == 1.0 - c[1]));
    }
}
