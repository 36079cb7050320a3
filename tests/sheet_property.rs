//! Property tests over a generated corpus of expressions.
//!
//! - Values: the compiled evaluator against meval's own evaluation of the
//!   same text (the reference library), to 1e-12 relative.
//! - Jacobians and `∂f/∂t`: the exact derivatives against central finite
//!   differences, to the accuracy their step allows (truncation `O(h²)` plus
//!   rounding `O(ε/h)`; common practice, no source).
//!
//! The corpus uses only functions meval has, so meval can evaluate it.

use ratebook::problem::Problem;
use ratebook::sheet::compile;

/// xorshift64*: a tiny deterministic generator for the corpus.
struct Rng(u64);

impl Rng {
    fn next(&mut self) -> u64 {
        self.0 ^= self.0 >> 12;
        self.0 ^= self.0 << 25;
        self.0 ^= self.0 >> 27;
        self.0.wrapping_mul(0x2545_F491_4F6C_DD1D)
    }
    fn below(&mut self, n: usize) -> usize {
        (self.next() % n as u64) as usize
    }
    fn unit(&mut self) -> f64 {
        (self.next() >> 11) as f64 / (1u64 << 53) as f64
    }
}

const VARS: &[&str] = &["x", "y", "z", "t"];
const NUMS: &[&str] = &["2", "0.5", "3.7", "1.5e-3", "10", "1", "0.25", "7e1"];
const FUNCS1: &[&str] = &[
    "sin", "cos", "tan", "exp", "ln", "sqrt", "abs", "atan", "sinh", "cosh", "tanh", "asinh", "asin", "acos",
    "acosh", "atanh", "floor", "ceil", "round", "signum",
];
const SMOOTH1: &[&str] = &["sin", "cos", "exp", "sqrt", "atan", "tanh", "asinh", "ln", "cosh", "sinh"];

fn gen(r: &mut Rng, depth: usize, smooth: bool) -> String {
    if depth == 0 || r.below(10) < 3 {
        return if r.below(3) == 0 { NUMS[r.below(NUMS.len())].to_string() } else { VARS[r.below(VARS.len())].to_string() };
    }
    let d = depth - 1;
    match r.below(12) {
        0..=3 => {
            let op = ["+", "-", "*", "/"][r.below(4)];
            let (a, b) = (gen(r, d, smooth), gen(r, d, smooth));
            if r.below(2) == 0 {
                format!("({a} {op} {b})")
            } else {
                format!("{a}{op}{b}")
            }
        }
        4 => format!("-{}", gen(r, d, smooth)),
        5 => {
            let e = ["2", "3", "0.5", "-1", "1.5"][r.below(5)];
            format!("({})^{e}", gen(r, d, smooth))
        }
        6 => format!("{}^{}", VARS[r.below(3)], gen(r, d.min(1), smooth)),
        7 if !smooth => {
            let k = 1 + r.below(3);
            let args: Vec<String> = (0..k).map(|_| gen(r, d, smooth)).collect();
            format!("{}({})", ["min", "max"][r.below(2)], args.join(", "))
        }
        8 => format!("atan2({}, {})", gen(r, d, smooth), gen(r, d, smooth)),
        9 if !smooth => format!("({} % {})", gen(r, d, smooth), gen(r, d, smooth)),
        _ => {
            let f = if smooth { SMOOTH1[r.below(SMOOTH1.len())] } else { FUNCS1[r.below(FUNCS1.len())] };
            format!("{f}({})", gen(r, d, smooth))
        }
    }
}

fn model_for(expr: &str) -> ratebook::sheet::Model {
    let sheet = format!("dx/dt = {expr}\ndy/dt = 0\ndz/dt = 0\nx(0) = 1\ny(0) = 1\nz(0) = 1\n");
    match compile(&sheet) {
        Ok(m) => m,
        Err(e) => panic!("{expr:?} does not compile: {e}"),
    }
}

fn meval_value(expr: &meval::Expr, t: f64, y: &[f64]) -> f64 {
    let mut ctx = meval::Context::new();
    ctx.var("x", y[0]).var("y", y[1]).var("z", y[2]).var("t", t);
    expr.eval_with_context(ctx).unwrap_or(f64::NAN)
}

fn same(a: f64, b: f64, rel: f64) -> bool {
    a == b || (a.is_nan() && b.is_nan()) || (a - b).abs() <= rel * a.abs().max(b.abs())
}

fn point(r: &mut Rng) -> (f64, [f64; 3]) {
    let t = 3.0 * r.unit();
    (t, [4.0 * r.unit() - 2.0, 4.0 * r.unit() - 2.0, 4.0 * r.unit() - 2.0])
}

#[test]
fn compiled_values_match_meval() {
    let mut r = Rng(0x1234_5678_9ABC_DEF1);
    let mut compared = 0;
    for _ in 0..600 {
        let text = gen(&mut r, 5, false);
        let reference: meval::Expr = text.parse().unwrap_or_else(|e| panic!("meval rejects {text:?}: {e}"));
        let mut m = model_for(&text);
        for _ in 0..20 {
            let (t, y) = point(&mut r);
            let want = meval_value(&reference, t, &y);
            let mut dy = [0.0; 3];
            m.rhs(t, &y, &mut dy);
            // Where meval's value is not finite, ours must not be either; the
            // kind may differ: min/max here propagate a NaN argument where
            // meval's fold from -inf turns it into -inf.
            let ok = if want.is_finite() { same(dy[0], want, 1e-12) } else { !dy[0].is_finite() };
            assert!(ok, "{text:?} at t={t}, y={y:?}: sheet {} meval {want}", dy[0]);
            compared += usize::from(want.is_finite());
        }
    }
    assert!(compared > 6_000, "only {compared} finite values compared");
}

/// Central difference of component 0 of the rates along `dir` (0..3: the
/// states; 3: time), with an estimate of its error: the change from step
/// `2h` to `h` (the truncation error is `O(h²)`, so this bounds it) plus the
/// rounding error `ε |f| / h`.
fn central(m: &mut ratebook::sheet::Model, t: f64, y: [f64; 3], dir: usize) -> (f64, f64) {
    let base = if dir == 3 { t } else { y[dir] };
    let h = 1e-5 * base.abs().max(1.0);
    let eval = |m: &mut ratebook::sheet::Model, s: f64| {
        let (mut tt, mut yy) = (t, y);
        if dir == 3 {
            tt = base + s;
        } else {
            yy[dir] = base + s;
        }
        let mut dy = [0.0; 3];
        m.rhs(tt, &yy, &mut dy);
        dy[0]
    };
    let (f2p, fp, f0, fm, f2m) = (eval(m, 2.0 * h), eval(m, h), eval(m, 0.0), eval(m, -h), eval(m, -2.0 * h));
    let d1 = (fp - fm) / (2.0 * h);
    let d2 = (f2p - f2m) / (4.0 * h);
    let size = fp.abs().max(fm.abs()).max(f2p.abs()).max(f2m.abs());
    // A jump inside the stencil shows as one-sided quotients far apart.
    let one_sided = ((fp - f0) / h - (f0 - fm) / h).abs();
    let err = (d1 - d2).abs() + 100.0 * f64::EPSILON * size / h;
    (d1, if one_sided > 1e-2 * (1.0 + d1.abs()) { f64::INFINITY } else { err })
}

fn check_derivatives(smooth: bool, seed: u64, want_checked: usize) {
    let mut r = Rng(seed);
    let mut checked = 0;
    for _ in 0..400 {
        let text = gen(&mut r, 4, smooth);
        let mut m = model_for(&text);
        for _ in 0..10 {
            let (t, y) = point(&mut r);
            let mut jac = [0.0; 9];
            let mut dfdt = [0.0; 3];
            assert!(m.jacobian(t, &y, &mut jac));
            assert!(m.time_derivative(t, &y, &mut dfdt));
            for dir in 0..4 {
                let exact = if dir == 3 { dfdt[0] } else { jac[dir] };
                let (fd, err) = central(&mut m, t, y, dir);
                let scale = 1.0 + exact.abs().max(fd.abs());
                if !fd.is_finite() || !exact.is_finite() || !(err <= 1e-4 * scale) {
                    continue; // a kink, pole or overflow nearby: the difference quotient cannot judge
                }
                assert!((exact - fd).abs() <= 2.0 * err + 1e-9 * scale, "{text:?} d/d{} at t={t} y={y:?}: exact {exact}, differences {fd}", ["x", "y", "z", "t"][dir]);
                checked += 1;
            }
            // The other rows are zero.
            assert!(jac[3..].iter().all(|&v| v == 0.0) && dfdt[1] == 0.0 && dfdt[2] == 0.0);
        }
    }
    assert!(checked >= want_checked, "only {checked} derivatives could be checked");
}

#[test]
fn jacobian_matches_central_differences_on_smooth_corpus() {
    check_derivatives(true, 0xDEAD_BEEF_1234_5678, 8000);
}

#[test]
fn jacobian_matches_central_differences_on_full_corpus() {
    check_derivatives(false, 0x0BAD_F00D_8765_4321, 5000);
}
