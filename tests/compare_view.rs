//! The comparison view's numbers (`api::compare`): what is compared when a
//! run ends on `stop when`, and what is said when the methods agree to
//! rounding. Before, a stopped run was compared by its quantity at the end,
//! which the stop condition pins, and orders were fitted to rounding noise
//! (on the tank example: Euler 1.68, Heun -0.71, RK4 2.00).

use ratebook::api::compare::{compare, CompareRequest, Measure};
use ratebook::api::RunRequest;

/// The tank example's sheet (www/examples.js): it ends on `stop when`,
/// which pins h at the end to 0.05.
const TANK: &str = "A  = 1.5\na  = 0.004\nCd = 0.62\ng  = 9.81\nq  = Cd*a*sqrt(2*g*max(h, 0))\ndh/dt = -q/A\nh(0) = 2\nstop when h < 0.05\nmark when h < 1\n";

#[test]
fn a_stopped_run_is_compared_by_its_event_times_not_the_pinned_value() {
    let base = RunRequest { to: Some(600.0), ..Default::default() };
    let rep = compare(TANK, &base, &CompareRequest { levels: 4, ..Default::default() }, &mut |_, _| {}).unwrap();
    assert_eq!(rep.measure, Measure::EventTimes);
    assert!(rep.measured.contains("stop time (h < 0.05)"), "{}", rep.measured);
    assert!(rep.note.contains("pins"), "{}", rep.note);
    assert_eq!(rep.agreement, None);
    // Analytic (Torricelli): sqrt(h) falls linearly at k/2 with
    // k = Cd*a*sqrt(2g)/A, so h reaches 0.05 at t = 2(sqrt(2) - sqrt(0.05))/k.
    let k = 0.62 * 0.004 * (2.0f64 * 9.81).sqrt() / 1.5;
    let t_stop = 2.0 * (2f64.sqrt() - 0.05f64.sqrt()) / k;
    assert!((rep.reference.end_t - t_stop).abs() < 1e-6, "{} vs {t_stop}", rep.reference.end_t);
    for r in &rep.runs {
        assert_eq!(r.mismatched, 0, "{} h = {:?}", r.method, r.step);
        assert!(r.error > 1e-9, "{} h = {:?}: error {} is a real difference", r.method, r.step, r.error);
        assert!((r.difference - (r.end_t - rep.reference.end_t)).abs() == 0.0);
    }
    // The orders are the methods' own (common practice, no source:
    // the global error of a p-th order method, event times included,
    // falls like h^p), not the noise of the pinned value (Euler 1.68,
    // Heun -0.71, RK4 2.00 when h at the end was compared).
    for (fit, order) in rep.fits.iter().zip([1.0, 2.0, 4.0]) {
        let slope = fit.slope.unwrap_or_else(|| panic!("{}: {:?}", fit.method, fit.no_slope));
        assert!((slope - order).abs() < 0.35, "{}: slope {slope}", fit.method);
    }
}

#[test]
fn runs_that_agree_to_rounding_say_so_and_fit_no_order() {
    // y' = 1: every method is exact, the differences are rounding.
    let base = RunRequest { to: Some(10.0), ..Default::default() };
    let rep = compare("y' = 1\ny(0) = 3\n", &base, &CompareRequest::default(), &mut |_, _| {}).unwrap();
    assert_eq!(rep.measure, Measure::End);
    assert_eq!(rep.agreement, Some("rounding"));
    assert!(rep.note.contains("agree with the reference to rounding"), "{}", rep.note);
    assert!(rep.fits.iter().all(|f| f.slope.is_none() && f.no_slope == Some("rounding")));
    // y' = 2t: Heun and RK4 are exact for it, Euler is not.
    let rep = compare("y' = 2*t\ny(0) = 0\n", &base, &CompareRequest::default(), &mut |_, _| {}).unwrap();
    assert_eq!(rep.agreement, None);
    let euler = &rep.fits[0];
    assert!((euler.slope.unwrap() - 1.0).abs() < 0.05, "{:?}", euler.slope);
    assert!(rep.fits[1..].iter().all(|f| f.slope.is_none() && f.no_slope.is_some()), "{:?}", rep.fits);
    assert!(rep.note.contains("No order is fitted for"), "{}", rep.note);
}

