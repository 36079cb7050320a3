//! Hostile settings through the JS API's native path: each run must come
//! back promptly with a clear result or a clear error, within the step,
//! output and event caps. The checks are on result sizes and work counters,
//! never on wall time.

use ratebook::api::{self, ApiError, RunReport, RunRequest, ToleranceRequest};

const DECAY: &str = "k = 0.3\ndy/dt = -k*y\ny(0) = 2\n";
const SWING: &str = "w = 2\nx'' = -w^2*x\nx(0) = 1\nx'(0) = 0\nmark when x > 0\n";

fn req(to: f64) -> RunRequest {
    RunRequest { to: Some(to), ..Default::default() }
}

/// The defaults of the caps (src/solve/mod.rs, `Settings::default`).
const MAX_STEPS: u64 = 1_000_000;
const MAX_OUTPUT: usize = 200_000;
const MAX_EVENTS: usize = 10_000;

fn bounded(r: &RunReport) {
    assert!(r.stats.steps <= MAX_STEPS, "{} steps", r.stats.steps);
    assert!(r.t.len() <= MAX_OUTPUT, "{} output points", r.t.len());
    assert!(r.events.len() <= MAX_EVENTS + 1, "{} events", r.events.len());
    for (_, col) in &r.values.0 {
        assert_eq!(col.len(), r.t.len());
    }
    // Each step costs a bounded number of evaluations (dormand-prince-8 with extrema
    // and events is the dearest, well under 40 per attempt).
    assert!(r.stats.rhs_evals <= 40 * (r.stats.steps + r.stats.rejected) + 100, "{:?}", r.stats);
}

fn settings_error(e: ApiError) -> String {
    match e {
        ApiError::Settings(s) => s.to_string(),
        ApiError::Sheet(m) => panic!("a sheet error where a settings error was expected: {}", m.message()),
    }
}

fn error_of(sheet: &str, r: &RunRequest) -> String {
    settings_error(api::solve(sheet, r).expect_err("the settings must be refused"))
}

#[test]
fn tiny_fixed_step_stops_at_the_step_cap() {
    let r = api::solve(DECAY, &RunRequest { method: Some("rk4".into()), step: Some(1e-300), ..req(10.0) }).unwrap();
    bounded(&r);
    assert_eq!(r.status, "failed");
    assert_eq!(r.diagnostics.last().map(|d| d.code), Some("max-steps"));
    assert_eq!(r.stats.steps, MAX_STEPS);
    assert!(r.diagnostics.iter().any(|d| d.code == "decimated"));
}

#[test]
fn tiny_fixed_step_below_the_resolution_of_t_fails_at_once() {
    let sheet = "dy/dt = -y\ny(100) = 1\n";
    let r = api::solve(sheet, &RunRequest { method: Some("euler".into()), step: Some(1e-300), ..req(110.0) }).unwrap();
    bounded(&r);
    assert_eq!(r.status, "failed");
    assert!(r.stats.steps < 10, "{:?}", r.stats);
}

#[test]
fn tiny_first_step_and_tiny_largest_step() {
    let r = api::solve(DECAY, &RunRequest { start_step: Some(1e-300), ..req(5.0) }).unwrap();
    bounded(&r);
    assert_eq!(r.status, "finished");
    let r = api::solve(DECAY, &RunRequest { largest_step: Some(1e-300), step_limit: Some(5000.0), ..req(5.0) }).unwrap();
    bounded(&r);
    assert_eq!(r.status, "failed");
    assert!(r.stats.steps <= 5000);
}

#[test]
fn enormous_end_time_ends_within_the_caps() {
    // A decaying state: the steps grow with the solution's scale.
    let r = api::solve(DECAY, &req(1e300)).unwrap();
    bounded(&r);
    assert_ne!(r.error.as_deref().unwrap_or(""), "", "{:?}", r.status);
    // An oscillation needs steps proportional to the run: the step cap ends it.
    let r = api::solve(SWING, &req(1e300)).unwrap();
    bounded(&r);
    assert_eq!(r.status, "failed");
    // Either the step cap or the resolution of t (h below 1e-12 of the span) ends it.
    let code = r.diagnostics.iter().find(|d| d.level == ratebook::solve::Level::Error).map(|d| d.code);
    assert!(matches!(code, Some("max-steps" | "step-too-small")), "{code:?}");
    assert!(r.events.len() <= MAX_EVENTS);
    // A fixed step over an enormous span.
    let r = api::solve(SWING, &RunRequest { method: Some("heun".into()), step: Some(0.01), ..req(1e300) }).unwrap();
    bounded(&r);
    assert_eq!(r.status, "failed");
    // Backward, too.
    let r = api::solve(DECAY, &req(-1e300)).unwrap();
    bounded(&r);
}

#[test]
fn zero_relative_tolerance() {
    let r = api::solve(DECAY, &RunRequest { tolerance: ToleranceRequest { relative: Some(0.0), absolute: Some(1e-9) }, ..req(10.0) }).unwrap();
    bounded(&r);
    assert_eq!(r.status, "finished");
    // y(10) = 2·exp(-3), analytic.
    let y = r.values.0[0].1.last().copied().unwrap();
    assert!((y - 2.0 * (-3.0f64).exp()).abs() < 1e-7, "{y}");
    let r = api::solve(DECAY, &RunRequest { tolerance: ToleranceRequest { relative: Some(0.0), absolute: Some(1e-300) }, ..req(10.0) }).unwrap();
    bounded(&r);
    assert!(error_of(DECAY, &RunRequest { tolerance: ToleranceRequest { relative: Some(0.0), absolute: Some(0.0) }, ..req(10.0) }).contains("both be zero"));
}

#[test]
fn ten_million_output_times_are_refused_before_any_work() {
    let n = 10_000_000;
    let at: Vec<f64> = (0..n).map(|i| i as f64 / n as f64).collect();
    let msg = error_of(DECAY, &RunRequest { at: Some(at.clone()), ..req(1.0) });
    assert!(msg.contains("10000000 output times"), "{msg}");
    // Raising the output cap does not lift the ceiling on stored values.
    let msg = error_of(DECAY, &RunRequest { at: Some(at), output_limit: Some(1e300), ..req(1.0) });
    assert!(msg.contains("output"), "{msg}");
}

#[test]
fn enormous_caps_are_refused() {
    for (field, r) in [
        ("stepLimit", RunRequest { step_limit: Some(1e300), ..req(1.0) }),
        ("outputLimit", RunRequest { output_limit: Some(1e300), ..req(1.0) }),
        ("eventLimit", RunRequest { event_limit: Some(1e300), ..req(1.0) }),
    ] {
        let msg = error_of(SWING, &r);
        assert!(msg.contains(field), "{field}: {msg}");
    }
}

#[test]
fn nan_infinite_and_negative_settings_are_refused() {
    let bad = [f64::NAN, f64::INFINITY, f64::NEG_INFINITY, -1.0, -1e-300];
    for v in bad {
        let cases: Vec<(&str, RunRequest)> = vec![
            ("to", RunRequest { to: Some(if v < 0.0 && v.is_finite() { f64::NAN } else { v }), ..Default::default() }),
            ("step", RunRequest { method: Some("rk4".into()), step: Some(v), ..req(1.0) }),
            ("tolerance.relative", RunRequest { tolerance: ToleranceRequest { relative: Some(v), absolute: None }, ..req(1.0) }),
            ("tolerance.absolute", RunRequest { tolerance: ToleranceRequest { relative: None, absolute: Some(v) }, ..req(1.0) }),
            ("startStep", RunRequest { start_step: Some(v), ..req(1.0) }),
            ("largestStep", RunRequest { largest_step: Some(v), ..req(1.0) }),
            ("stepLimit", RunRequest { step_limit: Some(v), ..req(1.0) }),
            ("outputLimit", RunRequest { output_limit: Some(v), ..req(1.0) }),
            ("at", RunRequest { at: Some(vec![0.0, v, 1.0]), ..req(1.0) }),
        ];
        for (what, r) in cases {
            let msg = error_of(DECAY, &r);
            assert!(!msg.is_empty(), "{what} = {v}");
        }
    }
    for v in bad {
        let msg = error_of(SWING, &RunRequest { event_limit: Some(v), ..req(10.0) });
        assert!(msg.contains("eventLimit"), "{msg}");
    }
}

#[test]
fn nan_and_infinite_values_in_the_sheet() {
    // NaN start value, parameter and rate: clear errors or a failed run.
    let r = api::solve("dy/dt = -y\ny(0) = sqrt(-1)\n", &req(1.0));
    assert!(r.is_err());
    let r = api::solve("k = 0/0\ndy/dt = -k*y\ny(0) = 1\n", &req(1.0)).unwrap();
    bounded(&r);
    assert_eq!(r.status, "failed");
    assert!(!r.error.unwrap_or_default().is_empty());
    let r = api::solve("dy/dt = 1/(1 - t)\ny(0) = 0\n", &req(2.0)).unwrap();
    bounded(&r);
    assert_eq!(r.status, "failed");
    let r = api::solve("dy/dt = y^2\ny(0) = 1\n", &req(2.0)).unwrap();
    bounded(&r);
    assert_eq!(r.status, "failed");
    // A NaN parameter override.
    let mut p = std::collections::BTreeMap::new();
    p.insert("k".to_string(), f64::NAN);
    let msg = error_of(DECAY, &RunRequest { params: Some(p), ..req(1.0) });
    assert!(msg.contains("`k`") && msg.contains("finite"), "{msg}");
    // A negative start time and a backward run are fine.
    let r = api::solve("dy/dt = -y\ny(-5) = 1\n", &req(-10.0)).unwrap();
    bounded(&r);
    assert_eq!(r.status, "finished");
}

/// 200 coupled states: a chain of first-order lags, u0 driven at 1.
fn chain(n: usize) -> String {
    let mut s = String::from("k = 2\n");
    for i in 0..n {
        let prev = if i == 0 { "1".to_string() } else { format!("u{}", i - 1) };
        s.push_str(&format!("du{i}/dt = k*({prev} - u{i})\nu{i}(0) = 0\n"));
    }
    s
}

#[test]
fn two_hundred_states() {
    let sheet = chain(200);
    for method in ["auto", "dormand-prince-5", "rk4", "dormand-prince-8"] {
        let step = (method == "rk4").then_some(0.01);
        let r = api::solve(&sheet, &RunRequest { method: Some(method.into()), step, step_limit: Some(20_000.0), ..req(10.0) }).unwrap();
        bounded(&r);
        assert_eq!(r.states.len(), 200);
        assert_eq!(r.status, "finished", "{method}: {:?}", r.error);
        assert!(r.stats.steps <= 20_000);
    }
    // Too many states is a sheet error with a position.
    match api::solve(&chain(201), &req(1.0)) {
        Err(ApiError::Sheet(e)) => assert!(e.message().contains("200"), "{}", e.message()),
        other => panic!("{:?}", other.map(|r| r.status)),
    }
}

#[test]
fn two_hundred_stiff_states_with_implicit_methods() {
    // The same chain, made stiff (rates up to 2e4), through every stiff method.
    let sheet = chain(200).replace("k = 2", "k = 2e4");
    for m in ratebook::solve::methods().iter().filter(|m| m.implicit) {
        let step = (!m.adaptive).then_some(0.001);
        let r = api::solve(&sheet, &RunRequest { method: Some(m.id.into()), step, step_limit: Some(200.0), ..req(0.05) }).unwrap();
        bounded(&r);
        assert!(r.stats.steps <= 200);
        assert!(r.stats.factorizations <= 10 * (r.stats.steps + r.stats.rejected) + 10, "{:?}", r.stats);
        assert!(r.t.len() <= MAX_OUTPUT);
    }
}

#[test]
fn output_is_decimated_with_a_note_not_exhausted() {
    let r = api::solve(SWING, &RunRequest { method: Some("euler".into()), step: Some(1e-4), output_limit: Some(1000.0), ..req(100.0) }).unwrap();
    bounded(&r);
    assert!(r.t.len() <= 1000, "{}", r.t.len());
    assert_eq!(r.t.last().copied(), Some(100.0));
    assert!(r.diagnostics.iter().any(|d| d.code == "decimated" && d.message.contains("1000")));
}

#[test]
fn events_are_capped_with_a_warning() {
    let r = api::solve(SWING, &RunRequest { event_limit: Some(3.0), ..req(1000.0) }).unwrap();
    bounded(&r);
    assert_eq!(r.events.len(), 3);
    assert!(r.diagnostics.iter().any(|d| d.code == "max-events"));
}
