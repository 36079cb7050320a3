//! One test per feature of the sheet language. Expected values are analytic
//! (worked by hand from the formula in each sheet) unless stated otherwise.

use ratebook::problem::{Crossing, EventAction, Problem};
use ratebook::sheet::{compile, Model};

fn model(text: &str) -> Model {
    match compile(text) {
        Ok(m) => m,
        Err(e) => panic!("{text:?}: {e}"),
    }
}

fn rates(m: &mut Model, t: f64, y: &[f64]) -> Vec<f64> {
    let mut dy = vec![0.0; m.dim()];
    m.rhs(t, y, &mut dy);
    dy
}

/// The value of one expression of `x` and `t` at `x`, `t` (analytic check).
fn value(expr: &str, x: f64, t: f64) -> f64 {
    let mut m = model(&format!("dx/dt = {expr}\nx(0) = 1"));
    rates(&mut m, t, &[x])[0]
}

#[test]
fn tank_sheet_parameters_helpers_and_events() {
    let mut m = model(
        "# Settling tank drained through a bottom orifice\n\
         A  = 1.5                 # tank cross-section, m^2\n\
         a  = 0.004               # orifice area, m^2\n\
         g  = 9.81\n\
         q  = a*sqrt(2*g*h)       # outflow\n\
         dh/dt = -q/A\n\
         h(0) = 2\n\
         stop when h < 0.05\n\
         mark when h < 1\n",
    );
    assert_eq!(m.state_names(), ["h"]);
    assert_eq!(m.helper_names(), ["q"]);
    assert_eq!(m.independent(), "t");
    assert_eq!(m.t0(), 0.0);
    assert_eq!(m.initial_state(), [2.0]);
    let names: Vec<_> = m.params().iter().map(|p| (p.name.as_str(), p.value, p.line)).collect();
    assert_eq!(names, [("A", 1.5, 2), ("a", 0.004, 3), ("g", 9.81, 4)]);
    // Torricelli outflow, by hand: q = a sqrt(2 g h).
    let q = 0.004 * (2.0f64 * 9.81 * 2.0).sqrt();
    assert_eq!(rates(&mut m, 0.0, &[2.0]), [-q / 1.5]);
    let mut hv = [0.0];
    m.helpers(0.0, &[2.0], &mut hv);
    assert_eq!(hv, [q]);
    let ev = m.events();
    assert_eq!(ev.len(), 2);
    assert_eq!((ev[0].name.as_str(), ev[0].action, ev[0].crossing), ("h < 0.05", EventAction::Stop, Crossing::Falling));
    assert_eq!((ev[1].name.as_str(), ev[1].action, ev[1].crossing), ("h < 1", EventAction::Mark, Crossing::Falling));
    let mut g = [0.0; 2];
    m.event_values(0.0, &[0.5], &mut g);
    assert_eq!(g, [0.5 - 0.05, 0.5 - 1.0]);
    // One call gives rates then helpers.
    let mut all = [0.0; 2];
    m.eval_all(0.0, &[2.0], &mut all);
    assert_eq!(all, [-q / 1.5, q]);
}

#[test]
fn event_comparisons_and_names() {
    let m = model("dx/dt = 1\nx(0) = 0\nstop when x >= 2\nmark when x > 1\nmark when x <= 3\nmark when   sin(x) = 0.5  \nstop when x == 4");
    let c: Vec<_> = m.events().iter().map(|e| (e.name.as_str(), e.crossing)).collect();
    assert_eq!(
        c,
        [
            ("x >= 2", Crossing::Rising),
            ("x > 1", Crossing::Rising),
            ("x <= 3", Crossing::Falling),
            ("sin(x) = 0.5", Crossing::Either),
            ("x == 4", Crossing::Either),
        ]
    );
}

#[test]
fn definitions_in_any_order_and_parameters_of_parameters() {
    let mut m = model("dx/dt = -k*x\nk = 2*base\nbase = 0.25\nx(0) = c0\nc0 = 4");
    assert_eq!(m.initial_state(), [4.0]);
    assert_eq!(rates(&mut m, 0.0, &[2.0]), [-1.0]);
    let p: Vec<_> = m.params().iter().map(|p| (p.name.as_str(), p.value)).collect();
    assert_eq!(p, [("k", 0.5), ("base", 0.25), ("c0", 4.0)]);
    assert!(m.helper_names().is_empty());
}

#[test]
fn helpers_of_helpers_and_time() {
    let mut m = model("u = 2*v\nv = x + t\ndx/dt = u\nx(0) = 0");
    assert_eq!(m.helper_names(), ["u", "v"]);
    assert_eq!(rates(&mut m, 1.0, &[3.0]), [8.0]);
    let mut h = [0.0; 2];
    m.helpers(1.0, &[3.0], &mut h);
    assert_eq!(h, [8.0, 4.0]);
}

#[test]
fn prime_form_and_declared_independent_variable() {
    let mut m = model("y' = -2*y\ny(0) = 1");
    assert_eq!(m.independent(), "t");
    assert_eq!(rates(&mut m, 0.0, &[3.0]), [-6.0]);
    // dy/dx declares x; primes then mean d/dx, and x may be used.
    let mut m = model("dy/dx = x*z\nz' = 1\ny(0) = 0\nz(0) = 1");
    assert_eq!(m.independent(), "x");
    assert_eq!(rates(&mut m, 2.0, &[0.0, 3.0]), [6.0, 1.0]);
}

#[test]
fn higher_orders_make_chains_of_states() {
    let m = model("x'' = -x\nx(0) = 1\nx'(0) = 0");
    assert_eq!(m.state_names(), ["x", "x'"]);
    let mut m = model("d3u/ds3 = -u' + s\nu(0) = 1\nu'(0) = 2\nu''(0) = 3");
    assert_eq!(m.state_names(), ["u", "u'", "u''"]);
    assert_eq!(m.independent(), "s");
    assert_eq!(m.initial_state(), [1.0, 2.0, 3.0]);
    assert_eq!(rates(&mut m, 0.5, &[1.0, 2.0, 3.0]), [2.0, 3.0, -1.5]);
    let m = model("w'''' = -w\nw(0) = 1\nw'(0) = 0\nw''(0) = 0\nw'''(0) = 0");
    assert_eq!(m.state_names(), ["w", "w'", "w''", "w'''"]);
    // A prime state used in a helper.
    let mut m = model("v = x'\nx'' = -v\nx(0) = 0\nx'(0) = 1");
    assert_eq!(rates(&mut m, 0.0, &[0.0, 5.0]), [5.0, -5.0]);
}

#[test]
fn start_time_shared_by_all_initial_values() {
    let m = model("t0 = 2\ndx/dt = 1\ndy/dt = 1\nx(t0) = 1\ny(2) = 3");
    assert_eq!(m.t0(), 2.0);
    assert_eq!(m.initial_state(), [1.0, 3.0]);
}

#[test]
fn operators_and_precedence_follow_meval() {
    assert_eq!(value("2^3^2", 0.0, 0.0), 512.0); // ^ is right-associative
    assert_eq!(value("-x^2", 3.0, 0.0), -9.0); // unary minus binds looser than ^
    assert_eq!(value("7 % 3", 0.0, 0.0), 1.0);
    assert_eq!(value("-7 % 3", 0.0, 0.0), -1.0);
    assert_eq!(value("1 - 2 - 3", 0.0, 0.0), -4.0);
    assert_eq!(value("12 / 3 / 2", 0.0, 0.0), 2.0);
    assert_eq!(value("2 + 3 * 4", 0.0, 0.0), 14.0);
    assert_eq!(value("(2 + 3) * 4", 0.0, 0.0), 20.0);
    assert_eq!(value("+x", 5.0, 0.0), 5.0);
    assert_eq!(value("--x", 5.0, 0.0), 5.0);
    assert_eq!(value("2*-x", 5.0, 0.0), -10.0);
    assert_eq!(value("1.5e-3 + 2E2 + 3.", 0.0, 0.0), 1.5e-3 + 200.0 + 3.0);
    assert_eq!(value("pi", 0.0, 0.0), std::f64::consts::PI);
    assert_eq!(value("e", 0.0, 0.0), std::f64::consts::E);
    assert_eq!(value("sqrt (x)", 4.0, 0.0), 2.0); // a space before ( still calls
}

#[test]
fn meval_functions() {
    let x: f64 = 0.3;
    let cases: &[(&str, f64)] = &[
        ("sqrt(x)", x.sqrt()),
        ("exp(x)", x.exp()),
        ("ln(x)", x.ln()),
        ("abs(-x)", x),
        ("sin(x)", x.sin()),
        ("cos(x)", x.cos()),
        ("tan(x)", x.tan()),
        ("asin(x)", x.asin()),
        ("acos(x)", x.acos()),
        ("atan(x)", x.atan()),
        ("sinh(x)", x.sinh()),
        ("cosh(x)", x.cosh()),
        ("tanh(x)", x.tanh()),
        ("asinh(x)", x.asinh()),
        ("acosh(x + 1)", (x + 1.0).acosh()),
        ("atanh(x)", x.atanh()),
        ("floor(x + 2)", 2.0),
        ("ceil(x + 2)", 3.0),
        ("round(x + 2.2)", 3.0),
        ("signum(-x)", -1.0),
        ("atan2(x, -1)", x.atan2(-1.0)),
        ("min(x, 2, -1)", -1.0),
        ("max(x, 2, -1)", 2.0),
        ("min(x)", x),
    ];
    for (e, want) in cases {
        assert_eq!(value(e, x, 0.0), *want, "{e}");
    }
}

#[test]
fn our_added_functions() {
    let x: f64 = 0.3;
    assert_eq!(value("log(x)", x, 0.0), x.ln());
    assert_eq!(value("log10(x)", x, 0.0), x.log10());
    assert_eq!(value("pow(x, 2.5)", x, 0.0), x.powf(2.5));
    assert_eq!(value("hypot(3, 4)", x, 0.0), 5.0);
    assert_eq!(value("clamp(x, 0, 1)", x, 0.0), x);
    assert_eq!(value("clamp(x, 0.5, 1)", x, 0.0), 0.5);
    assert_eq!(value("clamp(x, 0, 0.1)", x, 0.0), 0.1);
    assert_eq!(value("heaviside(x)", -1.0, 0.0), 0.0);
    assert_eq!(value("heaviside(x)", 0.0, 0.0), 1.0);
    assert_eq!(value("heaviside(x)", 2.0, 0.0), 1.0);
    assert_eq!(value("sign(x)", -3.0, 0.0), -1.0);
    assert_eq!(value("sign(x)", 0.0, 0.0), 0.0);
    assert_eq!(value("sign(x)", 3.0, 0.0), 1.0);
}

#[test]
fn switch_functions_of_the_rates() {
    let mut m = model(
        "k = 2\nflow = k*heaviside(x - 1)\ndx/dt = -flow + abs(x) + min(x, t) + clamp(x, 0, 5) + floor(t) + sign(x)\nx(0) = 1",
    );
    // step, abs, min, clamp (two), floor, sign.
    // step, abs, min, clamp (two), floor, sign; abs(x), sign(x) and x - 0
    // from clamp are the same function x, kept once.
    assert_eq!(m.switch_count(), 5);
    let mut got = vec![0.0; 5];
    m.switch_values(0.5, &[2.0], &mut got);
    let pi = std::f64::consts::PI;
    let mut want = vec![2.0 - 1.0, 2.0, 2.0 - 0.5, 2.0 - 5.0, (pi * 0.5).sin()];
    got.sort_by(f64::total_cmp);
    want.sort_by(f64::total_cmp);
    assert_eq!(got, want);
    // A helper used only for display adds no switch; nor does a folded constant.
    let m = model("shown = abs(x)\nc = abs(-2)\ndx/dt = -c*x\nx(0) = 1");
    assert_eq!(m.switch_count(), 0);
}

#[test]
fn exact_jacobian_and_time_derivative() {
    // f = (-x*y + y + sin(y), -g*sin(x) + 0.2*cos(t)); derivatives by hand.
    let mut m = model("g = 9.81\ndx/dt = -x*y + y + sin(y)\ndy/dt = -g*sin(x) + 0.2*cos(t)\nx(0) = 1\ny(0) = 0");
    let (t, x, y) = (0.7, 0.4, -1.3);
    let mut j = [0.0; 4];
    assert!(m.jacobian(t, &[x, y], &mut j));
    assert_eq!(j, [-y, -x + 1.0 + y.cos(), -9.81 * x.cos(), 0.0]);
    let mut d = [0.0; 2];
    assert!(m.time_derivative(t, &[x, y], &mut d));
    assert_eq!(d, [0.0, -0.2 * t.sin()]);
}

#[test]
fn live_parameters_change_without_recompiling() {
    let mut m = model("k = 0.5\nk2 = 2*k\nx0 = 3\ndx/dt = -k2*x\nx(0) = x0");
    assert_eq!(rates(&mut m, 0.0, &[1.0]), [-1.0]);
    m.set_live(&["k", "x0", "nonsense"]);
    assert_eq!(m.live(), ["k", "x0"]);
    let before = m.rhs_program().insts().len();
    assert!(m.set_param("k", 2.0));
    assert_eq!(m.rhs_program().insts().len(), before);
    assert_eq!(rates(&mut m, 0.0, &[1.0]), [-4.0]);
    assert!(m.set_param("x0", 7.0));
    assert_eq!(m.initial_state(), [7.0]);
    let p: Vec<_> = m.params().iter().map(|p| (p.name.as_str(), p.value)).collect();
    assert_eq!(p, [("k", 2.0), ("k2", 4.0), ("x0", 7.0)]);
    // The Jacobian follows a live parameter too.
    let mut j = [0.0];
    m.jacobian(0.0, &[1.0], &mut j);
    assert_eq!(j, [-4.0]);
    m.set_param("k", 1.0);
    m.jacobian(0.0, &[1.0], &mut j);
    assert_eq!(j, [-2.0]);
    // A folded parameter can be set too; it recompiles.
    assert!(m.set_param("k2", 10.0));
    assert!(!m.set_param("x", 1.0));
    // Leaving the live set keeps the current values.
    m.set_live(&[]);
    assert_eq!(m.initial_state(), [7.0]);
    assert_eq!(rates(&mut m, 0.0, &[1.0]), [-10.0]);
}

#[test]
fn folded_parameters_leave_short_tapes() {
    // Orifice formula: -a/A*sqrt(2*g*h) folds to three instructions.
    let m = model("a = 0.004\nA = 1.5\ng = 9.81\ndh/dt = -a/A*sqrt(2*g*h)\nh(0) = 2");
    assert_eq!(m.rhs_program().insts().len(), 3);
    // Shared subexpressions are computed once.
    let m = model("dx/dt = sin(x*t) + sin(x*t)^2\nx(0) = 1");
    let sins = m.rhs_program().insts().iter().filter(|i| i.op == ratebook::sheet::ir::Op::Sin).count();
    assert_eq!(sins, 1);
}

#[test]
fn explains_what_went_non_finite() {
    let mut m = model("A = 1.5\nq = sqrt(h - 1)\ndh/dt = -q/A\nh(0) = 2");
    let c = m.explain_nonfinite(0.0, &[0.5]).unwrap();
    assert_eq!((c.name.as_str(), c.what.as_str()), ("q", "sqrt of a negative number"));
    let mut m = model("dx/dt = 1/(x - 1)\nx(0) = 0");
    let c = m.explain_nonfinite(0.0, &[1.0]).unwrap();
    assert_eq!((c.name.as_str(), c.what.as_str()), ("dx/dt", "division by zero"));
    let mut m = model("r = ln(x)\ndx/dt = r\nx(0) = 1");
    assert_eq!(m.explain_nonfinite(0.0, &[-1.0]).unwrap().what, "log of a negative number");
    assert_eq!(m.explain_nonfinite(0.0, &[0.0]).unwrap().what, "log of zero");
    let mut m = model("dx/dt = exp(x)\nx(0) = 1");
    assert!(m.explain_nonfinite(0.0, &[1000.0]).unwrap().what.starts_with("overflow"));
    assert!(m.explain_nonfinite(0.0, &[1.0]).is_none());
    let c = m.explain_nonfinite(0.0, &[f64::NAN]).unwrap();
    assert_eq!(c.name, "x");
}

#[test]
fn programs_are_well_formed_and_documented_layout_holds() {
    let mut m = model("k = 2\nq = k*x*y\ndx/dt = -q\ndy/dt = q - y\nx(0) = 1\ny(0) = 2");
    m.set_live(&["k"]);
    let p = m.rhs_program();
    assert_eq!(p.dim(), 2);
    assert_eq!(p.n_live(), 1);
    assert_eq!(p.live_names(), ["k"]);
    assert_eq!(p.live_values(), [2.0]);
    assert_eq!(p.first_inst_slot(), 1 + 2 + 1 + p.consts().len());
    for (k, i) in p.insts().iter().enumerate() {
        let me = (p.first_inst_slot() + k) as u32;
        assert!(i.a < me && i.b < me);
    }
}

#[test]
fn small_powers_become_multiplies_and_sqrt() {
    use ratebook::sheet::ir::Op;
    let ops = |expr: &str| -> Vec<Op> {
        let m = model(&format!("dx/dt = {expr}\nx(0) = 1"));
        m.rhs_program().insts().iter().map(|i| i.op).collect()
    };
    assert_eq!(ops("x^3"), [Op::Sq, Op::Mul]);
    assert_eq!(ops("x^4"), [Op::Sq, Op::Sq]);
    assert_eq!(ops("x^-1"), [Op::CDiv]);
    assert_eq!(ops("x^0.5"), [Op::AddC, Op::Sqrt]);
    assert_eq!(ops("x^-2.5"), [Op::Sq, Op::AddC, Op::Sqrt, Op::Mul, Op::CDiv]);
    assert_eq!(ops("x^4.5"), [Op::PowC]);
    assert_eq!(ops("x^1.25"), [Op::PowC]);
    // The pieces are shared: x^1.5 and x^0.5 take one sqrt, x^3 and x^2 one square.
    let both = ops("x^1.5 + x^0.5 + x^3 + x^2");
    assert_eq!(both.iter().filter(|&&o| o == Op::Sqrt).count(), 1);
    assert_eq!(both.iter().filter(|&&o| o == Op::Sq).count(), 1);
    // Values (analytic), with the special cases pow gives (IEEE 754-2019, 9.2.1).
    assert_eq!(value("x^3", 3.0, 0.0), 27.0);
    assert_eq!(value("x^-2", 4.0, 0.0), 0.0625);
    assert_eq!(value("x^1.5", 4.0, 0.0), 8.0);
    assert_eq!(value("x^-0.5", 0.25, 0.0), 2.0);
    assert_eq!(value("x^0", f64::NAN, 0.0), 1.0);
    assert_eq!(value("x^-1", 0.0, 0.0), f64::INFINITY);
    assert_eq!(value("x^-3", -0.0, 0.0), f64::NEG_INFINITY);
    let root_of_minus_zero = value("x^0.5", -0.0, 0.0);
    assert!(root_of_minus_zero == 0.0 && root_of_minus_zero.is_sign_positive());
    assert!(value("x^1.5", -1.0, 0.0).is_nan());
    // Within a few ulp of powf (the rewrite's accuracy, see sheet::dag::SmallPower).
    for x in [0.3, 1.7, 12.5, 1e-5, 3e7] {
        for c in [3.0, 4.0, -1.0, -4.0, 0.5, 1.5, 2.5, 3.5, -0.5, -3.5] {
            let got = value(&format!("x^{c}"), x, 0.0);
            let want = f64::powf(x, c);
            assert!((got - want).abs() <= 4.0 * f64::EPSILON * want.abs(), "{x}^{c}: {got} against powf {want}");
        }
    }
    // Derivatives follow the power rule: d/dx x^1.5 at 0 is 0, not 0·∞.
    let mut m = model("dx/dt = x^1.5\nx(0) = 1");
    let mut j = [f64::NAN];
    m.jacobian(0.0, &[0.0], &mut j);
    assert_eq!(j, [0.0]);
    m.jacobian(0.0, &[4.0], &mut j);
    assert_eq!(j, [3.0]);
}
