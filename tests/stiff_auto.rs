//! `auto`: switches to the implicit method on stiff problems within a work
//! budget no explicit method meets, stays explicit on a nonstiff orbit, and
//! keeps events, `at` output, extrema and non-finite handling across switches.
//! Each check names its source.

use ratebook::problem::{Crossing, EventAction, EventSpec, Problem};
use ratebook::problems::stiff::{Robertson, VanDerPol, ROBERTSON_AT_1E5, VAN_DER_POL_1000_AT_3000};
use ratebook::problems::{by_name, FnProblem};
use ratebook::solve::{solve, Level, Run, Settings, SolveError, Stats, Status, Tolerance};

/// Work of a run: evaluations of the rates plus `K` per Jacobian and per
/// factorization (a dense Jacobian or LU of a small system costs a few
/// evaluations' worth; K = 10 is generous to the explicit side).
const K: u64 = 10;

fn work(s: &Stats) -> u64 {
    s.rhs_evals + K * (s.jacobians + s.factorizations)
}

fn settings(method: &str, to: f64, rtol: f64, atol: f64) -> Settings {
    Settings { method: method.into(), to, tol: Tolerance { relative: rtol, absolute: atol }, ..Settings::default() }
}

fn switches(run: &Run) -> Vec<f64> {
    run.diagnostics
        .iter()
        .filter(|d| d.code == "method-switch")
        .map(|d| {
            assert_eq!(d.level, Level::Info, "{}", d.message);
            d.t.expect("a switch has its t")
        })
        .collect()
}

fn last(run: &Run) -> Vec<f64> {
    run.states.iter().map(|s| *s.last().expect("output")).collect()
}

/// `auto` finishes within `budget`; Dormand–Prince 5(4) alone, given the same
/// budget entirely as rate evaluations (it needs no Jacobians), runs out of
/// steps far from the end.
fn within_budget_where_explicit_is_not(make: fn() -> Box<dyn Problem>, y0: &[f64], s: Settings, budget: u64) -> Run {
    let auto = solve(make().as_mut(), 0.0, y0, &s).unwrap();
    assert_eq!(auto.status, Status::Finished);
    assert!(work(&auto.stats) <= budget, "auto work {} > {budget}: {:?}", work(&auto.stats), auto.stats);
    assert!(!switches(&auto).is_empty(), "auto should switch to the implicit method");
    // auto acts on the stiffness verdict; it does not warn about it.
    assert!(!auto.diagnostics.iter().any(|d| d.code == "stiff"), "{:?}", auto.diagnostics);
    // Dormand–Prince uses 6 evaluations per step (FSAL), so budget/6 steps is
    // the whole budget.
    let explicit = Settings { method: "dormand-prince-5".into(), max_steps: budget / 6, ..s.clone() };
    let dp = solve(make().as_mut(), 0.0, y0, &explicit).unwrap();
    let Status::Failed(SolveError::MaxSteps { t, .. }) = dp.status else { panic!("dormand-prince-5 should run out of steps: {:?}", dp.status) };
    assert!(t < 0.5 * s.to, "dormand-prince-5 got to t = {t} of {}", s.to);
    assert!(work(&dp.stats) >= budget - 10);
    auto
}

#[test]
fn auto_solves_van_der_pol_1000_within_budget() {
    // Reference: tests/reference/stiff_reference.py (SciPy Radau, rtol 1e-13).
    let run = within_budget_where_explicit_is_not(
        || Box::new(VanDerPol::new(1000.0)),
        &[2.0, 0.0],
        settings("auto", 3000.0, 1e-6, 1e-6),
        30_000,
    );
    let err = (last(&run)[0] - VAN_DER_POL_1000_AT_3000[0]).abs();
    assert!(err < 1e-4, "y1 error {err}");
}

#[test]
fn auto_solves_robertson_within_budget() {
    // Reference: tests/reference/stiff_reference.py; conservation is exact (analytic).
    let run = within_budget_where_explicit_is_not(
        || Box::new(Robertson::default()),
        &[1.0, 0.0, 0.0],
        settings("auto", 1e5, 1e-6, 1e-10),
        10_000,
    );
    let y = last(&run);
    for i in 0..3 {
        assert!(((y[i] - ROBERTSON_AT_1E5[i]) / ROBERTSON_AT_1E5[i]).abs() < 1e-3, "y{}", i + 1);
    }
    assert!((y.iter().sum::<f64>() - 1.0).abs() < 1e-12);
}

#[test]
fn auto_stays_explicit_on_the_arenstorf_orbit() {
    // The orbit returns to its start after one period (Hairer, Nørsett &
    // Wanner, Solving ODEs I, Sec. II.0; from memory, as in the shared set).
    let p = by_name("arenstorf").expect("arenstorf in the shared set");
    let s = Settings { method: "auto".into(), to: p.t_end, ..Settings::default() };
    let run = solve((p.make)().as_mut(), p.t0, &p.y0, &s).unwrap();
    assert_eq!(run.status, Status::Finished);
    assert!(switches(&run).is_empty(), "{:?}", run.diagnostics);
    assert!(!run.diagnostics.iter().any(|d| d.code == "stiff"));
    assert_eq!((run.stats.jacobians, run.stats.factorizations), (0, 0));
    let y = last(&run);
    let reference = p.reference.unwrap();
    assert!((y[0] - reference[0]).abs() < 1e-3 && (y[1] - reference[1]).abs() < 1e-3, "{y:?}");
}

/// Van der Pol μ = 1000 with a `mark when y1 = 0` event.
fn marked_van_der_pol() -> FnProblem<impl FnMut(f64, &[f64], &mut [f64])> {
    let mut vdp = VanDerPol::new(1000.0);
    let mut jac = vdp.clone();
    let event = EventSpec { name: "y1 = 0".into(), action: EventAction::Mark, crossing: Crossing::Either };
    FnProblem::new(&["y1", "y2"], move |t, y: &[f64], dy: &mut [f64]| vdp.rhs(t, y, dy))
        .with_jacobian(move |t, y, j| {
            jac.jacobian(t, y, j);
        })
        .with_events(vec![event], |_t, y, g| g[0] = y[0])
}

fn reference_at(times: &[f64]) -> Vec<Vec<f64>> {
    // tests/reference/stiff_reference.json, written by stiff_reference.py.
    let text = std::fs::read_to_string(concat!(env!("CARGO_MANIFEST_DIR"), "/tests/reference/stiff_reference.json")).unwrap();
    let json: serde_json::Value = serde_json::from_str(&text).unwrap();
    let p = &json["problems"]["van_der_pol_1000"];
    let ts: Vec<f64> = p["times"].as_array().unwrap().iter().map(|v| v.as_f64().unwrap()).collect();
    times
        .iter()
        .map(|t| {
            let k = ts.iter().position(|x| x == t).unwrap();
            p["radau"][k].as_array().unwrap().iter().map(|v| v.as_f64().unwrap()).collect()
        })
        .collect()
}

#[test]
fn events_at_output_and_extrema_are_kept_across_switches() {
    let at = vec![1000.0, 2000.0, 3000.0];
    let s = |m: &str| Settings { at: Some(at.clone()), ..settings(m, 3000.0, 1e-8, 1e-8) };
    let auto = solve(&mut marked_van_der_pol(), 0.0, &[2.0, 0.0], &s("auto")).unwrap();
    let radau = solve(&mut marked_van_der_pol(), 0.0, &[2.0, 0.0], &s("radau-iia-5")).unwrap();
    assert_eq!(auto.status, Status::Finished);
    assert!(switches(&auto).len() >= 2, "auto should switch in and out: {:?}", switches(&auto));
    // `at` output: exactly the requested times, values against the SciPy reference.
    assert_eq!(auto.t, at);
    for (k, r) in reference_at(&at).iter().enumerate() {
        assert!((auto.states[0][k] - r[0]).abs() < 1e-5, "y1 at {}: {} vs {}", at[k], auto.states[0][k], r[0]);
    }
    // Events: y1 crosses zero once per relaxation jump, three times on
    // [0, 3000] (period ≈ (3 - 2 ln 2)μ ≈ 1614; common practice, no source);
    // auto and radau-iia-5 alone locate the same times.
    assert_eq!(auto.events.len(), 3, "{:?}", auto.events);
    assert_eq!(radau.events.len(), 3);
    for (a, b) in auto.events.iter().zip(&radau.events) {
        assert!((a.t - b.t).abs() < 1e-3, "event at {} vs {}", a.t, b.t);
        assert!(a.states[0].abs() < 1e-6);
    }
    // Extrema agree between the two runs.
    for (a, b) in auto.extrema.iter().zip(&radau.extrema) {
        let close = |x: f64, y: f64| (x - y).abs() <= 1e-6 * x.abs().max(1.0);
        assert!(close(a.max, b.max) && close(a.min, b.min), "{a:?} vs {b:?}");
    }
    let y1 = &auto.extrema[0];
    assert!((y1.max - 2.0).abs() < 0.02 && (y1.min + 2.0).abs() < 0.02, "{y1:?}");
}

#[test]
fn non_finite_rates_after_a_switch_fail_plainly() {
    // Robertson with a rate that turns NaN after t = 50 (0·sqrt(50 - t)):
    // auto has switched to the implicit method long before, and the run must
    // fail with the driver's non-finite diagnosis near t = 50, keeping the
    // trajectory up to there.
    let mut rob = Robertson::default();
    let mut p = FnProblem::new(&["y1", "y2", "y3"], move |t, y: &[f64], dy: &mut [f64]| {
        rob.rhs(t, y, dy);
        dy[2] += 0.0 * (50.0 - t).sqrt();
    });
    let run = solve(&mut p, 0.0, &[1.0, 0.0, 0.0], &settings("auto", 1e3, 1e-6, 1e-10)).unwrap();
    let sw = switches(&run);
    assert!(!sw.is_empty() && sw[0] < 50.0);
    let Status::Failed(e) = &run.status else { panic!("should fail: {:?}", run.status) };
    assert_eq!(e.code(), "non-finite", "{e}");
    let t_end = *run.t.last().unwrap();
    assert!(t_end <= 50.0 && t_end > 40.0, "trajectory kept up to {t_end}");
}
