//! The stiff methods through the driver: the stiff scalar, Van der Pol
//! μ = 1000, Robertson, failures that must not hang, and work-count snapshots.
//! Each check names its source.

use ratebook::problem::Problem;
use ratebook::problems::stiff::{Robertson, StiffCosine, VanDerPol, ROBERTSON_AT_1E11, ROBERTSON_AT_1E5, VAN_DER_POL_1000_AT_3000};
use ratebook::problems::FnProblem;
use ratebook::solve::{solve, Run, Settings, Status, Tolerance};

fn run(p: &mut dyn Problem, y0: &[f64], settings: Settings) -> Run {
    solve(p, 0.0, y0, &settings).expect("valid settings")
}

fn last(run: &Run) -> Vec<f64> {
    run.states.iter().map(|s| *s.last().expect("output")).collect()
}

fn adaptive(method: &str, to: f64, rtol: f64, atol: f64) -> Settings {
    Settings { method: method.into(), to, tol: Tolerance { relative: rtol, absolute: atol }, ..Settings::default() }
}

#[test]
fn backward_euler_is_stable_at_h_0_01_where_rk4_is_not() {
    // y' = -1000(y - cos t) - sin t, y(0) = 1: analytic solution y = cos t.
    // RK4's stability interval on the negative axis ends near -2.785 (common
    // practice, no source), and h·λ = -10 lies far outside it.
    let fixed = |m: &str| Settings { method: m.into(), to: 2.0, step: Some(0.01), ..Settings::default() };
    let be = run(&mut StiffCosine::default(), &[1.0], fixed("backward-euler"));
    assert_eq!(be.status, Status::Finished);
    let worst = be.t.iter().zip(&be.states[0]).map(|(t, y)| (y - t.cos()).abs()).fold(0.0, f64::max);
    assert!(worst < 1e-4, "backward Euler error {worst}");
    let rk4 = run(&mut StiffCosine::default(), &[1.0], fixed("rk4"));
    let rk4_worst = rk4.t.iter().zip(&rk4.states[0]).map(|(t, y)| (y - t.cos()).abs()).fold(0.0, f64::max);
    assert!(
        !matches!(rk4.status, Status::Finished) || !rk4_worst.is_finite() || rk4_worst > 1.0,
        "RK4 should be unstable here: {:?}, error {rk4_worst}",
        rk4.status
    );
    assert!(rk4.diagnostics.iter().any(|d| d.code == "unstable-step"));
}

#[test]
fn trapezoid_is_stable_but_rodas4_and_radau5_damp_the_transient() {
    // Analytic y = cos t. From y(0) = 2 the transient 1·e^(-1000 t) is stiff;
    // the L-stable methods damp it at once, the trapezoidal rule keeps it
    // flipping sign (A-stable only; common practice, no source).
    let mut tr = run(&mut StiffCosine::default(), &[2.0], Settings { method: "trapezoid".into(), to: 1.0, step: Some(0.1), ..Settings::default() });
    assert_eq!(tr.status, Status::Finished);
    let e_tr = (tr.states[0].pop().unwrap() - 1f64.cos()).abs();
    assert!(e_tr > 0.1, "the trapezoidal rule keeps the transient: {e_tr}");
    for m in ["rosenbrock-4", "radau-iia-5"] {
        let r = run(&mut StiffCosine::default(), &[2.0], adaptive(m, 1.0, 1e-6, 1e-9));
        assert_eq!(r.status, Status::Finished);
        let e = (last(&r)[0] - 1f64.cos()).abs();
        assert!(e < 1e-6, "{m}: {e}");
    }
}

#[test]
fn van_der_pol_1000_matches_scipy_reference() {
    // Reference: tests/reference/stiff_reference.py (SciPy Radau, rtol 1e-13).
    for m in ["rosenbrock-4", "radau-iia-5"] {
        let r = run(&mut VanDerPol::new(1000.0), &[2.0, 0.0], adaptive(m, 3000.0, 1e-7, 1e-7));
        assert_eq!(r.status, Status::Finished, "{m}");
        let y = last(&r);
        let err = (y[0] - VAN_DER_POL_1000_AT_3000[0]).abs();
        assert!(err < 1e-4, "{m}: y1 error {err}");
        assert!(r.stats.jacobians > 0 && r.stats.factorizations > 0);
    }
}

#[test]
fn robertson_conserves_mass_and_matches_reference() {
    // Conservation y1 + y2 + y3 = 1 is exact for the true solution (the rates
    // sum to zero; analytic). Reference values: tests/reference/stiff_reference.py.
    for (to, reference) in [(1e5, ROBERTSON_AT_1E5), (1e11, ROBERTSON_AT_1E11)] {
        for m in ["rosenbrock-4", "radau-iia-5"] {
            let r = run(&mut Robertson::default(), &[1.0, 0.0, 0.0], adaptive(m, to, 1e-6, 1e-12));
            assert_eq!(r.status, Status::Finished, "{m} to {to}");
            for k in 0..r.t.len() {
                let sum = r.states[0][k] + r.states[1][k] + r.states[2][k];
                assert!((sum - 1.0).abs() < 1e-12, "{m}: sum {sum} at t = {}", r.t[k]);
            }
            let y = last(&r);
            for i in 0..3 {
                let rel = (y[i] - reference[i]).abs() / reference[i];
                assert!(rel < 1e-3, "{m} to {to}: y{} relative error {rel}", i + 1);
            }
        }
    }
}

#[test]
fn a_blow_up_ends_with_a_plain_failure_not_a_hang() {
    // y' = y², y(0) = 1 has the solution 1/(1 - t), infinite at t = 1 (analytic).
    for m in ["rosenbrock-4", "radau-iia-5"] {
        let mut p = FnProblem::new(&["y"], |_t, y: &[f64], dy: &mut [f64]| dy[0] = y[0] * y[0]);
        let r = run(&mut p, &[1.0], adaptive(m, 2.0, 1e-6, 1e-9));
        let Status::Failed(e) = &r.status else { panic!("{m} should fail: {:?}", r.status) };
        let t_end = *r.t.last().unwrap();
        assert!((0.9..1.0 + 1e-6).contains(&t_end), "{m} stopped at {t_end}: {e}");
        assert!(!e.to_string().is_empty());
    }
}

#[test]
fn fixed_step_failure_is_reported() {
    // y' = y with h = 1: the backward-Euler matrix I - hJ is exactly zero.
    let mut p = FnProblem::new(&["y"], |_t, y: &[f64], dy: &mut [f64]| dy[0] = y[0]);
    let r = run(&mut p, &[1.0], Settings { method: "backward-euler".into(), to: 3.0, step: Some(1.0), ..Settings::default() });
    let Status::Failed(e) = &r.status else { panic!("should fail: {:?}", r.status) };
    assert_eq!(e.code(), "step-failed");
}

#[test]
fn finite_difference_jacobians_are_counted() {
    // Van der Pol written as a closure has no exact Jacobian: each Jacobian
    // costs two extra evaluations of the rates. Reference as above.
    let mu = 1000.0;
    let mut p = FnProblem::new(&["y1", "y2"], move |_t, y: &[f64], dy: &mut [f64]| {
        dy[0] = y[1];
        dy[1] = mu * (1.0 - y[0] * y[0]) * y[1] - y[0];
    });
    let fd = run(&mut p, &[2.0, 0.0], adaptive("radau-iia-5", 3000.0, 1e-6, 1e-6));
    let exact = run(&mut VanDerPol::new(mu), &[2.0, 0.0], adaptive("radau-iia-5", 3000.0, 1e-6, 1e-6));
    assert_eq!(fd.status, Status::Finished);
    assert!((last(&fd)[0] - VAN_DER_POL_1000_AT_3000[0]).abs() < 1e-3);
    assert!(fd.stats.rhs_evals > exact.stats.rhs_evals + fd.stats.jacobians);
}
