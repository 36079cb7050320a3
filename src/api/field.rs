//! The field view's request and report for the JS API: the slope field of a
//! one-state model, the direction field and nullclines of a phase plane, and
//! solution curves started anywhere in the window. The numbers come from
//! [`crate::field`]; [`field_view`] compiles a sheet and asks for them.

use serde::{Deserialize, Serialize};

use super::compare::invalid;
use super::{ApiError, RunRequest};
use crate::field::{auto_window, join, nullclines, phase_samples, slope_samples, trajectory, Plane, Polyline, Window};
use crate::problem::Problem;
use crate::solve;

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

/// A usable window: finite and of positive size, else `None`.
fn valid(w: Window) -> Option<Window> {
    (w.iter().all(|v| v.is_finite()) && w[1] > w[0] && w[3] > w[2]).then_some(w)
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
            let main = trajectory(&mut model, t0, &y0, to, tol);
            let mut w = auto_window(&main.t, &main.states[0]);
            (w[0], w[1]) = (t0.min(to), t0.max(to));
            w
        });
        let field = slope_samples(&mut model, &w, cells);
        let mut curves = Vec::new();
        for s in &req.starts {
            let back = trajectory(&mut model, s[0], &[s[1]], w[0], tol);
            let fwd = trajectory(&mut model, s[0], &[s[1]], w[1], tol);
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
        let main = trajectory(&mut model, t0, &y0, to, tol);
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
        let back = trajectory(&mut model, t0, &y, t0 - span, tol);
        let fwd = trajectory(&mut model, t0, &y, to, tol);
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
}
