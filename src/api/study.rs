//! The accuracy study's request and report for the JS API:
//! `checkAccuracy(sheet, settings)`, `convergenceStudy(sheet, settings)` and
//! the stability picture of a method.
//!
//! The settings are those of `solve` ([`RunRequest`]) plus a few fields of
//! the study ([`StudyRequest`]).

use serde::{Deserialize, Serialize};

use super::compare::invalid;
use super::{ApiError, RunRequest};
use crate::problem::Problem;
use crate::sheet::Model;
use crate::solve::{self, Settings, SolveError};
use crate::study::check::{self, Options, Report};
use crate::study::pitfalls::function_for;
use crate::study::stability::C64;
use crate::study::sweep::{self, Sweep};

/// Settings of an accuracy check or a convergence study.
#[derive(Clone, Debug, Default, Deserialize)]
#[serde(rename_all = "camelCase", default)]
pub struct StudyRequest {
    /// The run's settings, as `solve` takes them.
    #[serde(flatten)]
    pub run: RunRequest,
    /// Significant digits the page shows for results (default 6).
    pub shown_digits: Option<u32>,
    /// Run the explicit-versus-implicit cross check (default true).
    pub cross_method: Option<bool>,
    /// Convergence study: the absolute error wanted; the study says which step reaches it.
    pub target: Option<f64>,
    /// Convergence study: the methods to compare (default: the run's method).
    pub methods: Option<Vec<String>>,
}

/// The accuracy check's report as the JS API returns it.
#[derive(Clone, Debug, Serialize)]
#[serde(rename_all = "camelCase")]
pub struct AccuracyReport {
    /// ratebook's version.
    pub version: &'static str,
    /// The check itself.
    #[serde(flatten)]
    pub report: Report,
}

/// A stability picture: a method's region and where a run's `h·λ` fall.
#[derive(Clone, Debug, Serialize)]
#[serde(rename_all = "camelCase")]
pub struct RegionReport {
    /// Method id.
    pub method: String,
    /// Frame of the drawing `(re_min, re_max, im_min, im_max)`.
    pub frame: (f64, f64, f64, f64),
    /// Boundary segments `|R(z)| = 1`, each `[[re, im], [re, im]]`.
    pub boundary: Vec<[(f64, f64); 2]>,
    /// Reach of the region along the negative real axis (`None`: unbounded).
    pub real_limit: Option<f64>,
    /// Reach along the positive imaginary axis (`None`: unbounded).
    pub imaginary_limit: Option<f64>,
}

fn model_and_settings(sheet: &str, req: &StudyRequest) -> Result<(Model, Settings), ApiError> {
    let model = super::model(sheet, &req.run)?;
    Ok((model, Settings { at: None, ..super::settings(&req.run) }))
}

/// How a study reports its progress: `(done, total)` in right-hand-side
/// evaluations, `total` when the study can tell it beforehand.
pub type Progress<'a> = &'a mut dyn FnMut(u64, Option<u64>);

/// Right-hand-side evaluations between two progress reports.
const TICK: u64 = 4096;

/// A problem that counts its right-hand-side evaluations and reports them
/// every [`TICK`]; everything else goes straight to `inner`.
struct Ticking<'a, 'p> {
    inner: &'a mut dyn Problem,
    evals: u64,
    total: Option<u64>,
    progress: Progress<'p>,
}

impl Problem for Ticking<'_, '_> {
    fn dim(&self) -> usize {
        self.inner.dim()
    }
    fn state_names(&self) -> &[String] {
        self.inner.state_names()
    }
    fn rhs(&mut self, t: f64, y: &[f64], dy: &mut [f64]) {
        self.inner.rhs(t, y, dy);
        self.evals += 1;
        if self.evals % TICK == 0 {
            // An estimated total is never shown as reached before the end.
            let done = self.total.map_or(self.evals, |n| self.evals.min(n.saturating_sub(1)));
            (self.progress)(done, self.total);
        }
    }
    fn jacobian(&mut self, t: f64, y: &[f64], jac: &mut [f64]) -> bool {
        self.inner.jacobian(t, y, jac)
    }
    fn time_derivative(&mut self, t: f64, y: &[f64], dfdt: &mut [f64]) -> bool {
        self.inner.time_derivative(t, y, dfdt)
    }
    fn helper_names(&self) -> &[String] {
        self.inner.helper_names()
    }
    fn helpers(&mut self, t: f64, y: &[f64], out: &mut [f64]) {
        self.inner.helpers(t, y, out)
    }
    fn helper_rates(&mut self, t: f64, y: &[f64], dy: &[f64], out: &mut [f64]) -> bool {
        self.inner.helper_rates(t, y, dy, out)
    }
    fn events(&self) -> &[crate::problem::EventSpec] {
        self.inner.events()
    }
    fn event_values(&mut self, t: f64, y: &[f64], out: &mut [f64]) {
        self.inner.event_values(t, y, out)
    }
    fn switch_count(&self) -> usize {
        self.inner.switch_count()
    }
    fn switch_values(&mut self, t: f64, y: &[f64], out: &mut [f64]) {
        self.inner.switch_values(t, y, out)
    }
    fn explain_nonfinite(&mut self, t: f64, y: &[f64]) -> Option<crate::problem::NonFiniteCause> {
        self.inner.explain_nonfinite(t, y)
    }
}

/// Run `study` on the model of `sheet` (formulas emitted where the page can,
/// as in `solve`), counting its work for `progress`; `total` is the
/// estimate of it, when there is one. The last report is `(total, total)`.
fn with_model<T>(
    sheet: &str,
    req: &StudyRequest,
    total: impl FnOnce(&Model, &Settings) -> Option<u64>,
    progress: Progress,
    study: impl FnOnce(&mut dyn Problem, f64, &[f64], &Settings, &str) -> Result<T, SolveError>,
) -> Result<T, ApiError> {
    let (model, s) = model_and_settings(sheet, req)?;
    let (t0, y0, ind) = (model.t0(), model.initial_state().to_vec(), model.independent().to_string());
    let total = total(&model, &s);
    let mut emitted = crate::emit::EmittedModel::new(model);
    let mut ticking = Ticking { inner: &mut emitted, evals: 0, total, progress };
    let out = study(&mut ticking, t0, &y0, &s, &ind).map_err(ApiError::Settings)?;
    let done = ticking.evals;
    (ticking.progress)(total.unwrap_or(done), Some(total.unwrap_or(done)));
    Ok(out)
}

/// Check how far to trust the run of `sheet` with `req`.
pub fn check_accuracy(sheet: &str, req: &StudyRequest) -> Result<AccuracyReport, ApiError> {
    check_accuracy_with(sheet, req, &mut |_, _| {})
}

/// [`check_accuracy`], reporting its work to `progress` as it goes (the
/// total is not known beforehand: the checks depend on what the first run finds).
pub fn check_accuracy_with(sheet: &str, req: &StudyRequest, progress: Progress) -> Result<AccuracyReport, ApiError> {
    let opts = Options {
        shown_digits: req.shown_digits.unwrap_or(6).clamp(1, 15),
        cross_method: req.cross_method.unwrap_or(true),
    };
    let report = with_model(sheet, req, |_, _| None, progress, |p, t0, y0, s, ind| check::check(p, t0, y0, s, ind, &opts))?;
    Ok(AccuracyReport { version: env!("CARGO_PKG_VERSION"), report })
}

/// A convergence study as the JS API returns it, with its log-log plot.
#[derive(Clone, Debug, Serialize)]
#[serde(rename_all = "camelCase")]
pub struct ConvergenceReport {
    /// The study.
    #[serde(flatten)]
    pub sweep: Sweep,
    /// The log-log plot of error against h, as SVG (640 × 400).
    pub plot: String,
}

/// The fixed-step convergence study of `sheet` from `req.step` down by halves.
pub fn convergence_study(sheet: &str, req: &StudyRequest) -> Result<ConvergenceReport, ApiError> {
    convergence_study_with(sheet, req, &mut |_, _| {})
}

/// Right-hand-side evaluations a convergence study of `methods` from step
/// `s.step` takes: each method's stages times its steps at h, h/2, h/4, h/8
/// (implicit methods at three Newton iterations a stage). The adaptive
/// reference run is left out; it is small beside the finest fixed steps.
fn sweep_work(t0: f64, s: &Settings, methods: &[String]) -> Option<u64> {
    let h = s.step.filter(|h| *h > 0.0)?;
    let steps = ((s.to - t0).abs() / h).round().max(1.0);
    let levels = (1u64 << sweep::LEVELS) - 1;
    let per_step: u64 = methods
        .iter()
        .map(|id| solve::method(id).map_or(1, |m| m.stages as u64 * if m.implicit { 3 } else { 1 }))
        .sum();
    let total = steps * (levels * per_step) as f64;
    (total.is_finite() && total >= 1.0).then(|| total.min(u64::MAX as f64 / 2.0) as u64)
}

/// [`convergence_study`], reporting its work to `progress` as it goes,
/// against the study's estimate of it.
pub fn convergence_study_with(sheet: &str, req: &StudyRequest, progress: Progress) -> Result<ConvergenceReport, ApiError> {
    let methods = |s: &Settings| req.methods.clone().unwrap_or_else(|| vec![s.method.clone()]);
    let sweep = with_model(
        sheet,
        req,
        |m, s| sweep_work(m.t0(), s, &methods(s)),
        progress,
        |p, t0, y0, s, ind| sweep::sweep(p, t0, y0, s, &methods(s), req.target, ind),
    )?;
    let plot = convergence_svg(&sweep, 640, 400)?;
    Ok(ConvergenceReport { sweep, plot })
}

/// The stability region of `method`, framed to show the points `hl` (`h·λ` values).
pub fn stability_region(method: &str, hl: &[(f64, f64)]) -> Result<RegionReport, ApiError> {
    let info = solve::method(method).ok_or_else(|| invalid("method", format!("there is no method `{method}`")))?;
    let f = function_for(info).ok_or_else(|| invalid("method", format!("no stability function is known for `{method}`")))?;
    let pts: Vec<C64> = hl.iter().map(|&(re, im)| C64::new(re, im)).collect();
    let frame = f.frame(&pts);
    Ok(RegionReport {
        method: method.into(),
        frame,
        boundary: f.boundary(frame, 160, 120),
        real_limit: f.stable_reach(C64::new(-1.0, 0.0)),
        imaginary_limit: f.stable_reach(C64::new(0.0, 1.0)),
    })
}

/// An SVG drawing of `method`'s stability region with the points `hl`.
pub fn stability_svg(method: &str, title: &str, hl: &[(f64, f64)], width: u32, height: u32) -> Result<String, ApiError> {
    use plotters::prelude::*;
    let info = solve::method(method).ok_or_else(|| invalid("method", format!("there is no method `{method}`")))?;
    let f = function_for(info).ok_or_else(|| invalid("method", format!("no stability function is known for `{method}`")))?;
    let pts: Vec<C64> = hl.iter().map(|&(re, im)| C64::new(re, im)).collect();
    let mut svg = String::new();
    {
        let root = crate::draw::text::measured(SVGBackend::with_string(&mut svg, (width.clamp(200, 2000), height.clamp(150, 2000))));
        crate::draw::study::stability_region(&root, title, &f, &pts).map_err(|e| invalid("drawing", e.0))?;
    }
    Ok(svg)
}

/// An SVG log-log plot of a convergence study's errors against h.
pub fn convergence_svg(study: &Sweep, width: u32, height: u32) -> Result<String, ApiError> {
    use crate::draw::study::{convergence, ErrorLine};
    let labels: Vec<String> = study.lines.iter().map(|l| format!("{}, {}", l.label.replace('`', ""), l.method_name)).collect();
    let lines: Vec<ErrorLine> = study
        .lines
        .iter()
        .zip(&labels)
        .map(|(l, lab)| ErrorLine { label: lab, h: &l.h, error: &l.errors, order: Some(l.order as f64) })
        .collect();
    crate::draw::figure_svg(&convergence(&lines), width.clamp(200, 2000), height.clamp(150, 2000)).map_err(|e| invalid("drawing", e.0))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::api::ToleranceRequest;

    const DECAY: &str = "k = 0.5\ndy/dt = -k*y\ny(0) = 1\n";

    #[test]
    fn a_convergence_study_reports_progress_up_to_its_estimate() {
        let req = StudyRequest {
            run: RunRequest { to: Some(20.0), method: Some("euler".into()), step: Some(0.001), ..Default::default() },
            methods: Some(vec!["euler".into(), "rk4".into()]),
            ..Default::default()
        };
        let mut seen: Vec<(u64, Option<u64>)> = Vec::new();
        let study = convergence_study_with(DECAY, &req, &mut |d, t| seen.push((d, t))).unwrap();
        // 20 000 steps at h, times 1 + 2 + 4 + 8, times 1 stage (Euler) + 4 (RK4).
        let total = 20_000 * 15 * 5;
        assert!(seen.len() > 10, "{} reports", seen.len());
        assert!(seen.iter().all(|&(_, t)| t == Some(total)));
        assert!(seen.windows(2).all(|w| w[0].0 <= w[1].0), "monotone");
        assert!(seen[..seen.len() - 1].iter().all(|&(d, _)| d < total), "not done before the end");
        assert_eq!(*seen.last().unwrap(), (total, Some(total)));
        // The same study without progress gives the same numbers.
        let plain = convergence_study(DECAY, &req).unwrap();
        assert_eq!(study.sweep.lines.len(), plain.sweep.lines.len());
        for (a, b) in study.sweep.lines.iter().zip(&plain.sweep.lines) {
            assert_eq!(a.values, b.values);
        }
    }

    #[test]
    fn an_accuracy_check_reports_its_work_without_a_total_until_the_end() {
        let req = StudyRequest { run: RunRequest { to: Some(200.0), tolerance: ToleranceRequest { relative: Some(1e-10), absolute: None }, ..Default::default() }, ..Default::default() };
        let mut seen: Vec<(u64, Option<u64>)> = Vec::new();
        check_accuracy_with(DECAY, &req, &mut |d, t| seen.push((d, t))).unwrap();
        let (last, rest) = seen.split_last().unwrap();
        assert!(rest.iter().all(|&(_, t)| t.is_none()));
        assert_eq!(last.1, Some(last.0));
        assert!(last.0 >= rest.last().map_or(0, |r| r.0));
    }

    #[test]
    fn the_work_estimate_needs_a_step() {
        let s = Settings { to: 1.0, step: None, ..Default::default() };
        assert_eq!(sweep_work(0.0, &s, &["rk4".into()]), None);
        let s = Settings { to: 1.0, step: Some(0.1), ..Default::default() };
        assert_eq!(sweep_work(0.0, &s, &["rk4".into()]), Some(10 * 15 * 4));
    }
}
