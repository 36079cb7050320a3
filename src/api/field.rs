//! The field view's numbers: the slope field of a one-state model, the
//! direction field and nullclines of a phase plane, and solution curves
//! started anywhere in the window, integrated forward and backward.
//!
//! The sampling works on any [`Problem`]; [`field_view`] compiles a sheet and
//! runs it.

use serde::{Deserialize, Serialize};

use super::compare::invalid;
use super::{ApiError, RunRequest};
use crate::problem::Problem;
use crate::solve;

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

/// The zero contour of `g` sampled on an `(m+1) × (m+1)` node grid over `w`
/// (row-major, `values[j*(m+1) + i]`), by marching squares, joined into
/// polylines separated by NaN pairs (so that a plot strokes a few long lines,
/// not one short segment per cell).
pub fn zero_contour(values: &[f64], w: &Window, m: usize) -> (Vec<f64>, Vec<f64>) {
    let (dx, dy) = ((w[1] - w[0]) / m as f64, (w[3] - w[2]) / m as f64);
    let node = |i: usize, j: usize| values[j * (m + 1) + i];
    let at = |i: usize, j: usize| (w[0] + i as f64 * dx, w[2] + j as f64 * dy);
    // Edges are numbered once for the whole grid: horizontal (i, j)–(i+1, j)
    // first, then vertical (i, j)–(i, j+1). Each edge's crossing is computed
    // once, from its lower node, so that neighbouring cells share it exactly.
    let horizontal = m * (m + 1);
    let h_edge = |i: usize, j: usize| j * m + i;
    let v_edge = |i: usize, j: usize| horizontal + j * (m + 1) + i;
    let crossing = |e: usize| -> (f64, f64) {
        let ((i0, j0), (i1, j1)) = if e < horizontal {
            let (i, j) = (e % m, e / m);
            ((i, j), (i + 1, j))
        } else {
            let (i, j) = ((e - horizontal) % (m + 1), (e - horizontal) / (m + 1));
            ((i, j), (i, j + 1))
        };
        let (a, b) = (node(i0, j0), node(i1, j1));
        let s = a / (a - b);
        let (pa, pb) = (at(i0, j0), at(i1, j1));
        (pa.0 + s * (pb.0 - pa.0), pa.1 + s * (pb.1 - pa.1))
    };
    // Segments of the contour as pairs of edges.
    let mut segments: Vec<[usize; 2]> = Vec::new();
    for j in 0..m {
        for i in 0..m {
            // Corners counter-clockwise from bottom-left; edge k joins corner k and k+1.
            let c = [node(i, j), node(i + 1, j), node(i + 1, j + 1), node(i, j + 1)];
            if c.iter().any(|v| !v.is_finite()) {
                continue;
            }
            let edges = [h_edge(i, j), v_edge(i + 1, j), h_edge(i, j + 1), v_edge(i, j)];
            let cross: Vec<usize> = (0..4).filter(|&k| (c[k] < 0.0) != (c[(k + 1) % 4] < 0.0)).map(|k| edges[k]).collect();
            match cross.len() {
                2 => segments.push([cross[0], cross[1]]),
                4 => {
                    // A saddle cell: pair the crossings by the sign at the centre.
                    let centre = c.iter().sum::<f64>() / 4.0;
                    if (centre < 0.0) == (c[0] < 0.0) {
                        segments.extend([[cross[0], cross[1]], [cross[2], cross[3]]]);
                    } else {
                        segments.extend([[cross[1], cross[2]], [cross[3], cross[0]]]);
                    }
                }
                _ => {}
            }
        }
    }
    let (mut xs, mut ys) = (Vec::new(), Vec::new());
    for chain in chains(&segments) {
        for e in chain {
            let p = crossing(e);
            xs.push(p.0);
            ys.push(p.1);
        }
        xs.push(f64::NAN);
        ys.push(f64::NAN);
    }
    (xs, ys)
}

/// Join segments that share an end (each end is shared by at most two) into
/// chains of ends: open chains first walked from a free end, then closed
/// loops, which repeat their first end at the close.
fn chains(segments: &[[usize; 2]]) -> Vec<Vec<usize>> {
    let mut at: std::collections::HashMap<usize, Vec<usize>> = std::collections::HashMap::new();
    for (k, s) in segments.iter().enumerate() {
        for &e in s {
            at.entry(e).or_default().push(k);
        }
    }
    let mut used = vec![false; segments.len()];
    let mut out = Vec::new();
    let walk = |first: usize, from: usize, used: &mut [bool]| {
        let mut chain = vec![from];
        let (mut seg, mut end) = (first, from);
        loop {
            used[seg] = true;
            let s = segments[seg];
            end = if s[0] == end { s[1] } else { s[0] };
            chain.push(end);
            match at[&end].iter().find(|&&k| !used[k]) {
                Some(&k) => seg = k,
                None => break,
            }
        }
        chain
    };
    // Open chains start where an end belongs to one segment only.
    let mut free: Vec<usize> = at.iter().filter(|(_, v)| v.len() == 1).map(|(&e, _)| e).collect();
    free.sort_unstable();
    for e in free {
        let k = at[&e][0];
        if !used[k] {
            out.push(walk(k, e, &mut used));
        }
    }
    for k in 0..segments.len() {
        if !used[k] {
            out.push(walk(k, segments[k][0], &mut used));
        }
    }
    out
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

/// Most steps a curve of the field view may take each way.
pub const CURVE_STEP_CAP: u64 = 20_000;

/// A usable window: finite and of positive size, else `None`.
fn valid(w: Window) -> Option<Window> {
    (w.iter().all(|v| v.is_finite()) && w[1] > w[0] && w[3] > w[2]).then_some(w)
}

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
fn curve(model: &mut dyn Problem, t: f64, y: &[f64], to: f64, tol: solve::Tolerance) -> solve::Run {
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
fn join(back: &solve::Run, fwd: &solve::Run, ix: Option<usize>, iy: usize) -> Polyline {
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

/// The field view of `sheet` under `base` (its end and tolerances): the
/// slope field for one state, else the phase plane of the two chosen states
/// with nullclines; plus a curve through each requested start, forward and
/// backward within the window.
pub fn field_view(sheet: &str, base: &RunRequest, req: &FieldRequest) -> Result<FieldReport, ApiError> {
    let model = super::model(sheet, base)?;
    let t0 = model.t0();
    let y0 = model.initial_state().to_vec();
    let to = base.to.filter(|v| v.is_finite()).ok_or_else(|| invalid("to", "the end of the run must be a finite number"))?;
    let names: Vec<String> = model.state_names().to_vec();
    let independent = model.independent().to_string();
    // In the page the formulas run as an emitted wasm module (as in `solve`);
    // elsewhere on the interpreter, with identical results.
    let mut model = crate::emit::EmittedModel::new(model);
    // Curves are drawn, not tabulated: a few digits beyond the pixels do.
    let tol = solve::Tolerance {
        relative: base.tolerance.relative.filter(|v| *v > 0.0).unwrap_or(1e-6).max(1e-5),
        absolute: base.tolerance.absolute.filter(|v| *v > 0.0).unwrap_or(1e-9).max(1e-8),
    };
    let cells = req.cells.unwrap_or(24).clamp(2, 80);
    let index = |name: &Option<String>, default: usize| -> Result<usize, ApiError> {
        match name {
            None => Ok(default),
            Some(n) => names
                .iter()
                .position(|s| s == n)
                .ok_or_else(|| invalid("field", format!("the sheet has no state named `{n}`"))),
        }
    };
    if names.len() == 1 {
        // The run itself is needed only to frame the window.
        let w = req.window.and_then(valid).unwrap_or_else(|| {
            let main = curve(&mut model, t0, &y0, to, tol);
            let mut w = auto_window(&main.t, &main.states[0]);
            (w[0], w[1]) = (t0.min(to), t0.max(to));
            w
        });
        let field = slope_samples(&mut model, &w, cells);
        let mut curves = Vec::new();
        for s in &req.starts {
            let back = curve(&mut model, s[0], &[s[1]], w[0], tol);
            let fwd = curve(&mut model, s[0], &[s[1]], w[1], tol);
            curves.push(join(&back, &fwd, None, 0));
        }
        return Ok(FieldReport {
            kind: "slope",
            x_label: independent.clone(),
            y_label: names[0].clone(),
            window: w,
            field,
            nullclines: vec![],
            curves,
            note: format!("Slope field of {}' over ({}, {}).", names[0], independent, names[0]),
        });
    }
    let ix = index(&req.x, 0)?;
    let iy = index(&req.y, 1)?;
    if ix == iy {
        return Err(invalid("field", "pick two different states for the phase plane"));
    }
    let w = req.window.and_then(valid).unwrap_or_else(|| {
        let main = curve(&mut model, t0, &y0, to, tol);
        auto_window(&main.states[ix], &main.states[iy])
    });
    let plane = Plane { t: t0, base: y0.clone(), ix, iy };
    let field = phase_samples(&mut model, &plane, &w, cells);
    let nulls = nullclines(&mut model, &plane, &w, 48, (&names[ix], &names[iy]));
    let span = to - t0;
    let mut curves = Vec::new();
    for s in &req.starts {
        let mut y = y0.clone();
        y[ix] = s[0];
        y[iy] = s[1];
        let back = curve(&mut model, t0, &y, t0 - span, tol);
        let fwd = curve(&mut model, t0, &y, to, tol);
        curves.push(join(&back, &fwd, Some(ix), iy));
    }
    let others: Vec<String> = (0..names.len())
        .filter(|&i| i != ix && i != iy)
        .map(|i| format!("{} = {}", names[i], crate::draw::tick_label(y0[i])))
        .collect();
    let mut note = format!("Phase plane of {} and {}: arrows show the direction of motion", names[ix], names[iy]);
    if !others.is_empty() {
        note.push_str(&format!("; the other states are held at their start values ({})", others.join(", ")));
    }
    note.push('.');
    Ok(FieldReport {
        kind: "phase",
        x_label: names[ix].clone(),
        y_label: names[iy].clone(),
        window: w,
        field,
        nullclines: nulls.to_vec(),
        curves,
        note,
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::problems::FnProblem;

    const W: Window = [-2.0, 2.0, -1.0, 3.0];

    const GRAZERS: &str = "r = 0.9\na = 0.06\nconv = 0.25\nm = 0.4\ndb/dt = r*b - a*b*p\ndp/dt = conv*a*b*p - m*p\nb(0) = 30\np(0) = 8\n";

    #[test]
    fn phase_plane_of_a_two_state_sheet_has_arrows_nullclines_and_curves() {
        let base = RunRequest { to: Some(60.0), ..Default::default() };
        let req = FieldRequest { cells: Some(10), starts: vec![[20.0, 10.0]], ..Default::default() };
        let rep = field_view(GRAZERS, &base, &req).unwrap();
        assert_eq!((rep.kind, rep.x_label.as_str(), rep.y_label.as_str()), ("phase", "b", "p"));
        assert_eq!(rep.field.len(), 4 * 100);
        // The window frames the orbit through (30, 8).
        assert!(rep.window[0] < 30.0 && rep.window[1] > 30.0 && rep.window[2] < 8.0 && rep.window[3] > 8.0);
        // Nullclines (analytic): b' = 0 on p = r/a = 15 (and b = 0); p' = 0 on b = m/(conv·a) = 26.67 (and p = 0).
        let [nb, np] = [&rep.nullclines[0], &rep.nullclines[1]];
        assert_eq!(nb.label, "b' = 0");
        assert!(nb.y.iter().filter(|v| v.is_finite()).all(|&p| (p - 15.0).abs() < 1e-9 || p.abs() < 1e-9));
        assert!(np.x.iter().filter(|v| v.is_finite()).all(|&b| (b - 0.4 / 0.015).abs() < 1e-9 || b.abs() < 1e-9));
        // The added curve passes through its start and stays on a closed orbit:
        // the conserved quantity conv·b - m·ln b + a·p - r·ln p (analytic first integral) holds along it.
        let c = &rep.curves[0];
        assert!(c.x.len() > 20);
        let v = |b: f64, p: f64| 0.25 * 0.06 * b - 0.4 * b.ln() + 0.06 * p - 0.9 * p.ln();
        let v0 = v(20.0, 10.0);
        assert!(c.x.iter().zip(&c.y).all(|(&b, &p)| (v(b, p) - v0).abs() < 1e-4));
        assert!(c.x.iter().zip(&c.y).any(|(&b, &p)| b == 20.0 && p == 10.0));
    }

    #[test]
    fn slope_field_of_a_one_state_sheet_spans_the_run() {
        let base = RunRequest { to: Some(1200.0), ..Default::default() };
        let req = FieldRequest { starts: vec![[600.0, 150.0]], ..Default::default() };
        let rep = field_view("T' = -0.0021*(T - 22)\nT(0) = 180\n", &base, &req).unwrap();
        assert_eq!(rep.kind, "slope");
        assert_eq!((rep.window[0], rep.window[1]), (0.0, 1200.0));
        assert!(rep.window[2] < 34.7 && rep.window[3] > 180.0);
        assert_eq!(rep.field.len(), 4 * 24 * 24);
        // The curve through (600, 150) follows T = 22 + 128·exp(-0.0021 (t - 600)) (analytic), both ways.
        let c = &rep.curves[0];
        assert_eq!((c.x[0], *c.x.last().unwrap()), (0.0, 1200.0));
        for (&t, &y) in c.x.iter().zip(&c.y) {
            let exact = 22.0 + 128.0 * (-0.0021 * (t - 600.0)).exp();
            assert!((y - exact).abs() < 1e-4 * exact, "{t}: {y} vs {exact}");
        }
    }

    #[test]
    fn field_view_errors_are_typed() {
        let base = RunRequest { to: Some(1.0), ..Default::default() };
        assert!(matches!(field_view("x' = y +\n", &base, &FieldRequest::default()), Err(ApiError::Sheet(_))));
        let same = FieldRequest { x: Some("b".into()), y: Some("b".into()), ..Default::default() };
        assert!(matches!(field_view(GRAZERS, &base, &same), Err(ApiError::Settings(_))));
        let unknown = FieldRequest { x: Some("q".into()), ..Default::default() };
        assert!(matches!(field_view(GRAZERS, &base, &unknown), Err(ApiError::Settings(_))));
    }

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
        // One closed loop: a single piece whose last point is its first.
        assert_eq!(xs.iter().filter(|v| v.is_nan()).count(), 1);
        assert_eq!((xs[0], ys[0]), (xs[xs.len() - 2], ys[ys.len() - 2]));
        assert!(r.iter().all(|r| (r - 1.0).abs() < 0.01), "{r:?}");
    }
}
