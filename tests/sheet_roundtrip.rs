//! Round trips: a higher-order sheet against its hand-written first-order
//! system, both as a sheet and as Rust, and against an analytic solution.

use ratebook::problem::Problem;
use ratebook::problems::FnProblem;
use ratebook::sheet::compile;
use ratebook::solve::{solve, Settings};

const SECOND: &str = "# A damped spring with a pulsing push (our own scenario)\n\
    m = 2\nc = 0.3\nk = 5\n\
    x'' = (-c*x' - k*x + 0.4*cos(1.5*t))/m\n\
    x(0) = 1\nx'(0) = 0\n";

const FIRST: &str = "m = 2\nc = 0.3\nk = 5\n\
    dx/dt = v\n\
    dv/dt = (-c*v - k*x + 0.4*cos(1.5*t))/m\n\
    x(0) = 1\nv(0) = 0\n";

fn hand(t: f64, y: &[f64], dy: &mut [f64]) {
    dy[0] = y[1];
    dy[1] = (-0.3 * y[1] - 5.0 * y[0] + 0.4 * (1.5 * t).cos()) / 2.0;
}

#[test]
fn second_order_sheet_has_the_first_order_rates() {
    let mut a = compile(SECOND).unwrap();
    let mut b = compile(FIRST).unwrap();
    assert_eq!(a.state_names(), ["x", "x'"]);
    assert_eq!(a.initial_state(), b.initial_state());
    let mut s: u64 = 12345;
    for _ in 0..200 {
        let mut r = || {
            s = s.wrapping_mul(6364136223846793005).wrapping_add(1442695040888963407);
            (s >> 11) as f64 / (1u64 << 53) as f64 * 4.0 - 2.0
        };
        let (t, y) = (r() + 2.0, [r(), r()]);
        let (mut da, mut db, mut dh) = ([0.0; 2], [0.0; 2], [0.0; 2]);
        a.rhs(t, &y, &mut da);
        b.rhs(t, &y, &mut db);
        hand(t, &y, &mut dh);
        assert_eq!(da, db);
        assert_eq!(da, dh);
        let (mut ja, mut jb) = ([0.0; 4], [0.0; 4]);
        a.jacobian(t, &y, &mut ja);
        b.jacobian(t, &y, &mut jb);
        assert_eq!(ja, jb);
        // By hand: ∂f/∂y = [[0, 1], [-k/m, -c/m]].
        assert_eq!(ja, [0.0, 1.0, -5.0 / 2.0, -0.3 / 2.0]);
    }
}

#[test]
fn second_order_sheet_gives_the_same_trajectory() {
    let mut a = compile(SECOND).unwrap();
    let mut b = compile(FIRST).unwrap();
    let mut h = FnProblem::new(&["x", "v"], hand);
    let settings = Settings { to: 10.0, ..Settings::default() };
    let y0 = a.initial_state().to_vec();
    let ra = solve(&mut a, 0.0, &y0, &settings).unwrap();
    let rb = solve(&mut b, 0.0, &y0, &settings).unwrap();
    let rh = solve(&mut h, 0.0, &y0, &settings).unwrap();
    assert!(ra.t.len() > 10);
    // The same operations in the same order: the same numbers, bit for bit.
    assert_eq!(ra.t, rb.t);
    assert_eq!(ra.states, rb.states);
    assert_eq!(ra.t, rh.t);
    assert_eq!(ra.states, rh.states);
}

#[test]
fn undamped_spring_follows_the_cosine() {
    // x'' = -w^2 x, x(0) = 1, x'(0) = 0 has x = cos(w t) (analytic).
    let mut m = compile("w = 2\nx'' = -w^2*x\nx(0) = 1\nx'(0) = 0").unwrap();
    let settings = Settings { to: 5.0, tol: ratebook::solve::Tolerance { relative: 1e-10, absolute: 1e-12 }, ..Settings::default() };
    let y0 = m.initial_state().to_vec();
    let run = solve(&mut m, 0.0, &y0, &settings).unwrap();
    for (k, &t) in run.t.iter().enumerate() {
        assert!((run.states[0][k] - (2.0 * t).cos()).abs() < 1e-7, "x({t})");
        assert!((run.states[1][k] + 2.0 * (2.0 * t).sin()).abs() < 1e-7, "x'({t})");
    }
}

#[test]
fn fourth_order_beam_mode_against_its_first_order_form() {
    // u'''' = -u is the chain u' = p, p' = q, q' = r, r' = -u.
    let mut a = compile("u'''' = -u + 0.1*sin(t)\nu(0) = 1\nu'(0) = 0\nu''(0) = -1\nu'''(0) = 0").unwrap();
    let mut b = compile("u' = p\np' = q\nq' = r\nr' = -u + 0.1*sin(t)\nu(0) = 1\np(0) = 0\nq(0) = -1\nr(0) = 0").unwrap();
    assert_eq!(a.state_names(), ["u", "u'", "u''", "u'''"]);
    let settings = Settings { to: 3.0, ..Settings::default() };
    let (ya, yb) = (a.initial_state().to_vec(), b.initial_state().to_vec());
    let ra = solve(&mut a, 0.0, &ya, &settings).unwrap();
    let rb = solve(&mut b, 0.0, &yb, &settings).unwrap();
    assert_eq!(ra.states, rb.states);
}

#[test]
fn helper_rates_are_the_helpers_derivatives_along_a_direction() {
    // Common practice, no source: a central difference of h(t + s, y + s·dy)
    // in s approximates ∂h/∂t + ∇h·dy to O(s²).
    let text = "k = 0.7\ndx/dt = -k*x + y\ndy/dt = sin(t) - y\nx(0) = 1\ny(0) = 0\n\
        flow = k*x^2 + exp(-y)\nload = flow*cos(2*t) + sqrt(1 + x*x)\nratio = load/(2 + y*y)\n";
    let mut m = compile(text).unwrap();
    let nh = m.helper_names().len();
    assert_eq!(nh, 3);
    let (t, y, dy) = (0.8, [1.3, -0.4], [0.25, -1.5]);
    // As compiled, then with k live and moved (the gradient tape follows it).
    for k_value in [None, Some(1.9)] {
        if let Some(v) = k_value {
            m.set_live(&["k"]);
            // Build the gradient tape before the move, so the move must update it.
            assert!(m.helper_rates(t, &y, &dy, &mut vec![0.0; nh]));
            assert!(m.set_param("k", v));
        }
        let mut rates = vec![0.0; nh];
        assert!(m.helper_rates(t, &y, &dy, &mut rates));
        let mut at = |s: f64| {
            let mut h = vec![0.0; nh];
            m.helpers(t + s, &[y[0] + s * dy[0], y[1] + s * dy[1]], &mut h);
            h
        };
        let s = 1e-5;
        let (hp, hm) = (at(s), at(-s));
        for k in 0..nh {
            let fd = (hp[k] - hm[k]) / (2.0 * s);
            assert!((rates[k] - fd).abs() < 1e-8 * (1.0 + fd.abs()), "k = {k_value:?}, helper {k}: {} vs {fd}", rates[k]);
        }
    }
}
