//! Work-count snapshots: exact counts of rate evaluations, steps and rejected
//! steps for a few problems, to catch a change of the controller, the initial
//! step or the FSAL reuse that no accuracy test would see. When a deliberate
//! change moves them, check the accuracy tests and the bench, then update.
//!
//! Last moved when the explicit pairs' PI controller took Gustafsson's
//! predictive cap and the plain controller's first step, and the first step
//! reused f(t0, y0) from the initial-step estimate: far fewer rejected steps
//! (Arenstorf with dormand-prince-5 at 1e-6: 25 to 4; Lorenz with dormand-prince-8 at 1e-9: 124 to
//! 60) and fewer evaluations at equal error on the bench.

use ratebook::problems::nonstiff::*;
use ratebook::problems::FnProblem;
use ratebook::solve::{solve, Settings, Stats, Tolerance};

fn stats(rhs_evals: u64, steps: u64, rejected: u64) -> Stats {
    Stats { rhs_evals, steps, rejected, jacobians: 0, factorizations: 0 }
}

fn counted(method: &str, tol: f64, to: f64, problem: &mut dyn ratebook::problem::Problem, y0: &[f64]) -> Stats {
    let s = Settings { method: method.into(), to, tol: Tolerance { relative: tol, absolute: tol }, extrema: false, ..Settings::default() };
    solve(problem, 0.0, y0, &s).unwrap().stats
}

#[test]
fn arenstorf_work_counts() {
    let mut p = FnProblem::new(&["x", "y", "vx", "vy"], arenstorf_rhs);
    assert_eq!(counted("dormand-prince-5", 1e-6, ARENSTORF_PERIOD, &mut p, &ARENSTORF_Y0), stats(872, 141, 4));
    assert_eq!(counted("dormand-prince-8", 1e-9, ARENSTORF_PERIOD, &mut p, &ARENSTORF_Y0), stats(1886, 138, 19));
    assert_eq!(counted("bogacki-shampine-3", 1e-4, ARENSTORF_PERIOD, &mut p, &ARENSTORF_Y0), stats(560, 181, 5));
}

#[test]
fn lorenz_work_counts() {
    let mut p = FnProblem::new(&["x", "y", "z"], lorenz_rhs);
    assert_eq!(counted("dormand-prince-5", 1e-6, 20.0, &mut p, &[1.0, 1.0, 1.0]), stats(4766, 780, 14));
    assert_eq!(counted("dormand-prince-8", 1e-9, 20.0, &mut p, &[1.0, 1.0, 1.0]), stats(8054, 611, 60));
}

#[test]
fn tank_event_run_work_counts() {
    // Default settings, stop event, helper and extrema: dense output costs no evaluations for dormand-prince-5.
    let mut p = tank_problem();
    let r = solve(&mut p, 0.0, &[4.0], &Settings { to: 100.0, ..Settings::default() }).unwrap();
    assert_eq!(r.stats, stats(56, 9, 0));
}

#[test]
fn fixed_step_counts_are_stages_times_steps() {
    // RK4: 4 evaluations per step, plus the stability check four times per run
    // (a finite-difference Jacobian: 2 evaluations for one state).
    let mut p = FnProblem::new(&["y"], logistic_rhs);
    let s = Settings { method: "rk4".into(), to: 1.0, step: Some(0.1), extrema: false, ..Settings::default() };
    let r = solve(&mut p, 0.0, &[0.5], &s).unwrap();
    assert_eq!(r.stats, Stats { rhs_evals: 40 + 4 * 2, steps: 10, rejected: 0, jacobians: 4, factorizations: 0 });
    // With dense output (extrema on) the Hermite end slope of each step is the
    // next step's first stage: one more evaluation, for the last step only.
    let s = Settings { extrema: true, ..s };
    let r = solve(&mut p, 0.0, &[0.5], &s).unwrap();
    assert_eq!(r.stats.rhs_evals, 40 + 1 + 4 * 2);
}
