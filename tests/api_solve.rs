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

fn read(json: &str) -> Result<RunRequest, String> {
    serde_json::from_str::<RunRequest>(json).map_err(|e| e.to_string())
}

#[test]
fn every_setting_name_is_read() {
    let r = read(
        r#"{ "to": 5, "method": "dormand-prince-5", "step": 0.1, "tolerance": { "relative": 1e-7, "absolute": 1e-10 },
             "at": [0, 5], "stepLimit": 100, "outputLimit": 50, "eventLimit": 3, "startStep": 0.01,
             "largestStep": 0.5, "params": { "k": 2 } }"#,
    )
    .unwrap();
    assert_eq!(r.to, Some(5.0));
    assert_eq!(r.method.as_deref(), Some("dormand-prince-5"));
    assert_eq!((r.tolerance.relative, r.tolerance.absolute), (Some(1e-7), Some(1e-10)));
    assert_eq!((r.step_limit, r.output_limit, r.event_limit), (Some(100.0), Some(50.0), Some(3.0)));
    assert_eq!((r.start_step, r.largest_step), (Some(0.01), Some(0.5)));
    let s = api::settings(&r);
    assert_eq!((s.tol.relative, s.tol.absolute, s.max_steps, s.max_output, s.max_events), (1e-7, 1e-10, 100, 50, 3));
    assert_eq!((s.first_step, s.max_step), (Some(0.01), Some(0.5)));
    // Absent and null values take the defaults.
    let r = read(r#"{ "to": 1, "tolerance": null, "stepLimit": null }"#).unwrap();
    assert_eq!(r, RunRequest { to: Some(1.0), ..Default::default() });
    assert_eq!(api::settings(&read(r#"{ "tolerance": { "absolute": 1e-3 } }"#).unwrap()).tol.relative, 1e-6);
}

#[test]
fn a_misspelt_setting_names_the_one_meant() {
    for (json, name, meant) in [
        (r#"{ "to": 1, "rtoll": 1e-6 }"#, "rtoll", "tolerance.relative"),
        (r#"{ "to": 1, "stepLimt": 10 }"#, "stepLimit", "stepLimit"),
        (r#"{ "to": 1, "methd": "rk4" }"#, "methd", "method"),
        (r#"{ "to": 1, "relative": 1e-6 }"#, "relative", "tolerance.relative"),
        (r#"{ "to": 1, "tolerence": { "relative": 1e-6 } }"#, "tolerence", "tolerance"),
        (r#"{ "to": 1, "max_steps": 10 }"#, "max_steps", "stepLimit"),
        (r#"{ "to": 1, "tolerance": { "relativ": 1e-6 } }"#, "tolerance.relativ", "tolerance.relative"),
        (r#"{ "to": 1, "tolerance": { "abs": 1e-6 } }"#, "tolerance.abs", ""),
    ] {
        let e = read(json).unwrap_err();
        if meant.is_empty() {
            assert!(e.contains(&format!("unknown setting `{name}`; the settings are to, method,")), "{e}");
        } else if name != meant {
            assert!(e.contains(&format!("unknown setting `{name}`; did you mean `{meant}`?")), "{json}: {e}");
        } else {
            assert!(e.contains("did you mean `stepLimit`?"), "{e}");
        }
    }
    let e = read(r#"{ "colour": "red" }"#).unwrap_err();
    assert!(e.contains("unknown setting `colour`; the settings are to, method, step, tolerance.relative"), "{e}");
}

#[test]
fn the_former_names_point_at_the_new_ones() {
    // Format version 1's names (files and links still read them, in the page);
    // `solve` itself refuses them and names the replacement.
    for (old, new) in api::FORMER_NAMES {
        let e = read(&format!(r#"{{ "to": 1, "{old}": 1 }}"#)).unwrap_err();
        assert!(e.contains(&format!("the setting `{old}` has a new name: `{new}`")), "{e}");
    }
    let e = read(r#"{ "rtol": 1e-6 }"#).unwrap_err();
    assert!(e.contains("(write `tolerance: { relative: … }`)"), "{e}");
    let e = read(r#"{ "tolerance": { "atol": 1e-6 } }"#).unwrap_err();
    assert!(e.contains("the setting `tolerance.atol` has a new name: `tolerance.absolute`"), "{e}");
    for (old, new) in api::FORMER_METHOD_IDS {
        let e = read(&format!(r#"{{ "to": 1, "method": "{old}" }}"#)).unwrap_err();
        assert!(e.contains(&format!("the method id `{old}` has a new name: `{new}`")), "{e}");
        assert!(ratebook::solve::method(new).is_some(), "{new}");
        assert!(ratebook::solve::method(old).is_none(), "{old}");
    }
}

#[test]
fn method_ids_and_names_are_the_trade_names() {
    let ids: Vec<&str> = ratebook::solve::methods().iter().map(|m| m.id).collect();
    assert_eq!(
        ids,
        [
            "euler", "heun", "midpoint", "rk4", "bogacki-shampine-3", "dormand-prince-5", "dormand-prince-8",
            "backward-euler", "trapezoid", "rosenbrock-4", "radau-iia-5", "auto"
        ]
    );
    let name = |id| ratebook::solve::method(id).unwrap().name;
    assert_eq!(name("rosenbrock-4"), "Rosenbrock 4(3), L-stable");
    assert_eq!(name("radau-iia-5"), "Radau IIA, order 5");
    assert_eq!(name("auto"), "Switches explicit ⇄ implicit (Dormand–Prince 5(4) / Radau IIA)");
    // No name or summary names a published code (their references cite them as sources).
    for m in ratebook::solve::methods() {
        for text in [m.name, m.summary] {
            let lower = text.to_lowercase();
            for code in ["rodas", "radau5", "dopri5", "dop853"] {
                assert!(!lower.contains(code), "{}: {text}", m.id);
            }
        }
    }
}
