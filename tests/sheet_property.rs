//! Property tests over a generated corpus of expressions.
//!
//! - Values: the compiled evaluator against meval's own evaluation of the
//!   same text (the reference library), to 1e-12 relative, plus what the
//!   conditioning of the expression allows (below).
//! - Jacobians and `∂f/∂t`: the exact derivatives against central finite
//!   differences, to the accuracy their step allows (truncation `O(h²)` plus
//!   rounding `O(ε/h)`; common practice, no source).
//!
//! The corpus uses only functions meval has, so meval can evaluate it.
//!
//! **Conditioning.** The compiler writes small integer and half-integer
//! powers as multiplies and `sqrt` (`x^3` is `(x·x)·x`), which is a few
//! units in the last place (ulp) away from meval's `powf`. An expression can
//! amplify that without bound: `a % b` jumps where `a/b` crosses an integer,
//! `floor` where its argument does, and a difference of nearly equal terms
//! magnifies any relative change. So each sample also gets a first-order
//! estimate of how far rounding at the powers can move it: meval evaluates
//! the text again with one power scaled by `1 ± 4ε` (more than the rewrite's
//! error, about 2.5 ulp for `x^3.5`), and the changes add up over the powers.
//! The compiled value must lie within `1e-12·|value|` plus that estimate.
//! The estimate is meval's own (the compiler plays no part in it), and the
//! test counts the samples where it exceeds `1e-12·|value|` and requires
//! them to be rare, so a wrong rewrite cannot hide behind it.

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

/// Which written power, if any, [`gen`] scales, and by what: powers are
/// numbered in the order they are written out.
#[derive(Clone, Copy)]
struct Scale {
    next: usize,
    target: Option<usize>,
    factor: f64,
}

impl Scale {
    /// Scale no power.
    fn none() -> Self {
        Scale { next: 0, target: None, factor: 1.0 }
    }
    /// The text of the power `base^exp`, scaled when it is the target.
    fn power(&mut self, base: String, exp: &str) -> String {
        let k = self.next;
        self.next += 1;
        if self.target == Some(k) {
            format!("({base}^{exp}*{:?})", self.factor)
        } else {
            format!("{base}^{exp}")
        }
    }
}

/// A random expression; the same `r` state gives the same expression
/// whatever `sc` scales.
fn gen(r: &mut Rng, depth: usize, smooth: bool, sc: &mut Scale) -> String {
    if depth == 0 || r.below(10) < 3 {
        return if r.below(3) == 0 { NUMS[r.below(NUMS.len())].to_string() } else { VARS[r.below(VARS.len())].to_string() };
    }
    let d = depth - 1;
    match r.below(12) {
        0..=3 => {
            let op = ["+", "-", "*", "/"][r.below(4)];
            let (a, b) = (gen(r, d, smooth, sc), gen(r, d, smooth, sc));
            if r.below(2) == 0 {
                format!("({a} {op} {b})")
            } else {
                format!("{a}{op}{b}")
            }
        }
        4 => format!("-{}", gen(r, d, smooth, sc)),
        5 => {
            let e = ["2", "3", "0.5", "-1", "1.5"][r.below(5)];
            let base = format!("({})", gen(r, d, smooth, sc));
            sc.power(base, e)
        }
        6 => {
            let v = VARS[r.below(3)].to_string();
            let e = gen(r, d.min(1), smooth, sc);
            if NUMS.contains(&e.as_str()) {
                sc.power(v, &e)
            } else {
                format!("{v}^{e}")
            }
        }
        7 if !smooth => {
            let k = 1 + r.below(3);
            let args: Vec<String> = (0..k).map(|_| gen(r, d, smooth, sc)).collect();
            format!("{}({})", ["min", "max"][r.below(2)], args.join(", "))
        }
        8 => format!("atan2({}, {})", gen(r, d, smooth, sc), gen(r, d, smooth, sc)),
        9 if !smooth => format!("({} % {})", gen(r, d, smooth, sc), gen(r, d, smooth, sc)),
        _ => {
            let f = if smooth { SMOOTH1[r.below(SMOOTH1.len())] } else { FUNCS1[r.below(FUNCS1.len())] };
            format!("{f}({})", gen(r, d, smooth, sc))
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

fn point(r: &mut Rng) -> (f64, [f64; 3]) {
    let t = 3.0 * r.unit();
    (t, [4.0 * r.unit() - 2.0, 4.0 * r.unit() - 2.0, 4.0 * r.unit() - 2.0])
}

/// Parse `text` with meval, the reference.
fn reference(text: &str) -> meval::Expr {
    text.parse().unwrap_or_else(|e| panic!("meval rejects {text:?}: {e}"))
}

#[test]
fn compiled_values_match_meval() {
    // 4ε: above the rewritten powers' error (see the module docs).
    const SCALE: f64 = 4.0 * f64::EPSILON;
    let mut r = Rng(0x1234_5678_9ABC_DEF1);
    let (mut compared, mut ill_conditioned) = (0, 0);
    for _ in 0..600 {
        let start = Rng(r.0);
        let mut sc = Scale::none();
        let text = gen(&mut r, 5, false, &mut sc);
        let want_expr = reference(&text);
        // The same expression with one power scaled up or down, per power.
        let scaled: Vec<meval::Expr> = (0..sc.next)
            .flat_map(|k| [1.0 + SCALE, 1.0 - SCALE].map(|f| (k, f)))
            .map(|(k, factor)| {
                let mut sk = Scale { next: 0, target: Some(k), factor };
                reference(&gen(&mut Rng(start.0), 5, false, &mut sk))
            })
            .collect();
        let mut m = model_for(&text);
        for _ in 0..20 {
            let (t, y) = point(&mut r);
            let want = meval_value(&want_expr, t, &y);
            let mut dy = [0.0; 3];
            m.rhs(t, &y, &mut dy);
            // Where meval's value is not finite, ours must not be either; the
            // kind may differ: min/max here propagate a NaN argument where
            // meval's fold from -inf turns it into -inf.
            if !want.is_finite() {
                assert!(!dy[0].is_finite(), "{text:?} at t={t}, y={y:?}: sheet {} meval {want}", dy[0]);
                continue;
            }
            // How far rounding at the powers moves meval's own value: the
            // larger change of each power's pair, summed (NaN or infinite
            // when a scaled power leaves the domain: then anything goes).
            let spread: f64 = scaled
                .chunks(2)
                .map(|pair| pair.iter().map(|e| (meval_value(e, t, &y) - want).abs()).fold(0.0, f64::max))
                .sum();
            let strict = 1e-12 * want.abs();
            let allowed = if spread.is_nan() { f64::INFINITY } else { strict + spread };
            ill_conditioned += usize::from(!(spread <= strict));
            let ok = dy[0] == want || (dy[0] - want).abs() <= allowed;
            assert!(ok, "{text:?} at t={t}, y={y:?}: sheet {} meval {want}, allowed {allowed:e}", dy[0]);
            compared += 1;
        }
    }
    assert!(compared > 6_000, "only {compared} finite values compared");
    eprintln!("{compared} values compared, {ill_conditioned} ill-conditioned");
    // A few samples sit on a jump or a cancellation; most must be judged at 1e-12.
    assert!(ill_conditioned * 100 < compared, "{ill_conditioned} of {compared} samples are ill-conditioned");
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
        let text = gen(&mut r, 4, smooth, &mut Scale::none());
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

/// The interpreter runs chains of instructions as single steps
/// (`sheet::ir`); its results must equal the plain tape's bit for bit (the
/// plain tape is the reference meaning, which the emitted wasm follows too).
#[test]
fn interpreter_steps_match_the_plain_tape_bit_for_bit() {
    let mut r = Rng(0x5EED_0FC4_A15E_ED00);
    let mut sheets: Vec<String> = (0..400)
        .map(|_| {
            let smooth = r.below(2) == 0;
            let text = gen(&mut r, 5, smooth, &mut Scale::none());
            format!("dx/dt = {text}\ndy/dt = 0\ndz/dt = 0\nx(0) = 1\ny(0) = 1\nz(0) = 1\n")
        })
        .collect();
    // Shapes the chains are made for: stencils, losses, orifices, forcing.
    sheets.push("k = 0.8\nh = 0.05\nTa = 20\nx' = k*(y - 2*x + z) - h*(x - Ta) + 3*(1 + 0.5*sin(0.7*t))\ny' = k*(x - 2*y + z) - h*(y - Ta)\nz' = -0.3*sqrt(2*9.81*z) + x*y/z - (x + 1)^2\nx(0) = 1\ny(0) = 2\nz(0) = 3\n".into());
    sheets.push("x' = -9.81*sin(y) - 0.1*z*abs(z) + 0.2*cos(t)\ny' = z - x/y + exp(-0.5*t)\nz' = cos(2*t)*3 - y*z*x - (x - y)*(z + y)\nx(0) = 1\ny(0) = 2\nz(0) = 3\n".into());
    let mut checked = 0;
    for sheet in &sheets {
        let m = compile(sheet).unwrap_or_else(|e| panic!("{sheet:?}: {e}"));
        for mut p in [m.rhs_program().clone(), m.all_program().clone(), m.switch_program().clone()] {
            let n = p.outputs().len();
            for _ in 0..8 {
                let (t, y) = point(&mut r);
                let mut fast = vec![0.0; n];
                p.eval(t, &y, &mut fast);
                p.run_plain(t, &y);
                for (k, &o) in p.outputs().iter().enumerate() {
                    let plain = p.slots()[o as usize];
                    assert!(
                        fast[k].to_bits() == plain.to_bits() || (fast[k].is_nan() && plain.is_nan()),
                        "{sheet:?} output {k} at t={t}, y={y:?}: steps {} plain {plain}",
                        fast[k]
                    );
                    checked += 1;
                }
            }
        }
    }
    assert!(checked > 10_000, "only {checked} values checked");
}
