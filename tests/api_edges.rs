//! Edges of a run as the API reports it: a constant huge solution is no
//! blow-up, a `stop when` that already holds at the start is named, a run
//! that did not finish says how far it got, a value that overflows comes out
//! as null with a note, and too many output times are refused as the request
//! is read. Each with a benign control.

use ratebook::api::{self, RunReport, RunRequest};

fn solve(sheet: &str, req: RunRequest) -> RunReport {
    api::solve(sheet, &req).unwrap()
}

fn to(t: f64) -> RunRequest {
    RunRequest { to: Some(t), ..Default::default() }
}

fn codes(r: &RunReport) -> Vec<&'static str> {
    r.diagnostics.iter().map(|d| d.code).collect()
}

#[test]
fn a_huge_constant_solution_is_no_blow_up() {
    // a' = 0, b' = 0: a and b stay at ±1e308 for ever (analytic).
    let r = solve("a' = 0\na(0) = 1e308\nb' = 0\nb(0) = -1e308\n", to(10.0));
    assert_eq!(r.status, "finished", "{:?}", r.error);
    assert!(!codes(&r).contains(&"blow-up"), "{:?}", r.diagnostics);
    assert_eq!(*r.t.last().unwrap(), 10.0);
    assert!(r.values.0.iter().all(|(n, v)| v.iter().all(|&x| x == if n == "a" { 1e308 } else { -1e308 })));
    // Control: y' = y², y(0) = 1 blows up at t = 1 (analytic: y = 1/(1 − t)).
    let r = solve("y' = y^2\ny(0) = 1\n", to(2.0));
    assert_eq!(r.status, "failed");
    assert!(codes(&r).contains(&"blow-up"), "{:?}", r.diagnostics);
    let t = r.reached.unwrap();
    assert!((t - 1.0).abs() < 1e-3, "{t}");
}

#[test]
fn a_stop_that_already_holds_at_the_start_is_named() {
    let r = solve("y' = -y\ny(0) = 1\nstop when y < 2\n", to(5.0));
    assert_eq!(r.status, "finished");
    let d = r.diagnostics.iter().find(|d| d.code == "stop-true-at-start").expect("a note");
    assert!(d.message.contains("`stop when y < 2` already holds at the start"), "{}", d.message);
    assert_eq!(d.t, Some(0.0));
    // Controls: a stop that becomes true ends the run at y = 0.5, t = ln 2 (analytic),
    // with no such note; a mark that holds at the start is no stop.
    let r = solve("y' = -y\ny(0) = 1\nstop when y < 0.5\n", to(5.0));
    assert_eq!(r.status, "stopped");
    assert!(!codes(&r).contains(&"stop-true-at-start"), "{:?}", r.diagnostics);
    assert!((r.reached.unwrap() - 2f64.ln()).abs() < 1e-6, "{:?}", r.reached);
    let r = solve("y' = -y\ny(0) = 1\nmark when y < 2\n", to(5.0));
    assert!(!codes(&r).contains(&"stop-true-at-start"), "{:?}", r.diagnostics);
}

#[test]
fn a_failed_run_says_how_far_it_got_past_its_last_output_time() {
    // Output asked for at 0, 5 and 10 only; y' = y² from 1 blows up at t = 1 (analytic).
    let req = RunRequest { at: Some(vec![0.0, 5.0, 10.0]), ..to(10.0) };
    let r = solve("y' = y^2\ny(0) = 1\n", req);
    assert_eq!(r.status, "failed");
    assert_eq!(r.t, vec![0.0]);
    let t = r.reached.unwrap();
    assert!((t - 1.0).abs() < 1e-3, "{t}");
    assert_eq!(r.diagnostics.last().unwrap().t, Some(t));
    // Control: a run that finishes reached its end, and says nothing more.
    assert_eq!(solve("y' = -y\ny(0) = 1\n", to(1.0)).reached, None);
}

#[test]
fn a_helper_that_overflows_has_no_peak_but_a_note() {
    // q = exp(y) with y = t (analytic) passes the largest double, 1.797e308, at t = ln(1.797e308) = 709.78.
    let r = solve("q = exp(y)\ny' = 1\ny(0) = 0\n", to(1000.0));
    assert_eq!(r.status, "finished");
    let q = r.extrema.iter().find(|x| x.name == "q").unwrap();
    assert_eq!(q.max, None);
    assert_eq!(q.min, Some(1.0));
    assert!(q.t_max >= f64::MAX.ln() && q.t_max <= 1000.0, "{}", q.t_max);
    let d = r.diagnostics.iter().find(|d| d.code == "overflow").expect("a note");
    assert!(d.message.starts_with("`q` grows past the largest number"), "{}", d.message);
    assert_eq!(d.t, Some(q.t_max));
    // The report is well-formed JSON: the missing peak is null, not a non-number.
    let json = serde_json::to_value(&r.extrema).unwrap();
    assert!(json[1]["max"].is_null() && json[1]["min"] == 1.0, "{json}");
    // Control: below the limit the peak is exp(700) (analytic) and nothing is said.
    let r = solve("q = exp(y)\ny' = 1\ny(0) = 0\n", to(700.0));
    let q = r.extrema.iter().find(|x| x.name == "q").unwrap();
    assert!((q.max.unwrap() / 700f64.exp() - 1.0).abs() < 1e-6, "{:?}", q.max);
    assert!(!codes(&r).contains(&"overflow"), "{:?}", r.diagnostics);
}

#[test]
fn too_many_output_times_are_refused_as_the_request_is_read() {
    let limit = ratebook::solve::CEILING_OUTPUT;
    let many = format!("{{\"to\": 1, \"at\": [{}0]}}", "0,".repeat(limit));
    let e = serde_json::from_str::<RunRequest>(&many).unwrap_err().to_string();
    assert!(e.contains(&format!("at most {limit} can be kept")), "{e}");
    // Controls: a few times, null, or none at all.
    let r: RunRequest = serde_json::from_str("{\"to\": 1, \"at\": [0, 0.5, 1]}").unwrap();
    assert_eq!(r.at, Some(vec![0.0, 0.5, 1.0]));
    let r: RunRequest = serde_json::from_str("{\"to\": 1, \"at\": null}").unwrap();
    assert_eq!(r.at, None);
    let r: RunRequest = serde_json::from_str("{\"to\": 1}").unwrap();
    assert_eq!(r.at, None);
    let exactly = format!("{{\"to\": 1, \"at\": [{}0]}}", "0,".repeat(limit - 1));
    assert_eq!(serde_json::from_str::<RunRequest>(&exactly).unwrap().at.map(|a| a.len()), Some(limit));
}
