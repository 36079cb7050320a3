//! The thin wasm-bindgen layer: converts between JS values and the core's
//! plain types, and draws on canvases. No numerics live here.

use wasm_bindgen::prelude::*;

use crate::{api, draw};

#[cfg(feature = "bench")]
mod bench_call;
#[cfg(feature = "bench")]
mod bench_emit;
mod bench_stiff;
mod emit;
mod guard;
mod language;

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

/// A string argument, or a plain `Error` naming it. Strings and number
/// slices are taken as `JsValue`: the glue's own conversion aborts the
/// instance on a value of another type.
fn text_arg(v: &JsValue, what: &str) -> Result<String, JsValue> {
    v.as_string().ok_or_else(|| error_with(&format!("{what} must be a string"), &[]))
}

/// A number-array argument (a `Float64Array` or an array of numbers), or a
/// plain `Error` naming it.
fn numbers_arg(v: &JsValue, what: &str) -> Result<Vec<f64>, JsValue> {
    if let Some(a) = v.dyn_ref::<js_sys::Float64Array>() {
        return Ok(a.to_vec());
    }
    let bad = || error_with(&format!("{what} must be an array of numbers"), &[]);
    if !js_sys::Array::is_array(v) {
        return Err(bad());
    }
    let a: &js_sys::Array = v.unchecked_ref();
    (0..a.length()).map(|i| a.get(i).as_f64().ok_or_else(bad)).collect()
}

fn api_error(e: api::ApiError) -> JsValue {
    match e {
        api::ApiError::Sheet(f) => error_with(&f.message(), &[("line", f.line as f64), ("column", f.column as f64)]),
        api::ApiError::Settings(s) => error_with(&s.to_string(), &[]),
    }
}

/// Start-up: register the model emitter and install the panic hook.
#[wasm_bindgen(start)]
pub fn start() {
    emit::register();
    guard::install();
}

/// The crate version, shown on the page and written into saved files.
#[wasm_bindgen]
pub fn version() -> String {
    env!("CARGO_PKG_VERSION").to_string()
}

/// Solve a sheet. Throws an `Error` with `line` and `column` for a sheet
/// that cannot be read, and a plain `Error` when `sheet` is not a string.
#[wasm_bindgen]
pub fn solve(sheet: JsValue, settings: JsValue) -> Result<JsValue, JsValue> {
    guard::test_panic();
    // Taken as a JsValue: the glue's string passing aborts the instance on a
    // number or an object.
    let sheet = sheet.as_string().ok_or_else(|| error_with("the sheet must be a string", &[]))?;
    let sheet = sheet.as_str();
    let req: api::RunRequest = request(settings, "settings")?;
    let run = api::solve(sheet, &req).map_err(api_error)?;
    to_js(&run)
}

/// A request object (settings of a run, of a comparison, …) from JS; the
/// defaults for `undefined` or `null`. A value that is not an object, or a
/// setting of the wrong kind, gives a plain `Error` naming the setting and
/// saying what it should hold.
fn request<T: serde::de::DeserializeOwned + Default>(v: JsValue, what: &str) -> Result<T, JsValue> {
    if v.is_undefined() || v.is_null() {
        return Ok(T::default());
    }
    if !v.is_object() || v.is_function() || js_sys::Array::is_array(&v) {
        let msg = format!("the {what} must be an object of named settings, such as {{ to: 10 }}, not {}", kind_of(&v));
        return Err(error_with(&msg, &[]));
    }
    serde_wasm_bindgen::from_value(v.clone()).map_err(|e| {
        // The request's own readers (an unknown or renamed setting, too many
        // output times) say in words what is wrong; serde's type complaints
        // ("invalid type: …, expected …") are put in words below.
        let whole = e.to_string();
        if !whole.contains("expected ") {
            return error_with(&format!("{what}: {whole}"), &[]);
        }
        // Find the setting at fault: the first that does not read on its own.
        let keys = js_sys::Object::keys(v.unchecked_ref::<js_sys::Object>());
        for key in keys.iter() {
            let value = js_sys::Reflect::get(&v, &key).unwrap_or(JsValue::UNDEFINED);
            let one = js_sys::Object::new();
            let _ = js_sys::Reflect::set(&one, &key, &value);
            if let Err(e) = serde_wasm_bindgen::from_value::<T>(one.into()) {
                let name = key.as_string().unwrap_or_default();
                return error_with(&format!("{what}: `{name}` {}", plain(&e.to_string(), &value)), &[]);
            }
        }
        error_with(&format!("{what}: {}", plain(&e.to_string(), &v)), &[])
    })
}

/// What kind of JS value `v` is, in words.
fn kind_of(v: &JsValue) -> &'static str {
    if v.is_function() {
        "a function"
    } else if js_sys::Array::is_array(v) {
        "an array"
    } else if v.is_string() {
        "a string"
    } else if v.as_bool().is_some() {
        "true or false"
    } else if v.as_f64().is_some() {
        "a number"
    } else if v.is_symbol() {
        "a symbol"
    } else if v.is_bigint() {
        "a BigInt"
    } else if v.is_null() {
        "null"
    } else if v.is_object() {
        "an object"
    } else {
        "undefined"
    }
}

/// A deserializer's complaint about `value` in plain words: what the setting
/// should hold (from serde's "expected …"), and what it holds.
fn plain(serde_message: &str, value: &JsValue) -> String {
    let expected = serde_message.rsplit("expected ").next().unwrap_or("");
    let wanted = if ["f64", "f32", "u64", "u32", "usize", "i64", "i32"].iter().any(|t| expected.starts_with(t)) {
        "a number"
    } else if expected.contains("sequence") || expected.contains("tuple") || expected.contains("list") {
        "an array"
    } else if expected.contains("string") {
        "a string"
    } else if expected.contains("bool") {
        "true or false"
    } else if expected.contains("map") || expected.contains("struct") {
        "an object"
    } else if expected.contains("variant") {
        "one of the names listed in the documentation"
    } else if !expected.is_empty() {
        // What the request's own reader expects, in its words.
        expected.trim_end()
    } else {
        "a value of another kind"
    };
    let holds = kind_of(value);
    if (holds == "an array" || holds == "an object") && wanted != "an array" && wanted != "an object" {
        // Something inside is of the wrong kind.
        return format!("must hold {wanted} in each entry");
    }
    format!("must be {wanted}, not {holds}")
}

/// Compare fixed-step methods at h, h/2, h/4, … with an adaptive reference
/// (see `api::compare`). `progress(done, total)` is called after each run
/// when it is a function.
#[wasm_bindgen(js_name = compareMethods)]
pub fn compare_methods(sheet: JsValue, settings: JsValue, request_: JsValue, progress: JsValue) -> Result<JsValue, JsValue> {
    let sheet = &text_arg(&sheet, "the sheet")?;
    let base: api::RunRequest = request(settings, "settings")?;
    let req: api::compare::CompareRequest = request(request_, "comparison")?;
    let mut report = progress_fn(progress);
    let rep = api::compare::compare(sheet, &base, &req, &mut |done, total| report(done as u64, total as u64)).map_err(api_error)?;
    to_js(&rep)
}

/// `progress(done, total)` as a Rust callback: calls the JS function when
/// `progress` is one (`total` 0 when the total is not known), else nothing.
fn progress_fn(progress: JsValue) -> impl FnMut(u64, u64) {
    let callback = progress.dyn_into::<js_sys::Function>().ok();
    move |done: u64, total: u64| {
        if let Some(f) = &callback {
            let _ = f.call2(&JsValue::NULL, &JsValue::from(done as f64), &JsValue::from(total as f64));
        }
    }
}

/// The field view's numbers for `sheet` (see `api::field`): the slope field
/// or phase plane, nullclines, and curves through the requested starts.
#[wasm_bindgen(js_name = fieldView)]
pub fn field_view(sheet: JsValue, settings: JsValue, request_: JsValue) -> Result<JsValue, JsValue> {
    let sheet = &text_arg(&sheet, "the sheet")?;
    let base: api::RunRequest = request(settings, "settings")?;
    let req: api::field::FieldRequest = request(request_, "field view")?;
    let rep = api::field::field_view(sheet, &base, &req).map_err(api_error)?;
    to_js(&rep)
}

/// The solver's methods, in registry order: `[{ id, name, order, adaptive, implicit, summary, … }]`.
#[wasm_bindgen]
pub fn methods() -> Result<JsValue, JsValue> {
    to_js(&crate::solve::methods())
}

/// A plot being described from JS, then drawn on a canvas or as SVG. Each
/// view of the page builds one per redraw and frees it.
#[wasm_bindgen]
pub struct Plot {
    fig: draw::Figure,
}

fn mark_shape(code: u8) -> draw::MarkShape {
    match code {
        1 => draw::MarkShape::Peak,
        2 => draw::MarkShape::Trough,
        _ => draw::MarkShape::Dot,
    }
}

#[wasm_bindgen]
impl Plot {
    /// An empty plot with its axis labels.
    #[wasm_bindgen(constructor)]
    pub fn new(x_label: JsValue, y_label: JsValue) -> Result<Plot, JsValue> {
        let (x_label, y_label) = (text_arg(&x_label, "the x label")?, text_arg(&y_label, "the y label")?);
        Ok(Plot { fig: draw::Figure { x_label, y_label, ..Default::default() } })
    }

    /// Show exactly this window (data units); otherwise it is fitted to the data.
    pub fn window(&mut self, x0: f64, x1: f64, y0: f64, y1: f64) {
        self.fig.x_range = Some((x0, x1));
        self.fig.y_range = Some((y0, y1));
    }

    /// Show this x range; y is fitted to the data.
    #[wasm_bindgen(js_name = xWindow)]
    pub fn x_window(&mut self, x0: f64, x1: f64) {
        self.fig.x_range = Some((x0, x1));
    }

    /// Logarithmic axes.
    pub fn log(&mut self, x: bool, y: bool) {
        self.fig.log_x = x;
        self.fig.log_y = y;
    }

    /// Add a polyline. `colour` is a palette index (negative for ink).
    #[allow(clippy::too_many_arguments)]
    pub fn line(&mut self, label: JsValue, x: JsValue, y: JsValue, colour: i32, width: u32, dashed: bool, dots: bool) -> Result<(), JsValue> {
        let label = text_arg(&label, "a line's label")?;
        let (mut x, mut y) = (numbers_arg(&x, "a line's x")?, numbers_arg(&y, "a line's y")?);
        let n = x.len().min(y.len());
        x.truncate(n);
        y.truncate(n);
        self.fig.lines.push(draw::Line { label, x, y, colour, width, dashed, dots });
        Ok(())
    }

    /// Add a labelled point: `shape` 0 dot, 1 peak, 2 trough.
    pub fn mark(&mut self, x: f64, y: f64, label: JsValue, shape: u8, colour: i32) -> Result<(), JsValue> {
        let label = text_arg(&label, "a mark's label")?;
        self.fig.marks.push(draw::Mark { x, y, label, shape: mark_shape(shape), colour });
        Ok(())
    }

    /// Add a vertical rule with a label at its top (an event time).
    pub fn rule(&mut self, x: f64, label: JsValue) -> Result<(), JsValue> {
        let label = text_arg(&label, "a rule's label")?;
        self.fig.rules.push(draw::Rule { x, label });
        Ok(())
    }

    /// Set the direction field: flat `[x, y, dx, dy, ...]`, with arrow heads or not.
    pub fn field(&mut self, samples: JsValue, arrows: bool) -> Result<(), JsValue> {
        let samples = numbers_arg(&samples, "the field samples")?;
        self.fig.field = samples.chunks_exact(4).map(|c| [c[0], c[1], c[2], c[3]]).collect();
        self.fig.arrows = arrows;
        Ok(())
    }

    /// Draw on `canvas` at its pixel size. Returns the frame
    /// `[left, top, right, bottom, x0, x1, y0, y1]` (log10 units on log axes).
    pub fn draw(&self, canvas: JsValue) -> Result<Vec<f64>, JsValue> {
        let canvas: web_sys::HtmlCanvasElement =
            canvas.dyn_into().map_err(|_| error_with("a plot draws on a <canvas> element", &[]))?;
        let ctx = canvas
            .get_context("2d")
            .ok()
            .flatten()
            .and_then(|c| c.dyn_into::<web_sys::CanvasRenderingContext2d>().ok());
        let backend = plotters_canvas::CanvasBackend::with_canvas_object(canvas)
            .ok_or_else(|| error_with("no 2D context on this canvas", &[]))?;
        let mut strokes = CanvasStrokes(ctx);
        let frame = draw::figure_with(&draw::text::measured(backend), &self.fig, Some(&mut strokes))
            .map_err(|e| error_with(&e.0, &[]))?;
        Ok(frame.to_array().to_vec())
    }

    /// The same plot as an SVG document of `width` × `height` pixels.
    pub fn svg(&self, width: u32, height: u32) -> Result<String, JsValue> {
        draw::figure_svg(&self.fig, width, height).map_err(|e| error_with(&e.0, &[]))
    }
}

/// The canvas's own strokes for [`draw::figure_with`]: the direction field
/// as one path, and each curve in fractional pixels (anti-aliased, without
/// the whole-pixel steps of plotters' paths).
struct CanvasStrokes(Option<web_sys::CanvasRenderingContext2d>);

impl draw::Strokes for CanvasStrokes {
    fn field(&mut self, strokes: &[Vec<(i32, i32)>], colour: plotters::style::RGBColor) {
        let Some(ctx) = &self.0 else { return };
        ctx.begin_path();
        for s in strokes {
            for (k, &(x, y)) in s.iter().enumerate() {
                // Pixel centres: crisp one-pixel strokes.
                let (x, y) = (x as f64 + 0.5, y as f64 + 0.5);
                if k == 0 {
                    ctx.move_to(x, y);
                } else {
                    ctx.line_to(x, y);
                }
            }
        }
        ctx.set_stroke_style_str(&draw::style::hex(colour));
        ctx.set_line_width(1.0);
        ctx.stroke();
    }

    fn curve(&mut self, points: &[(f64, f64)], colour: plotters::style::RGBColor, width: u32, dash: &[f64]) {
        let Some(ctx) = &self.0 else { return };
        ctx.save();
        ctx.begin_path();
        for (k, &(x, y)) in points.iter().enumerate() {
            if k == 0 {
                ctx.move_to(x, y);
            } else {
                ctx.line_to(x, y);
            }
        }
        ctx.set_stroke_style_str(&format!("rgb({},{},{})", colour.0, colour.1, colour.2));
        ctx.set_line_width(width as f64);
        ctx.set_line_join("round");
        ctx.set_line_cap("round");
        if !dash.is_empty() {
            let _ = ctx.set_line_dash(&dash.iter().map(|&d| JsValue::from(d)).collect::<js_sys::Array>());
        }
        ctx.stroke();
        ctx.restore();
    }
}

mod sheet;
mod study;
