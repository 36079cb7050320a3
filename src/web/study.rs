//! wasm exports of the accuracy study: `checkAccuracy`, `convergenceStudy`,
//! `stabilityRegion` and `stabilitySvg`.

use wasm_bindgen::prelude::*;

use super::{api_error, numbers_arg, progress_fn, request, text_arg, to_js};
use crate::api::study::{self, StudyRequest};

/// `h·λ` points given flat as `[re0, im0, re1, im1, …]`.
fn points(v: &JsValue) -> Result<Vec<(f64, f64)>, JsValue> {
    Ok(numbers_arg(v, "the h·λ points")?.chunks_exact(2).map(|c| (c[0], c[1])).collect())
}

/// Check how far to trust the run of `sheet` with `settings` (the settings of
/// `solve`, plus `shownDigits` and `crossMethod`). Returns the report: verdict,
/// quantities with error estimates and trusted digits, cross check, pitfalls.
/// `progress(done, 0)` is called as the work goes on (right-hand-side
/// evaluations so far; the total is not known beforehand) when it is a function.
#[wasm_bindgen(js_name = checkAccuracy)]
pub fn check_accuracy(sheet: JsValue, settings: JsValue, progress: JsValue) -> Result<JsValue, JsValue> {
    let sheet = text_arg(&sheet, "the sheet")?;
    let req: StudyRequest = request(settings, "settings")?;
    let mut report = progress_fn(progress);
    to_js(&study::check_accuracy_with(&sheet, &req, &mut |done, total| report(done, total.unwrap_or(0))).map_err(api_error)?)
}

/// The fixed-step convergence study of `sheet` at `settings.step`, `/2`, `/4`,
/// `/8` for `settings.methods` (default the run's method), with the step that
/// reaches `settings.target` and the log-log plot as SVG (`plot`).
/// `progress(done, total)` is called as the work goes on (right-hand-side
/// evaluations against the study's estimate of them) when it is a function.
#[wasm_bindgen(js_name = convergenceStudy)]
pub fn convergence_study(sheet: JsValue, settings: JsValue, progress: JsValue) -> Result<JsValue, JsValue> {
    let sheet = text_arg(&sheet, "the sheet")?;
    let req: StudyRequest = request(settings, "settings")?;
    let mut report = progress_fn(progress);
    to_js(&study::convergence_study_with(&sheet, &req, &mut |done, total| report(done, total.unwrap_or(0))).map_err(api_error)?)
}

/// The stability region of `method` framed around the `h·λ` points given as
/// a flat array `[re0, im0, re1, im1, …]`.
#[wasm_bindgen(js_name = stabilityRegion)]
pub fn stability_region(method: JsValue, points_: JsValue) -> Result<JsValue, JsValue> {
    let method = text_arg(&method, "the method")?;
    to_js(&study::stability_region(&method, &points(&points_)?).map_err(api_error)?)
}

/// An SVG of `method`'s stability region with the `h·λ` points (flat `[re, im, …]`).
#[wasm_bindgen(js_name = stabilitySvg)]
pub fn stability_svg(method: JsValue, title: JsValue, points_: JsValue, width: u32, height: u32) -> Result<String, JsValue> {
    let (method, title) = (text_arg(&method, "the method")?, text_arg(&title, "the title")?);
    study::stability_svg(&method, &title, &points(&points_)?, width, height).map_err(api_error)
}
