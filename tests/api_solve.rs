//! The JS API's request and report, natively.

use ratebook::api::{self, ApiError, RunRequest};

const TANK: &str = "\
# Settling tank drained through a bottom orifice
A  = 1.5                 # tank cross-section, m^2
a  = 0.004               # orifice area, m^2
g  = 9.81
q  = a*sqrt(2*g*h)       # outflow
dh/dt = -q/A
h(0) = 2
stop when h < 0.05
mark when h < 1
";

/// Torricelli drain, analytic: sqrt(h) = sqrt(h0) - a/(2A)·sqrt(2g)·t, so the
/// time to fall from h0 to h is (sqrt(h0) - sqrt(h))·2A/(a·sqrt(2g)).
fn drain_time(h: f64) -> f64 {
    (2f64.sqrt() - h.sqrt()) * 2.0 * 1.5 / (0.004 * (2.0 * 9.81f64).sqrt())
}

#[test]
fn tank_events_match_the_closed_form() {
    let req = RunRequest { to: Some(1000.0), ..Default::default() };
    let run = api::solve(TANK, &req).unwrap();
    assert_eq!(run.status, "stopped");
    assert_eq!(run.method, "auto");
    assert_eq!(run.events.len(), 2);
    assert_eq!(run.events[0].name, "h < 1");
    assert!((run.events[0].t - drain_time(1.0)).abs() < 1e-5 * drain_time(1.0), "{}", run.events[0].t);
    assert_eq!(run.events[1].name, "h < 0.05");
    assert!((run.events[1].t - drain_time(0.05)).abs() < 1e-5 * drain_time(0.05));
    assert_eq!(run.states, ["h"]);
    assert_eq!(run.helpers, ["q"]);
    let json = serde_json::to_value(&run).unwrap();
    assert!(json["values"]["q"].is_array());
    assert!(json["events"][0]["values"]["h"].is_number());
    assert!(json["stats"]["rhsEvals"].as_u64().unwrap() > 0);
}

#[test]
fn parameters_can_be_overridden() {
    let mut params = std::collections::BTreeMap::new();
    params.insert("a".to_string(), 0.008);
    let req = RunRequest { to: Some(1000.0), params: Some(params), ..Default::default() };
    let run = api::solve(TANK, &req).unwrap();
    // Twice the orifice area halves the drain time (closed form above).
    assert!((run.events[0].t - drain_time(1.0) / 2.0).abs() < 1e-4);
    let mut bad = std::collections::BTreeMap::new();
    bad.insert("nope".to_string(), 1.0);
    let req = RunRequest { to: Some(10.0), params: Some(bad), ..Default::default() };
    assert!(matches!(api::solve(TANK, &req), Err(ApiError::Settings(_))));
}

#[test]
fn sheet_errors_carry_line_and_column() {
    let req = RunRequest { to: Some(10.0), ..Default::default() };
    match api::solve("x' = -k*x\nx(0) = 1\n", &req) {
        Err(ApiError::Sheet(e)) => {
            assert_eq!((e.line, e.column), (1, 7));
            assert!(e.message().contains('k'));
        }
        other => panic!("expected a sheet error, got {other:?}"),
    }
}

#[test]
fn a_missing_end_is_a_settings_error() {
    assert!(matches!(api::solve(TANK, &RunRequest::default()), Err(ApiError::Settings(_))));
}
