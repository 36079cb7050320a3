//! Convergence-order fits (common practice, no source: the global error of a
//! p-th order method falls like h^p; a least-squares slope of log error
//! against log h must lie within 0.2 of p). Problems with exact solutions:
//! the damped driven oscillator and logistic growth (analytic, see
//! src/problems/nonstiff.rs).

use ratebook::problems::nonstiff::{oscillator_exact, oscillator_rhs};
use ratebook::problems::FnProblem;
use ratebook::solve::{methods, solve, Settings};

/// Least-squares slope of log(err) against log(h).
fn slope(hs: &[f64], errs: &[f64]) -> f64 {
    let xs: Vec<f64> = hs.iter().map(|h| h.ln()).collect();
    let ys: Vec<f64> = errs.iter().map(|e| e.ln()).collect();
    let n = xs.len() as f64;
    let (mx, my) = (xs.iter().sum::<f64>() / n, ys.iter().sum::<f64>() / n);
    let sxy: f64 = xs.iter().zip(&ys).map(|(x, y)| (x - mx) * (y - my)).sum();
    let sxx: f64 = xs.iter().map(|x| (x - mx) * (x - mx)).sum();
    sxy / sxx
}

/// Step sizes for a method of order p: small enough to be asymptotic, large
/// enough to stay above round-off.
fn steps_for(p: u32) -> Vec<f64> {
    let k0 = match p {
        1 => 6,
        2 => 5,
        3 | 4 => 4,
        5 => 3,
        _ => 1,
    };
    (k0..k0 + 4).map(|k| 2f64.powi(-k)).collect()
}

/// Max error over the output times `at`, which fall between steps for every h
/// used (so they come from the continuous extension), and the error at the end.
fn errors(method: &str, h: f64, at: &[f64]) -> (f64, f64) {
    let mut p = FnProblem::new(&["x", "v"], oscillator_rhs);
    let s = Settings { method: method.into(), to: 4.0, step: Some(h), at: Some(at.to_vec()), ..Settings::default() };
    let r = solve(&mut p, 0.0, &[1.0, 0.0], &s).unwrap();
    let mut dense = 0.0f64;
    let mut end = 0.0;
    for (k, t) in r.t.iter().enumerate() {
        let ex = oscillator_exact(*t);
        let e = (r.states[0][k] - ex[0]).abs().max((r.states[1][k] - ex[1]).abs());
        if *t == 4.0 {
            end = e;
        } else {
            dense = dense.max(e);
        }
    }
    (dense, end)
}

#[test]
fn observed_orders_match_theory_for_steps_and_continuous_extensions() {
    // Output times never on the grid t = k·2^-j: thirds and a fifth.
    let at = [1.0 / 3.0, 1.2, 7.0 / 3.0, 3.0 + 1.0 / 3.0, 4.0];
    for m in methods() {
        // The explicit methods (the implicit ones have their own tests).
        if m.id == "auto" || m.tableau().is_none() {
            continue;
        }
        let hs = steps_for(m.order);
        let mut ends = Vec::new();
        let mut denses = Vec::new();
        for &h in &hs {
            let (d, e) = errors(m.id, h, &at);
            denses.push(d);
            ends.push(e);
        }
        let p = slope(&hs, &ends);
        eprintln!("{}: end order {p:.3}, dense order {:.3}; errors {ends:?} {denses:?}", m.id, slope(&hs, &denses));
        assert!((p - m.order as f64).abs() <= 0.2, "{}: observed order {p:.3} at the end, theory {} (errors {ends:?})", m.id, m.order);
        // Dense output: global error of order min(p, p* + 1), p* the order of
        // the continuous extension (Hairer, Nørsett & Wanner, Solving ODEs I, Sec. II.6).
        let want = m.order.min(m.dense_order + 1) as f64;
        let q = slope(&hs, &denses);
        assert!((q - want).abs() <= 0.2, "{}: observed dense order {q:.3}, theory {want} (errors {denses:?})", m.id);
    }
}
