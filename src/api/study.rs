//! The accuracy study's request and report for the JS API:
//! `checkAccuracy(sheet, settings)`, `convergenceStudy(sheet, settings)` and
//! the stability picture of a method.
//!
//! The settings are those of `solve` ([`RunRequest`]) plus a few fields of
//! the study ([`StudyRequest`]).

use serde::{Deserialize, Serialize};

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

fn invalid(field: &'static str, reason: String) -> ApiError {
    ApiError::Settings(SolveError::InvalidSettings { field, reason })
}

/// Check how far to trust the run of `sheet` with `req`.
pub fn check_accuracy(sheet: &str, req: &StudyRequest) -> Result<AccuracyReport, ApiError> {
    let (mut model, s) = model_and_settings(sheet, req)?;
    let (t0, y0, ind) = (model.t0(), model.initial_state().to_vec(), model.independent().to_string());
    let opts = Options {
        shown_digits: req.shown_digits.unwrap_or(6).clamp(1, 15),
        cross_method: req.cross_method.unwrap_or(true),
    };
    let report = check::check(&mut model as &mut dyn Problem, t0, &y0, &s, &ind, &opts).map_err(ApiError::Settings)?;
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
    let (mut model, s) = model_and_settings(sheet, req)?;
    let (t0, y0, ind) = (model.t0(), model.initial_state().to_vec(), model.independent().to_string());
    let methods = req.methods.clone().unwrap_or_else(|| vec![s.method.clone()]);
    let sweep = sweep::sweep(&mut model, t0, &y0, &s, &methods, req.target, &ind).map_err(ApiError::Settings)?;
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
    use plotters::prelude::*;
    let labels: Vec<String> = study.lines.iter().map(|l| format!("{}, {}", l.label.replace('`', ""), l.method_name)).collect();
    let lines: Vec<ErrorLine> = study
        .lines
        .iter()
        .zip(&labels)
        .map(|(l, lab)| ErrorLine { label: lab, h: &l.h, error: &l.errors, order: Some(l.order as f64) })
        .collect();
    let mut svg = String::new();
    {
        let root = crate::draw::text::measured(SVGBackend::with_string(&mut svg, (width.clamp(200, 2000), height.clamp(150, 2000))));
        convergence(&root, &lines).map_err(|e| invalid("drawing", e.0))?;
    }
    Ok(svg)
}
