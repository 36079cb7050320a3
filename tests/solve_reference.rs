//! Reference problems: each check names where its right answer comes from.

use ratebook::problem::Problem;
use ratebook::problems::nonstiff::*;
use ratebook::problems::FnProblem;
use ratebook::solve::{solve, Run, Settings, Status, Tolerance};

fn run(p: &mut dyn Problem, t0: f64, y0: &[f64], s: Settings) -> Run {
    let r = solve(p, t0, y0, &s).expect("valid settings");
    assert_eq!(r.status, Status::Finished, "{:?}", r.diagnostics);
    r
}

fn last(r: &Run, i: usize) -> f64 {
    *r.states[i].last().unwrap()
}

fn settings(method: &str, to: f64, rtol: f64, atol: f64) -> Settings {
    Settings { method: method.into(), to, tol: Tolerance { relative: rtol, absolute: atol }, ..Settings::default() }
}

#[test]
fn logistic_growth_matches_analytic_solution() {
    // Analytic: y = K / (1 + (K/y0 − 1) e^(−rt)).
    for (m, tol, bound) in [("bogacki-shampine-3", 1e-6, 1e-4), ("dormand-prince-5", 1e-8, 1e-6), ("dormand-prince-8", 1e-10, 1e-8), ("auto", 1e-6, 1e-4)] {
        let mut p = FnProblem::new(&["y"], logistic_rhs);
        let r = run(&mut p, 0.0, &[0.5], settings(m, 10.0, tol, tol));
        let e = (last(&r, 0) - logistic_exact(10.0)).abs();
        assert!(e < bound, "{m}: error {e}");
        // Every output point is on the analytic curve too.
        for (k, t) in r.t.iter().enumerate() {
            assert!((r.states[0][k] - logistic_exact(*t)).abs() < bound * 10.0, "{m} at t = {t}");
        }
    }
}

#[test]
fn cooling_toward_sinusoidal_ambient_matches_analytic() {
    // Analytic: integrating factor (see cooling_exact).
    let mut p = FnProblem::new(&["T"], cooling_rhs);
    let at: Vec<f64> = (0..=20).map(|k| 0.5 * k as f64).collect();
    let r = run(&mut p, 0.0, &[90.0], Settings { at: Some(at.clone()), ..settings("dormand-prince-5", 10.0, 1e-8, 1e-8) });
    assert_eq!(r.t, at);
    for (k, t) in at.iter().enumerate() {
        let e = (r.states[0][k] - cooling_exact(*t)).abs();
        assert!(e < 1e-6, "t = {t}: error {e}");
    }
}

#[test]
fn damped_driven_oscillator_matches_analytic() {
    // Analytic: steady response plus the damped homogeneous solution.
    let mut p = FnProblem::new(&["x", "v"], oscillator_rhs);
    let r = run(&mut p, 0.0, &[1.0, 0.0], settings("dormand-prince-8", 40.0, 1e-11, 1e-11));
    let ex = oscillator_exact(40.0);
    assert!((last(&r, 0) - ex[0]).abs() < 1e-9 && (last(&r, 1) - ex[1]).abs() < 1e-9, "{} {} vs {ex:?}", last(&r, 0), last(&r, 1));
}

#[test]
fn arenstorf_orbit_returns_after_its_period() {
    // Published: the orbit is periodic with period 17.0652165601579625588917206249
    // (Hairer, Nørsett & Wanner, Solving ODEs I, Sec. II.0; from memory).
    for (m, tol, bound) in [("dormand-prince-5", 1e-10, 1e-5), ("dormand-prince-8", 1e-12, 1e-7)] {
        let mut p = FnProblem::new(&["x", "y", "vx", "vy"], arenstorf_rhs);
        let r = run(&mut p, 0.0, &ARENSTORF_Y0, settings(m, ARENSTORF_PERIOD, tol, tol));
        for i in 0..4 {
            let e = (last(&r, i) - ARENSTORF_Y0[i]).abs();
            assert!(e < bound, "{m} state {i}: error {e}");
        }
    }
}

#[test]
fn backward_run_retraces_the_analytic_solution() {
    // Analytic (logistic): integrate from t = 10 back to 0.
    let mut p = FnProblem::new(&["y"], logistic_rhs);
    let r = run(&mut p, 10.0, &[logistic_exact(10.0)], settings("dormand-prince-5", 0.0, 1e-9, 1e-12));
    assert_eq!(*r.t.last().unwrap(), 0.0);
    assert!(r.t.windows(2).all(|w| w[1] < w[0]));
    assert!((last(&r, 0) - 0.5).abs() < 1e-7, "{}", last(&r, 0));
}

#[test]
fn fixed_step_lands_exactly_on_the_end() {
    // The last step is shortened: 10 / 0.3 is not a whole number of steps.
    let mut p = FnProblem::new(&["y"], logistic_rhs);
    let r = run(&mut p, 0.0, &[0.5], Settings { step: Some(0.3), ..settings("rk4", 10.0, 1e-6, 1e-9) });
    assert_eq!(*r.t.last().unwrap(), 10.0);
    assert_eq!(r.t.len(), 35); // t0 plus 33 full steps plus the short one
    assert!((r.t[33] - 9.9).abs() < 1e-12);
    assert!((last(&r, 0) - logistic_exact(10.0)).abs() < 1e-4);
}

#[test]
fn lorenz_to_t5_matches_the_mpmath_reference() {
    // Reference: tests/reference/nonstiff.py (mpmath odefun, 40 digits), output in nonstiff.json.
    let want: Vec<f64> = reference(&["lorenz", "at", "5"]).unwrap().as_array().unwrap().iter().map(|v| v.as_f64().unwrap()).collect();
    for (m, tol, bound) in [("dormand-prince-5", 1e-10, 1e-5), ("dormand-prince-8", 1e-13, 1e-8)] {
        let mut p = FnProblem::new(&["x", "y", "z"], lorenz_rhs);
        let r = run(&mut p, 0.0, &[1.0, 1.0, 1.0], settings(m, 5.0, tol, tol));
        for i in 0..3 {
            assert!((last(&r, i) - want[i]).abs() < bound, "{m} state {i}: {} vs {}", last(&r, i), want[i]);
        }
    }
}

#[test]
fn every_shared_problem_with_a_reference_is_met_by_dp853() {
    // Each TestProblem names its source (analytic, published, or the committed mpmath script).
    for tp in ratebook::problems::nonstiff::all() {
        let Some(want) = tp.reference.clone() else { continue };
        assert!(!tp.source.is_empty());
        let mut p = (tp.make)();
        let r = run(&mut *p, tp.t0, &tp.y0, settings("dormand-prince-8", tp.t_end, 1e-13, 1e-13));
        for (i, w) in want.iter().enumerate() {
            // Lorenz to t = 20 amplifies errors by about e^(0.9·20) (chaos), hence its looser bound.
            let bound = if tp.name == "lorenz" { 1e-4 } else { 1e-8 * (1.0 + w.abs()) };
            assert!((last(&r, i) - w).abs() < bound, "{}: state {i} {} vs {w}", tp.name, last(&r, i));
        }
    }
}
