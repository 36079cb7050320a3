//! Each pitfall is raised on a sheet built to show it, and not on a benign
//! control sheet.

use ratebook::api::study::{check_accuracy, AccuracyReport, StudyRequest};
use ratebook::api::{RunRequest, ToleranceRequest};

fn check(sheet: &str, to: f64, method: &str, step: Option<f64>, rtol: Option<f64>) -> AccuracyReport {
    let run = RunRequest { to: Some(to), method: Some(method.into()), step, tolerance: ToleranceRequest { relative: rtol, absolute: None }, ..Default::default() };
    check_accuracy(sheet, &StudyRequest { run, ..Default::default() }).unwrap()
}

fn codes(r: &AccuracyReport) -> Vec<&'static str> {
    r.report.pitfalls.iter().map(|p| p.code).collect()
}

fn has(r: &AccuracyReport, code: &str) -> bool {
    codes(r).contains(&code)
}

fn message<'a>(r: &'a AccuracyReport, code: &str) -> &'a str {
    &r.report.pitfalls.iter().find(|p| p.code == code).unwrap().message
}

/// Our own draining scenario: it empties at t = 2A·sqrt(h0)/(a·sqrt(2g)) ≈ 239.5 s
/// (analytic: Torricelli outflow, dh/dt = −(a/A)·sqrt(2gh)).
const TANK: &str = "A = 1.5\na = 0.004\ng = 9.81\nq = a*sqrt(2*g*h)\ndh/dt = -q/A\nh(0) = 2\nmark when h < 1\n";

/// The stiff scalar of the solver issue, with exact solution y = cos t.
const STIFF: &str = "y' = -1000*(y - cos(t)) - sin(t)\ny(0) = 1\n";

#[test]
fn benign_control_raises_nothing() {
    let r = check(TANK, 200.0, "auto", None, None);
    assert!(codes(&r).is_empty(), "{:?}", r.report.pitfalls);
    assert!(!r.report.alarm);
    assert!(r.report.verdict.starts_with("All 3 results are good to at least"), "{}", r.report.verdict);
    let ev = r.report.quantities.iter().find(|q| q.name == "h < 1").unwrap();
    // Event time h = 1: t = 2A(sqrt(2) − 1)/(a sqrt(2g)) = 70.1352… s (analytic, as above).
    let exact = 2.0 * 1.5 * (2f64.sqrt() - 1.0) / (0.004 * (2.0f64 * 9.81).sqrt());
    assert!((ev.value - exact).abs() <= 10.0 * ev.error.unwrap(), "{} {exact}", ev.value);
    assert!(ev.sentence.starts_with("event `h < 1` at t = 70.135"), "{}", ev.sentence);
    assert!(ev.digits >= 5);
}

#[test]
fn unstable_fixed_step_and_its_largest_stable_step() {
    let r = check(STIFF, 1.0, "rk4", Some(0.01), None);
    assert!(has(&r, "unstable-step"), "{:?}", codes(&r));
    let st = r.report.stability.as_ref().unwrap();
    // RK4's real stability limit 2.7853 (mpmath.findroot, see src/study/stability.rs) over |λ| = 1000.
    let h = st.largest_stable_step.unwrap();
    assert!((h - 2.785293563e-3).abs() < 1e-8, "{h}");
    assert!(st.points.iter().any(|p| (p.0 + 10.0).abs() < 1e-6), "{:?}", st.points);
    assert!(message(&r, "unstable-step").contains("0.00279"));
    // The control: h = 0.002 is inside the region.
    let ok = check(STIFF, 1.0, "rk4", Some(0.002), None);
    assert!(!has(&ok, "unstable-step"), "{:?}", ok.report.pitfalls);
    assert!(ok.report.stability.as_ref().unwrap().worst_growth <= 1.0);
}

#[test]
fn stiffness() {
    let r = check(STIFF, 10.0, "dormand-prince-5", None, None);
    assert!(has(&r, "stiff"), "{:?}", codes(&r));
    let p = r.report.pitfalls.iter().find(|p| p.code == "stiff").unwrap();
    // λ = −1000 over a run of 10: ratio 1e4 (analytic Jacobian).
    assert!((p.number.unwrap() - 1e4).abs() < 1.0, "{:?}", p.number);
    assert!(!has(&check(TANK, 200.0, "dormand-prince-5", None, None), "stiff"));
}

#[test]
fn finite_time_blow_up() {
    // y' = y², y(0) = 1: y = 1/(1 − t), infinite at t = 1 (analytic).
    let r = check("y' = y^2\ny(0) = 1\n", 2.0, "auto", None, None);
    assert!(has(&r, "blow-up"), "{:?}", r.report.pitfalls);
    let t = r.report.pitfalls.iter().find(|p| p.code == "blow-up").unwrap().number.unwrap();
    assert!((t - 1.0).abs() < 1e-3, "{t}");
    assert!(r.report.alarm);
    let ok = check("y' = y^2\ny(0) = 1\n", 0.9, "auto", None, None);
    assert!(!has(&ok, "blow-up"));
}

#[test]
fn leaving_the_formula_domain() {
    let r = check(TANK, 400.0, "auto", None, None);
    assert!(has(&r, "leaves-domain"), "{:?}", codes(&r));
    let m = message(&r, "leaves-domain");
    assert!(m.contains("max(h, 0)") && m.contains("stop when h < 0.02"), "{m}");
    let t = r.report.pitfalls.iter().find(|p| p.code == "leaves-domain").unwrap().t.unwrap();
    // Empties at 239.46 s (analytic, as above).
    assert!((t - 239.46).abs() < 0.5, "{t}");
    assert!(!has(&check(TANK, 200.0, "auto", None, None), "leaves-domain"));
}

#[test]
fn non_unique_start() {
    let r = check("y' = sqrt(y)\ny(0) = 0\n", 2.0, "auto", None, None);
    assert!(has(&r, "not-unique"), "{:?}", codes(&r));
    assert!(message(&r, "not-unique").contains("one solution"));
    let ok = check("y' = sqrt(y)\ny(0) = 1\n", 2.0, "auto", None, None);
    assert!(!has(&ok, "not-unique"), "{:?}", ok.report.pitfalls);
}

#[test]
fn tolerance_too_loose_for_the_digits_shown() {
    let r = check(TANK, 200.0, "dormand-prince-5", None, Some(1e-2));
    assert!(has(&r, "loose-tolerance"), "{:?}", codes(&r));
    assert!(message(&r, "loose-tolerance").contains("Tighten the relative tolerance"));
    assert!(!has(&check(TANK, 200.0, "dormand-prince-5", None, None), "loose-tolerance"));
}

/// x'' = −x from x = 1 at rest: x' = −sin t peaks at exactly 1 at t = 3π/2 (analytic),
/// so `x' > 1` is touched, never crossed; `x' > 0.5` is crossed cleanly.
const SWING: &str = "x'' = -x\nx(0) = 1\nx'(0) = 0\nmark when x' > COND\n";

#[test]
fn grazed_event() {
    let r = check(&SWING.replace("COND", "1"), 6.0, "auto", None, None);
    assert!(has(&r, "grazed"), "{:?}", codes(&r));
    let p = r.report.pitfalls.iter().find(|p| p.code == "grazed").unwrap();
    assert!((p.t.unwrap() - 1.5 * std::f64::consts::PI).abs() < 1e-2, "{:?}", p.t);
    let ok = check(&SWING.replace("COND", "0.5"), 6.0, "auto", None, None);
    assert!(!has(&ok, "grazed"), "{:?}", ok.report.pitfalls);
}

#[test]
fn chaotic_run_disagrees_with_its_check() {
    // Lorenz (σ = 10, ρ = 28, β = 8/3): nearby solutions separate like e^(0.9 t)
    // (the largest Lyapunov exponent ≈ 0.906, from memory), so at rtol 1e-3 the
    // state at t = 30 is not determined by the run.
    let lorenz = "x' = 10*(y - x)\ny' = x*(28 - z) - y\nz' = x*y - 8/3*z\nx(0) = 1\ny(0) = 1\nz(0) = 1\n";
    let r = check(lorenz, 30.0, "dormand-prince-5", None, Some(1e-3));
    assert!(r.report.alarm, "{}", r.report.verdict);
    assert!(r.report.verdict.starts_with("Do not trust"), "{}", r.report.verdict);
    assert!(!check(lorenz, 1.0, "dormand-prince-5", None, None).report.alarm);
}
