//! The wasm side of the benchmarks (`scripts/bench.d/stiff` and
//! `scripts/bench.d/solver` run it under Node): the same cases and runs as the
//! native examples, through the shared runner in `crate::problems::bench`.

use wasm_bindgen::prelude::*;

use crate::problems::bench::bench_repeat;
use crate::problems::stiff::bench_cases;

/// The stiff benchmark's cases as a JSON array.
#[wasm_bindgen]
pub fn bench_stiff_cases() -> String {
    serde_json::to_string(&bench_cases()).unwrap_or_else(|_| "[]".into())
}

/// Run one case of any problem of the shared set, `repeats` times when given
/// (once when left out), so that a caller timing the call can divide the one-off
/// costs away; a JSON object with status, end state and work counts of the
/// last run (`null` for an unknown case).
#[wasm_bindgen]
pub fn bench_stiff_run(problem: &str, method: &str, rtol: f64, atol: f64, repeats: Option<u32>) -> String {
    bench_repeat(problem, method, rtol, atol, repeats.unwrap_or(1)).map(|v| v.to_string()).unwrap_or_else(|| "null".into())
}
