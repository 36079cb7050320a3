//! The accuracy verdict never contradicts its own evidence: tolerances that
//! ask for no digit are named as a pitfall, the check runs at tolerances that
//! do ask for digits whatever the run's, and two methods that disagree leave
//! no digit trusted. Each alarm has a benign control.

use ratebook::api::study::{check_accuracy, AccuracyReport, StudyRequest};
use ratebook::api::{RunRequest, ToleranceRequest};
use ratebook::study::check::{Kind, Quantity};

fn check(sheet: &str, run: RunRequest) -> AccuracyReport {
    check_accuracy(sheet, &StudyRequest { run, ..Default::default() }).unwrap()
}

fn has(r: &AccuracyReport, code: &str) -> bool {
    r.report.pitfalls.iter().any(|p| p.code == code)
}

fn final_of<'a>(r: &'a AccuracyReport, name: &str) -> &'a Quantity {
    r.report.quantities.iter().find(|q| q.kind == Kind::Final && q.name == name).unwrap()
}

/// A part cooling in still air, our own scenario: T' = -0.0021 (T - 22), T(0) = 180,
/// so T(t) = 22 + 158·exp(-0.0021 t) (analytic: Newton's law of cooling).
const COOLING: &str = "T' = -0.0021*(T - 22)\nT(0) = 180\nmark when T < 40\n";

fn cooling_exact(t: f64) -> f64 {
    22.0 + 158.0 * (-0.0021 * t).exp()
}

/// When T = 40: t = ln(158/18)/0.0021 (analytic, as above).
fn cooling_alarm_time() -> f64 {
    (158.0f64 / 18.0).ln() / 0.0021
}

#[test]
fn an_atol_typed_1e9_is_named_and_the_check_runs_at_sane_tolerances() {
    let r = check(COOLING, RunRequest { to: Some(1200.0), tolerance: ToleranceRequest { absolute: Some(1e9), ..Default::default() }, ..Default::default() });
    let rep = &r.report;
    // The pitfall in words: what was seen, what it means, what to do.
    assert!(has(&r, "tolerance-dwarfs-values"), "{:?}", rep.pitfalls);
    let p = rep.pitfalls.iter().find(|p| p.code == "tolerance-dwarfs-values").unwrap();
    assert_eq!(rep.pitfalls[0].code, "tolerance-dwarfs-values");
    assert!(p.message.contains("absolute tolerance 1e9"), "{}", p.message);
    assert!(p.message.contains("1e9 looks like 1e-9"), "{}", p.message);
    assert!(p.message.contains("no correct digit"), "{}", p.message);
    // The verdict says so, and no quantity claims a digit.
    assert!(rep.alarm);
    assert!(rep.verdict.starts_with("Do not trust"), "{}", rep.verdict);
    assert!(!rep.verdict.contains("good to"), "{}", rep.verdict);
    let t = final_of(&r, "T");
    assert_eq!(t.digits, 0, "{}", t.sentence);
    // The run is far off T(1200) = 34.7126 (analytic, as above) ...
    let exact = cooling_exact(1200.0);
    assert!((exact - 34.7126).abs() < 1e-4);
    assert!((t.value - exact).abs() > 1.0, "{}", t.value);
    // ... and the check, at sane tolerances, is not: its error estimate covers the run's real error.
    let c = t.check.unwrap();
    assert!((c - exact).abs() < 1e-6 * exact, "{c} against {exact}");
    assert!(t.error.unwrap() >= 0.9 * (t.value - exact).abs());
    assert!(!rep.how.contains("1e7"), "{}", rep.how);
    // The lost alarm event is found by the check.
    assert!(has(&r, "event-mismatch"), "{:?}", rep.pitfalls);
    let lost = &rep.pitfalls.iter().find(|p| p.code == "event-mismatch").unwrap().message;
    assert!(lost.contains("T < 40"), "{lost}");
}

#[test]
fn rtol_1e300_is_named_too() {
    // y' = -y from 1: y(10) = exp(-10) = 4.539993e-5 (analytic).
    let r = check("y' = -y\ny(0) = 1\n", RunRequest { to: Some(10.0), tolerance: ToleranceRequest { relative: Some(1e300), ..Default::default() }, ..Default::default() });
    let rep = &r.report;
    assert!(has(&r, "tolerance-dwarfs-values"), "{:?}", rep.pitfalls);
    assert!(rep.verdict.starts_with("Do not trust"), "{}", rep.verdict);
    let y = final_of(&r, "y");
    let exact = (-10.0f64).exp();
    assert_eq!(y.digits, 0, "{}", y.sentence);
    assert!((y.check.unwrap() - exact).abs() < 1e-6 * exact, "{:?} against {exact}", y.check);
    assert!(!has(&r, "loose-tolerance"), "the tolerance pitfall says it all: {:?}", rep.pitfalls);
}

#[test]
fn sane_tolerances_raise_no_tolerance_pitfall() {
    // The default tolerances: the alarm event at t = 1034.39 and T(1200) = 34.7126 (analytic, as above).
    let r = check(COOLING, RunRequest { to: Some(1200.0), ..Default::default() });
    assert!(r.report.pitfalls.is_empty(), "{:?}", r.report.pitfalls);
    assert!(!r.report.alarm, "{}", r.report.verdict);
    let t = final_of(&r, "T");
    assert!((t.value - cooling_exact(1200.0)).abs() < 1e-5 * cooling_exact(1200.0));
    assert!(t.digits >= 5, "{}", t.sentence);
    let ev = r.report.quantities.iter().find(|q| q.kind == Kind::EventTime).unwrap();
    assert!((ev.value - cooling_alarm_time()).abs() < 1e-3, "{}", ev.value);
    assert!(r.report.how.starts_with("re-solved with the tolerances 100 times tighter"), "{}", r.report.how);
    // Loose but meaningful: a hundredth of a degree, and rtol 5 %.
    for run in [
        RunRequest { to: Some(1200.0), tolerance: ToleranceRequest { absolute: Some(0.01), ..Default::default() }, ..Default::default() },
        RunRequest { to: Some(1200.0), tolerance: ToleranceRequest { relative: Some(0.05), ..Default::default() }, ..Default::default() },
    ] {
        let r = check(COOLING, run);
        assert!(!has(&r, "tolerance-dwarfs-values"), "{:?}", r.report.pitfalls);
        assert!(r.report.how.starts_with("re-solved with the tolerances 100 times tighter"), "{}", r.report.how);
    }
}

#[test]
fn the_verdict_never_contradicts_the_cross_check() {
    // Whatever the settings, a cross check that finds no digit in common means
    // an alarm and a verdict that does not vouch for any digit of those values.
    let cases = [
        (COOLING, RunRequest { to: Some(1200.0), tolerance: ToleranceRequest { absolute: Some(1e9), ..Default::default() }, ..Default::default() }),
        ("y' = -y\ny(0) = 1\n", RunRequest { to: Some(10.0), tolerance: ToleranceRequest { relative: Some(1e300), ..Default::default() }, ..Default::default() }),
        (COOLING, RunRequest { to: Some(1200.0), ..Default::default() }),
    ];
    for (sheet, run) in cases {
        let r = check(sheet, run);
        let Some(cross) = &r.report.cross else { panic!("no cross check") };
        let unsettled: Vec<&String> = cross.agreement.iter().filter(|a| a.1 == 0).map(|a| &a.0).collect();
        if unsettled.is_empty() {
            continue;
        }
        assert!(r.report.alarm && r.report.verdict.starts_with("Do not trust"), "{}", r.report.verdict);
        for q in &r.report.quantities {
            let key = ratebook::study::check::Key { kind: q.kind, name: q.name.clone(), occurrence: q.occurrence };
            if unsettled.contains(&&ratebook::study::check::label(&key)) {
                assert_eq!(q.digits, 0, "{}", q.sentence);
            }
        }
    }
}
