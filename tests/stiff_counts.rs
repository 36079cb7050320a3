//! Work-count snapshots of the stiff methods through the driver: any change
//! to the steppers, the Jacobian or factorization reuse, or the step-size
//! controller shows up here before it shows up in a benchmark. Update the
//! numbers deliberately, with the reason in the commit message.

use ratebook::problem::Problem;
use ratebook::problems::stiff::{Robertson, StiffCosine, VanDerPol};
use ratebook::solve::{solve, Settings, Status, Tolerance};

/// `(rhsEvals, steps, jacobians, factorizations)` of one run.
fn counts(p: &mut dyn Problem, y0: &[f64], settings: Settings) -> (u64, u64, u64, u64) {
    let run = solve(p, 0.0, y0, &settings).unwrap();
    assert_eq!(run.status, Status::Finished);
    let s = run.stats;
    (s.rhs_evals, s.steps, s.jacobians, s.factorizations)
}

fn adaptive(method: &str, to: f64, rtol: f64, atol: f64) -> Settings {
    Settings { method: method.into(), to, tol: Tolerance { relative: rtol, absolute: atol }, extrema: false, ..Settings::default() }
}

#[test]
fn van_der_pol_1000_work_counts() {
    let vdp = |m: &str| counts(&mut VanDerPol::new(1000.0), &[2.0, 0.0], adaptive(m, 3000.0, 1e-6, 1e-6));
    assert_eq!(vdp("rosenbrock-4"), (6182, 915, 915, 1053));
    assert_eq!(vdp("radau-iia-5"), (9202, 867, 208, 716));
    // auto starts on dormand-prince-5, whose controller took the `dopri5` constants.
    assert_eq!(vdp("auto"), (6621, 592, 154, 450));
}

#[test]
fn robertson_work_counts() {
    let rob = |m: &str| counts(&mut Robertson::default(), &[1.0, 0.0, 0.0], adaptive(m, 1e5, 1e-6, 1e-10));
    assert_eq!(rob("rosenbrock-4"), (1199, 197, 197, 200));
    assert_eq!(rob("radau-iia-5"), (1601, 179, 56, 156));
    assert_eq!(rob("auto"), (1579, 187, 47, 124));
}

#[test]
fn fixed_step_work_counts() {
    // 200 steps of h = 0.01; the stiff cosine is linear in y, so Newton
    // converges in two iterations per step (one Jacobian, one factorization).
    let fixed = |m: &str| {
        let s = Settings { method: m.into(), to: 2.0, step: Some(0.01), extrema: false, ..Settings::default() };
        counts(&mut StiffCosine::default(), &[1.0], s)
    };
    assert_eq!(fixed("backward-euler"), (600, 200, 200, 200));
    assert_eq!(fixed("trapezoid"), (600, 200, 200, 200));
}
