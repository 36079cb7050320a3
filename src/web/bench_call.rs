//! The cost of one `solve()` call, stage by stage (`scripts/bench.d/user`):
//! each stage of the call timed on its own in wasm with the clock the bench
//! script sets as `globalThis.ratebookBenchClock` (ms; the process's CPU time
//! in Node), as the mean over many repetitions, each on a fresh input made
//! outside the timing.

use wasm_bindgen::prelude::*;

use super::{request, text_arg, to_js};
use crate::api::{self, Named};
use crate::emit::EmittedModel;
use crate::sheet::{self, analyze, scan};

#[wasm_bindgen]
extern "C" {
    #[wasm_bindgen(js_name = ratebookBenchClock)]
    fn now() -> f64;
}

/// Mean µs of `f` over `reps` calls, each on an input from `make`; inputs
/// are made and outputs dropped outside the timing.
fn time<I, O>(reps: u32, mut make: impl FnMut() -> I, f: impl FnMut(I) -> O) -> f64 {
    let inputs: Vec<I> = (0..reps).map(|_| make()).collect();
    let t0 = now();
    let outputs: Vec<O> = inputs.into_iter().map(f).collect();
    let dt = now() - t0;
    drop(outputs);
    dt * 1000.0 / reps as f64
}

fn fault(what: &str, e: impl std::fmt::Display) -> JsValue {
    js_sys::Error::new(&format!("{what}: {e}")).into()
}

/// The stages of `solve(sheet, settings)`, each timed alone over `reps`
/// repetitions: `{ stage: µs }` in call order, then the whole call.
#[wasm_bindgen(js_name = benchCallParts)]
pub fn bench_call_parts(sheet_js: JsValue, settings: JsValue, reps: u32) -> Result<JsValue, JsValue> {
    let text = text_arg(&sheet_js, "the sheet")?;
    let reps = reps.max(1);
    let req: api::RunRequest = request(settings.clone(), "settings")?;
    let mut parts: Vec<(String, f64)> = Vec::new();
    let mut part = |name: &str, us: f64| parts.push((name.to_string(), us));

    part("settings from JS", time(reps, || settings.clone(), |s| request::<api::RunRequest>(s, "settings")));
    let lines = scan::parse_lines(&text).map_err(|e| fault("parse", e.message()))?;
    part("parse", time(reps, || (), |_| scan::parse_lines(&text)));
    let checked = analyze::analyze(lines.clone()).map_err(|e| fault("names", e.message()))?;
    part("names and order", time(reps, || lines.clone(), analyze::analyze));
    part("lowering and scheduling", time(reps, || checked.clone(), sheet::Model::build));
    let model = api::model(&text, &req).map_err(|e| fault("model", e))?;
    if req.params.is_some() {
        let plain = sheet::compile(&text).map_err(|e| fault("model", e.message()))?;
        part("parameter values", time(reps, || plain.clone(), |mut m| {
            for (k, v) in req.params.iter().flatten() {
                m.set_param(k, *v);
            }
            m
        }));
    }
    part("Jacobian and ∂f/∂t tapes (symbolic)", time(reps, || model.clone(), |mut m| {
        m.jacobian_program();
        m.time_derivative_program();
        m
    }));
    part("helper-rate tape (symbolic)", time(reps, || model.clone(), |mut m| {
        m.helper_gradient_program();
        m
    }));
    let kernels =
        [("rates", model.rhs_program()), ("all", model.all_program()), ("events", model.event_program()), ("switches", model.switch_program())];
    part("emit the module", time(reps, || (), |_| crate::emit::lower::module(&kernels)));
    part("emit + compile + instantiate", time(reps, || model.clone(), EmittedModel::new));
    let s = api::settings(&req);
    let (t0, y0) = (model.t0(), model.initial_state().to_vec());
    let solve = |p: &mut EmittedModel| crate::solve::solve(p, t0, &y0, &s).map_err(|e| fault("solve", e));
    part("solve, new model (with its lazy tapes and modules)", time(reps, || EmittedModel::new(model.clone()), |mut p| {
        let _ = solve(&mut p);
        p
    }));
    let mut warm = EmittedModel::new(model.clone());
    let run = solve(&mut warm)?;
    part("solve, model already run", time(reps, || (), |_| solve(&mut warm)));
    let bare = crate::solve::Settings { extrema: false, ..s.clone() };
    part("solve, model already run, no extrema", time(reps, || (), |_| crate::solve::solve(&mut warm, t0, &y0, &bare).is_ok()));
    part("report", time(reps, || run.clone(), |r| api::report(&model, &s.method, r)));
    let report = api::report(&model, &s.method, run);
    part("report to JS", time(reps, || (), |_| to_js(&report)));
    part("whole call", time(reps, || (sheet_js.clone(), settings.clone()), |(a, b)| super::solve(a, b)));
    to_js(&Named(parts))
}
