//! The thin wasm-bindgen layer: converts between JS values and the core's
//! plain types, and draws on canvases. No numerics live here.

use wasm_bindgen::prelude::*;

use crate::api;

#[cfg(feature = "bench")]
mod bench_emit;
mod bench_stiff;
mod emit;

fn to_js<T: serde::Serialize>(v: &T) -> Result<JsValue, JsValue> {
    let s = serde_wasm_bindgen::Serializer::new().serialize_maps_as_objects(true);
    v.serialize(&s).map_err(|e| JsValue::from(js_sys::Error::new(&e.to_string())))
}

fn error_with(message: &str, props: &[(&str, f64)]) -> JsValue {
    let e = js_sys::Error::new(message);
    for (k, v) in props {
        let _ = js_sys::Reflect::set(&e, &JsValue::from_str(k), &JsValue::from_f64(*v));
    }
    e.into()
}

fn api_error(e: api::ApiError) -> JsValue {
    match e {
        api::ApiError::Sheet(f) => error_with(&f.message(), &[("line", f.line as f64), ("column", f.column as f64)]),
        api::ApiError::Settings(s) => error_with(&s.to_string(), &[]),
    }
}

/// Report panics on the console instead of dying silently.
#[wasm_bindgen(start)]
pub fn start() {
    emit::register();
    std::panic::set_hook(Box::new(|info| {
        web_sys::console::error_1(&JsValue::from_str(&format!("ratebook: internal error: {info}")));
    }));
}

/// The crate version, shown on the page and written into saved files.
#[wasm_bindgen]
pub fn version() -> String {
    env!("CARGO_PKG_VERSION").to_string()
}

/// Solve a sheet. Throws an `Error` with `line` and `column` for a sheet
/// that cannot be read.
#[wasm_bindgen]
pub fn solve(sheet: &str, settings: JsValue) -> Result<JsValue, JsValue> {
    let req: api::RunRequest = if settings.is_undefined() || settings.is_null() {
        api::RunRequest::default()
    } else {
        serde_wasm_bindgen::from_value(settings).map_err(|e| error_with(&format!("settings: {e}"), &[]))?
    };
    let run = api::solve(sheet, &req).map_err(api_error)?;
    to_js(&run)
}

/// Solve `sheet` and draw its states against the independent variable on `canvas`.
#[wasm_bindgen(js_name = drawTimePlot)]
pub fn draw_time_plot(canvas: web_sys::HtmlCanvasElement, sheet: &str, settings: JsValue) -> Result<(), JsValue> {
    use plotters::prelude::IntoDrawingArea;
    let req: api::RunRequest = serde_wasm_bindgen::from_value(settings).map_err(|e| error_with(&e.to_string(), &[]))?;
    let run = api::solve(sheet, &req).map_err(api_error)?;
    let curves: Vec<crate::draw::Curve> =
        run.values.0.iter().map(|(name, y)| crate::draw::Curve { label: name, x: &run.t, y }).collect();
    let backend = plotters_canvas::CanvasBackend::with_canvas_object(canvas)
        .ok_or_else(|| error_with("no 2D context on this canvas", &[]))?;
    crate::draw::time_plot(&backend.into_drawing_area(), &run.independent, &curves)
        .map_err(|e| error_with(&e.0, &[]))
}
