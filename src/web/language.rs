//! wasm export of the sheet language's own facts, for the in-page guide and
//! the editor's completion: `sheetLanguage`. Read from the parser's tables,
//! so the guide cannot list a function the parser refuses, or miss one.

use serde::Serialize;
use wasm_bindgen::prelude::*;

use super::to_js;
use crate::sheet::{analyze, scan};

/// One built-in function.
#[derive(Serialize)]
struct Function {
    name: &'static str,
    /// How many arguments; `None` (null) for one or more.
    arity: Option<usize>,
}

/// The language's limits, as the parser and the run's defaults apply them.
#[derive(Serialize)]
#[serde(rename_all = "camelCase")]
struct Limits {
    lines: usize,
    expression_chars: usize,
    states: usize,
    order: usize,
    steps: u64,
    output_points: usize,
    events: usize,
}

#[derive(Serialize)]
struct Language {
    functions: Vec<Function>,
    constants: [&'static str; 2],
    limits: Limits,
}

/// The sheet language: `{ functions: [{ name, arity }], constants, limits }`,
/// functions in the parser's order (`arity` null for one or more arguments),
/// `limits` `{ lines, expressionChars, states, order, steps, outputPoints,
/// events }` (the last three are a run's defaults).
#[wasm_bindgen(js_name = sheetLanguage)]
pub fn sheet_language() -> Result<JsValue, JsValue> {
    let run = crate::solve::Settings::default();
    to_js(&Language {
        functions: scan::FUNCTIONS.iter().map(|f| Function { name: f.0, arity: f.2 }).collect(),
        constants: ["pi", "e"],
        limits: Limits {
            lines: scan::MAX_LINES,
            expression_chars: scan::MAX_EXPR_CHARS,
            states: analyze::MAX_STATES,
            order: scan::MAX_ORDER,
            steps: run.max_steps,
            output_points: run.max_output,
            events: run.max_events,
        },
    })
}
