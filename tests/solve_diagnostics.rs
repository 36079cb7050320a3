//! Diagnostics and failures: blow-up, non-finite rates, unstable fixed steps,
//! stiffness, step limits, invalid settings, and no panics on odd input.

use ratebook::problem::NonFiniteCause;
use ratebook::problems::nonstiff::*;
use ratebook::problems::FnProblem;
use ratebook::solve::{solve, Settings, SolveError, Status, Tolerance};

#[test]
fn quadratic_growth_blows_up_near_t_equals_one() {
    // Analytic: y' = y², y(0) = 1 has y = 1/(1 − t), which blows up at t = 1.
    for m in ["dormand-prince-5", "bogacki-shampine-3", "dormand-prince-8"] {
        let mut p = FnProblem::new(&["y"], |_t, y: &[f64], dy: &mut [f64]| dy[0] = y[0] * y[0]);
        let r = solve(&mut p, 0.0, &[1.0], &Settings { method: m.into(), to: 2.0, ..Settings::default() }).unwrap();
        match &r.status {
            Status::Failed(SolveError::BlowUp { t, .. }) => assert!((t - 1.0).abs() < 1e-3, "{m}: {t}"),
            other => panic!("{m}: {other:?}"),
        }
        let d = r.diagnostics.iter().find(|d| d.code == "blow-up").unwrap();
        assert!(d.message.contains("blow up near t ≈ 1"), "{}", d.message);
        // The trajectory up to the failure is kept and follows 1/(1 − t).
        assert!(r.t.len() > 10);
        for (k, t) in r.t.iter().enumerate().filter(|(_, t)| **t < 0.99) {
            assert!((r.states[0][k] - 1.0 / (1.0 - t)).abs() < 1e-4 / (1.0 - t).powi(2), "{m} t = {t}");
        }
    }
}

#[test]
fn a_non_finite_rate_is_named_with_time_and_states() {
    // Euler at h = 50 overshoots the empty time of the tank (≈ 90 s, closed form):
    // after one step the level is 4 − 50·0.01·√(2·9.81·4) < 0 and the next rate
    // takes the root of a negative level: the model names `q`.
    let mut p = FnProblem::new(&["h"], tank_rhs).with_explain(|_t, y| {
        (y[0] < 0.0).then(|| NonFiniteCause { name: "q".into(), what: "sqrt of a negative number".into() })
    });
    let s = Settings { method: "euler".into(), to: 500.0, step: Some(50.0), ..Settings::default() };
    let r = solve(&mut p, 0.0, &[4.0], &s).unwrap();
    let Status::Failed(SolveError::NonFinite { t, cause, states, .. }) = &r.status else { panic!("{:?}", r.status) };
    assert_eq!(*t, 50.0);
    assert_eq!(cause.as_ref().unwrap().name, "q");
    assert!(states[0].1 < 0.0);
    let msg = &r.diagnostics.iter().find(|d| d.code == "non-finite").unwrap().message;
    assert!(msg.starts_with("sqrt of a negative number in `q` at t = 50 (h = 50); there h = -0.4"), "{msg}");
    // The trajectory before the failure is kept.
    assert_eq!(r.t, vec![0.0, 50.0]);
}

#[test]
fn an_adaptive_run_past_the_empty_tank_fails_with_its_trajectory() {
    let mut p = FnProblem::new(&["h"], tank_rhs).with_explain(|_t, y| {
        (y[0] < 0.0).then(|| NonFiniteCause { name: "q".into(), what: "sqrt of a negative number".into() })
    });
    let r = solve(&mut p, 0.0, &[4.0], &Settings { to: 500.0, ..Settings::default() }).unwrap();
    assert!(matches!(r.status, Status::Failed(_)), "{:?}", r.status);
    // It gets to within a second of the closed-form empty time 2√h0/((a/A)√(2g)).
    let empty = tank_time_to(0.0);
    assert!((r.t.last().unwrap() - empty).abs() < 1.0, "{} vs {empty}", r.t.last().unwrap());
}

/// y' = −1000 (y − cos t) − sin t: exact solution y = cos t (analytic); λ = −1000.
fn stiff_cosine(exact_jacobian: bool) -> Box<dyn ratebook::problem::Problem> {
    let p = FnProblem::new(&["y"], |t: f64, y: &[f64], dy: &mut [f64]| dy[0] = -1000.0 * (y[0] - t.cos()) - t.sin());
    if exact_jacobian {
        Box::new(p.with_jacobian(|_t, _y, j| j[0] = -1000.0))
    } else {
        Box::new(p)
    }
}

#[test]
fn rk4_warns_when_the_fixed_step_is_outside_its_stability_region() {
    // RK4's real stability limit is about 2.785 (Hairer & Wanner, Solving ODEs II,
    // Sec. IV.2; from memory), so with λ = −1000 the largest stable h is about 0.002785.
    for exact in [true, false] {
        let mut p = stiff_cosine(exact);
        let s = Settings { method: "rk4".into(), to: 0.1, step: Some(0.01), ..Settings::default() };
        let r = solve(&mut *p, 0.0, &[1.0], &s).unwrap();
        let d = r.diagnostics.iter().find(|d| d.code == "unstable-step").expect("warning");
        assert!(d.message.contains("largest stable step there is about h = 0.0027"), "{}", d.message);
        let mut p = stiff_cosine(exact);
        let s = Settings { method: "rk4".into(), to: 0.1, step: Some(0.002), ..Settings::default() };
        let r = solve(&mut *p, 0.0, &[1.0], &s).unwrap();
        assert!(r.diagnostics.iter().all(|d| d.code != "unstable-step"), "{:?}", r.diagnostics);
        assert!((r.states[0].last().unwrap() - 0.1f64.cos()).abs() < 1e-6);
    }
}

#[test]
fn dp54_detects_stiffness_and_points_to_the_stiff_methods() {
    // Hairer's test on the stage differences (Hairer & Wanner, Solving ODEs II, Sec. IV.2).
    let mut p = stiff_cosine(false);
    let r = solve(&mut *p, 0.0, &[1.0], &Settings { to: 10.0, ..Settings::default() }).unwrap();
    assert_eq!(r.status, Status::Finished);
    let d = r.diagnostics.iter().find(|d| d.code == "stiff").expect("stiffness warning");
    assert!(d.message.contains("sized by its stability limit, not by the tolerance"), "{}", d.message);
    assert!(d.message.contains("Choose an implicit method"), "{}", d.message);
    // A non-stiff problem gives no such warning.
    let mut p = FnProblem::new(&["x", "y", "vx", "vy"], arenstorf_rhs);
    let r = solve(&mut p, 0.0, &ARENSTORF_Y0, &Settings { to: ARENSTORF_PERIOD, ..Settings::default() }).unwrap();
    assert!(r.diagnostics.iter().all(|d| d.code != "stiff"));
}

#[test]
fn the_step_limit_keeps_the_partial_result() {
    let mut p = FnProblem::new(&["y"], logistic_rhs);
    let r = solve(&mut p, 0.0, &[0.5], &Settings { to: 10.0, max_steps: 10, ..Settings::default() }).unwrap();
    assert_eq!(r.status, Status::Failed(SolveError::MaxSteps { t: r.t[10], steps: 10 }));
    assert_eq!(r.t.len(), 11);
    assert!(r.diagnostics.iter().any(|d| d.code == "max-steps"));
}

#[test]
fn long_runs_are_decimated_with_a_note() {
    let mut p = FnProblem::new(&["x", "v"], oscillator_rhs);
    let s = Settings { to: 40.0, max_output: 16, tol: Tolerance { relative: 1e-10, absolute: 1e-10 }, ..Settings::default() };
    let r = solve(&mut p, 0.0, &[1.0, 0.0], &s).unwrap();
    assert!(r.t.len() <= 16 && r.t.len() >= 8, "{}", r.t.len());
    assert_eq!(r.t[0], 0.0);
    assert_eq!(*r.t.last().unwrap(), 40.0);
    assert!(r.stats.steps > 16);
    assert!(r.diagnostics.iter().any(|d| d.code == "decimated"));
    let ex = oscillator_exact(40.0);
    assert!((r.states[0].last().unwrap() - ex[0]).abs() < 1e-7);
}

#[test]
fn invalid_settings_are_errors_naming_the_field() {
    let field = |s: Settings, y0: &[f64]| {
        let mut p = FnProblem::new(&["y"], logistic_rhs);
        match solve(&mut p, 0.0, y0, &s) {
            Err(SolveError::InvalidSettings { field, .. }) => field,
            other => panic!("{other:?}"),
        }
    };
    let d = Settings::default;
    assert_eq!(field(Settings { method: "nope".into(), ..d() }, &[1.0]), "method");
    assert_eq!(field(Settings { method: "rk4".into(), ..d() }, &[1.0]), "step");
    assert_eq!(field(Settings { step: Some(-1.0), ..d() }, &[1.0]), "step");
    assert_eq!(field(Settings { tol: Tolerance { relative: -1.0, absolute: 1e-9 }, ..d() }, &[1.0]), "tolerance.relative");
    assert_eq!(field(Settings { tol: Tolerance { relative: 0.0, absolute: 0.0 }, ..d() }, &[1.0]), "tolerance");
    assert_eq!(field(Settings { to: f64::NAN, ..d() }, &[1.0]), "to");
    assert_eq!(field(Settings { at: Some(vec![0.5, 2.0]), ..d() }, &[1.0]), "at");
    assert_eq!(field(Settings { at: Some(vec![0.5, 0.2]), ..d() }, &[1.0]), "at");
    assert_eq!(field(d(), &[1.0, 2.0]), "y0");
    assert_eq!(field(d(), &[f64::NAN]), "y0");
    assert_eq!(field(Settings { max_steps: 0, ..d() }, &[1.0]), "stepLimit");
    assert_eq!(field(Settings { max_step: Some(0.0), ..d() }, &[1.0]), "largestStep");
    let e = SolveError::InvalidSettings { field: "step", reason: "x".into() };
    assert_eq!(e.to_string(), "invalid setting `step`: x");
}

#[test]
fn odd_problems_and_settings_never_panic_and_stay_bounded() {
    type F = fn(f64, &[f64], &mut [f64]);
    let rates: [F; 6] = [
        |_t, _y, dy| dy[0] = f64::NAN,
        |_t, y, dy| dy[0] = 1.0 / y[0],
        |t, _y, dy| dy[0] = if t > 0.5 { f64::INFINITY } else { 1.0 },
        |_t, y, dy| dy[0] = y[0].exp(),
        |_t, y, dy| dy[0] = -1e12 * y[0],
        |t, _y, dy| dy[0] = (1e6 * t).sin(),
    ];
    for f in rates {
        for m in ["euler", "heun", "midpoint", "rk4", "bogacki-shampine-3", "dormand-prince-5", "dormand-prince-8", "auto"] {
            for (t0, to) in [(0.0, 1.0), (0.0, -1.0), (1.0, 1.0), (0.0, 1e300)] {
                let mut p = FnProblem::new(&["y"], f).with_switches(1, |_t, y, s| s[0] = y[0]);
                let s = Settings { method: m.into(), to, step: Some(0.1), max_steps: 5000, ..Settings::default() };
                let s = if m == "dormand-prince-5" || m == "dormand-prince-8" || m == "bogacki-shampine-3" || m == "auto" { Settings { step: None, ..s } } else { s };
                let r = solve(&mut p, t0, &[0.0], &s).unwrap();
                assert!(r.stats.steps <= 5000);
                assert!(r.stats.rhs_evals < 5000 * 40, "{m}: {:?}", r.stats);
                assert_eq!(r.t.len(), r.states[0].len());
                if let Status::Failed(e) = &r.status {
                    assert!(!e.to_string().is_empty());
                }
            }
        }
    }
}

#[test]
fn a_zero_length_run_returns_the_start() {
    let mut p = FnProblem::new(&["y"], logistic_rhs);
    let r = solve(&mut p, 2.0, &[0.5], &Settings { to: 2.0, ..Settings::default() }).unwrap();
    assert_eq!((r.t.clone(), r.states[0].clone(), r.status), (vec![2.0], vec![0.5], Status::Finished));
}

#[test]
fn a_relative_tolerance_below_the_floor_runs_at_the_floor_with_a_note() {
    // Exponential decay y' = -y (analytic e^-t); the floor 1e-14 is common practice, no source.
    let run = |relative: f64| {
        let mut p = FnProblem::new(&["y"], |_t, y: &[f64], dy: &mut [f64]| dy[0] = -y[0]);
        solve(&mut p, 0.0, &[1.0], &Settings { to: 1.0, tol: Tolerance { relative, absolute: 1e-20 }, ..Settings::default() }).unwrap()
    };
    let low = run(1e-16);
    let d = low.diagnostics.iter().find(|d| d.code == "tolerance-floor").expect("a note on the floor");
    assert!(d.message.starts_with("the relative tolerance 1e-16 asks for more digits than double precision holds"), "{}", d.message);
    assert!(d.message.contains("The run used 1e-14"), "{}", d.message);
    let floor = run(1e-14);
    assert!(floor.diagnostics.iter().all(|d| d.code != "tolerance-floor"));
    assert_eq!((low.t, low.states, low.stats), (floor.t, floor.states, floor.stats));
}
