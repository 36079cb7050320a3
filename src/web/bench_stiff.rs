//! The wasm side of the stiff benchmark (`scripts/bench.d/stiff` runs it
//! under Node): the same cases and runs as the native example.

use wasm_bindgen::prelude::*;

use crate::problems::stiff::{bench_cases, bench_run};

/// The benchmark's cases as a JSON array.
#[wasm_bindgen]
pub fn bench_stiff_cases() -> String {
    serde_json::to_string(&bench_cases()).unwrap_or_else(|_| "[]".into())
}

/// Run one case; a JSON object with status, end state and work counts
/// (`null` for an unknown case).
#[wasm_bindgen]
pub fn bench_stiff_run(problem: &str, method: &str, rtol: f64, atol: f64) -> String {
    bench_run(problem, method, rtol, atol).map(|v| v.to_string()).unwrap_or_else(|| "null".into())
}
