//! The accuracy check against exact solutions: its error estimates must
//! bracket the true error within a factor of 10, for every method and for
//! tolerances from 1e-3 to 1e-10.

use ratebook::problems;
use ratebook::solve::{self, Settings, Tolerance};
use ratebook::study::check::{check, Kind, Options};

/// Problems of the shared set with analytic solutions (their `source` says so).
const EXACT: [&str; 3] = ["logistic", "cooling", "oscillator"];

fn no_cross() -> Options {
    Options { shown_digits: 6, cross_method: false }
}

/// `(ratio est/true, relative true error)` for each final state of `name` under `settings`.
fn ratios(name: &str, settings: &Settings) -> Vec<(f64, f64)> {
    let tp = problems::by_name(name).unwrap();
    assert!(tp.source.starts_with("analytic"), "{name}: {}", tp.source);
    let reference = tp.reference.clone().unwrap();
    let mut p = (tp.make)();
    let s = Settings { to: tp.t_end, ..settings.clone() };
    let r = check(p.as_mut(), tp.t0, &tp.y0, &s, "t", &no_cross()).unwrap();
    let names = p.state_names().to_vec();
    let mut out = Vec::new();
    for (i, n) in names.iter().enumerate() {
        let q = r.quantities.iter().find(|q| q.kind == Kind::Final && &q.name == n).unwrap();
        let truth = (q.value - reference[i]).abs();
        let est = q.error.unwrap();
        out.push((est / truth, truth / reference[i].abs().max(1e-300)));
    }
    out
}

/// A true error below this relative size is rounding, not truncation: there the
/// estimate only has to be as small (common practice, no source).
const ROUNDING: f64 = 1e-13;

fn assert_brackets(label: &str, v: &[(f64, f64)], bad: &mut Vec<String>) {
    for (ratio, rel) in v {
        if *rel < ROUNDING {
            continue;
        }
        if !(0.1..=10.0).contains(ratio) {
            bad.push(format!("{label}: estimate/true = {ratio:.3} (true relative error {rel:.1e})"));
        }
    }
}

#[test]
fn adaptive_estimates_bracket_the_true_error() {
    let mut bad = Vec::new();
    let mut n = 0;
    let ids: Vec<&str> = solve::methods().iter().filter(|m| m.adaptive).map(|m| m.id).collect();
    for name in EXACT {
        for id in &ids {
            for k in 3..=10 {
                let rtol = 10f64.powi(-k);
                let s = Settings { method: id.to_string(), tol: Tolerance { relative: rtol, absolute: rtol * 1e-3 }, ..Settings::default() };
                let v = ratios(name, &s);
                n += v.len();
                assert_brackets(&format!("{name} {id} rtol {rtol:.0e}"), &v, &mut bad);
            }
        }
    }
    assert!(bad.is_empty(), "{} of {n} outside [0.1, 10]:\n{}", bad.len(), bad.join("\n"));
}

#[test]
fn fixed_step_estimates_bracket_the_true_error() {
    let mut bad = Vec::new();
    let mut n = 0;
    let ids: Vec<&str> = solve::methods().iter().filter(|m| !m.adaptive).map(|m| m.id).collect();
    for name in EXACT {
        let tp = problems::by_name(name).unwrap();
        let span = (tp.t_end - tp.t0).abs();
        for id in &ids {
            for steps in [40.0, 160.0, 640.0, 2560.0] {
                let s = Settings { method: id.to_string(), step: Some(span / steps), ..Settings::default() };
                let v = ratios(name, &s);
                n += v.len();
                assert_brackets(&format!("{name} {id} h = span/{steps}"), &v, &mut bad);
            }
        }
    }
    assert!(bad.is_empty(), "{} of {n} outside [0.1, 10]:\n{}", bad.len(), bad.join("\n"));
}

/// A long undamped oscillation at a loose tolerance: the explicit and the
/// implicit method drift apart in phase, so the cross-check must say they do
/// not agree, not "agree to at least 0 digits" (the phase error of a method
/// of order p grows like t·h^p: common practice, no source).
#[test]
fn cross_check_says_plainly_when_methods_do_not_agree() {
    let mut m = ratebook::sheet::compile("x'' = -x\nx(0) = 1\nx'(0) = 0\n").unwrap();
    let (t0, y0) = (m.t0(), m.initial_state().to_vec());
    let s = Settings { to: 60.0, tol: Tolerance { relative: 1e-2, absolute: 1e-4 }, ..Settings::default() };
    let r = check(&mut m, t0, &y0, &s, "t", &Options { shown_digits: 4, cross_method: true }).unwrap();
    let c = r.cross.expect("the cross-check ran");
    assert_eq!(c.least, Some(0), "{}", c.sentence);
    assert!(c.sentence.contains("do not agree even to one digit"), "{}", c.sentence);
    assert!(!c.sentence.contains("at least 0"), "{}", c.sentence);
}

/// The same oscillation at a tight tolerance: the methods agree on every
/// value; its many equal troughs (one each period) must not count as a
/// disagreement of their times.
#[test]
fn cross_check_ignores_which_cycle_a_repeated_peak_falls_on() {
    let mut m = ratebook::sheet::compile("w = 3\nx'' = -w^2*x\nx(0) = 1\nx'(0) = 0\n").unwrap();
    let (t0, y0) = (m.t0(), m.initial_state().to_vec());
    let s = Settings { to: 60.0, ..Settings::default() };
    let r = check(&mut m, t0, &y0, &s, "t", &Options { shown_digits: 4, cross_method: true }).unwrap();
    let c = r.cross.expect("the cross-check ran");
    assert!(c.least.is_some_and(|d| d >= 3), "{}", c.sentence);
    assert!(c.sentence.contains("agree to at least"), "{}", c.sentence);
}
