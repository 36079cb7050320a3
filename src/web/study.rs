//! wasm exports of the accuracy study: `checkAccuracy`, `convergenceStudy`,
//! `stabilityRegion` and `stabilitySvg`.

use wasm_bindgen::prelude::*;

use super::{api_error, error_with, to_js};
use crate::api::study::{self, StudyRequest};

fn request(settings: JsValue) -> Result<StudyRequest, JsValue> {
    if settings.is_undefined() || settings.is_null() {
        return Ok(StudyRequest::default());
    }
    serde_wasm_bindgen::from_value(settings).map_err(|e| error_with(&format!("settings: {e}"), &[]))
}

/// Check how far to trust the run of `sheet` with `settings` (the settings of
/// `solve`, plus `shownDigits` and `crossMethod`). Returns the report: verdict,
/// quantities with error estimates and trusted digits, cross check, pitfalls.
#[wasm_bindgen(js_name = checkAccuracy)]
pub fn check_accuracy(sheet: &str, settings: JsValue) -> Result<JsValue, JsValue> {
    let req = request(settings)?;
    to_js(&study::check_accuracy(sheet, &req).map_err(api_error)?)
}

/// The fixed-step convergence study of `sheet` at `settings.step`, `/2`, `/4`,
/// `/8` for `settings.methods` (default the run's method), with the step that
/// reaches `settings.target` and the log-log plot as SVG (`plot`).
#[wasm_bindgen(js_name = convergenceStudy)]
pub fn convergence_study(sheet: &str, settings: JsValue) -> Result<JsValue, JsValue> {
    let req = request(settings)?;
    to_js(&study::convergence_study(sheet, &req).map_err(api_error)?)
}

/// The stability region of `method` framed around the `h·λ` points given as
/// a flat array `[re0, im0, re1, im1, …]`.
#[wasm_bindgen(js_name = stabilityRegion)]
pub fn stability_region(method: &str, points: &[f64]) -> Result<JsValue, JsValue> {
    let pts: Vec<(f64, f64)> = points.chunks_exact(2).map(|c| (c[0], c[1])).collect();
    to_js(&study::stability_region(method, &pts).map_err(api_error)?)
}

/// An SVG of `method`'s stability region with the `h·λ` points (flat `[re, im, …]`).
#[wasm_bindgen(js_name = stabilitySvg)]
pub fn stability_svg(method: &str, title: &str, points: &[f64], width: u32, height: u32) -> Result<String, JsValue> {
    let pts: Vec<(f64, f64)> = points.chunks_exact(2).map(|c| (c[0], c[1])).collect();
    study::stability_svg(method, title, &pts, width, height).map_err(api_error)
}
