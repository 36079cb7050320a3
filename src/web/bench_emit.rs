//! Workloads for the emitted-model benchmark (`scripts/bench.d/emit`), timed
//! from JS in wasm under Node, since wall time does not exist inside wasm.
//!
//! Each formula or model runs five ways: hand-written Rust inlined into the
//! loop (`rust`), the same called through `&mut dyn Problem` as the solvers
//! call models (`rust-dyn`), the interpreter (`interpreter`), the emitted
//! module (`emitted`), and, for the RK4 loop only, the emitted stage loop with
//! the formulas (`emitted-rk4`). Every workload returns a checksum, so nothing
//! is optimised away and the script can check that the ways agree.

use std::cell::RefCell;
use std::hint::black_box;

use wasm_bindgen::prelude::*;

use crate::emit::EmittedModel;
use crate::problem::Problem;
use crate::problems::nonstiff::arenstorf_rhs;
use crate::problems::FnProblem;
use crate::sheet::{compile, Model};
use crate::solve::Settings;

#[path = "../../examples/bench_sheet/chain.rs"]
mod chain;

type Rates = fn(f64, &[f64], &mut [f64]);

/// A benchmark case: a sheet and the same rates hand-written.
struct Case {
    name: &'static str,
    sheet: String,
    rust: Rates,
    /// RK4 step for the loop.
    h: f64,
}

fn tank(_t: f64, y: &[f64], dy: &mut [f64]) {
    dy[0] = -0.004 / 1.5 * (2.0 * 9.81 * y[0]).sqrt();
}

fn growth(x: f64, y: &[f64], dy: &mut [f64]) {
    dy[0] = -x * y[0] + y[0] + y[0].sin();
}

fn swing(t: f64, y: &[f64], dy: &mut [f64]) {
    dy[0] = y[1];
    dy[1] = -9.81 * y[0].sin() - 0.1 * y[1] * y[1].abs() + 0.2 * t.cos();
}

fn thermal(t: f64, y: &[f64], dy: &mut [f64]) {
    chain::chain_rates(chain::CHAIN_PARAMS, t, y, dy);
}

/// Masses in the 20-state model.
const MASSES: usize = 10;

/// Ten carts in a row joined by stiffening springs (k·d + kc·d³) and
/// dampers, the first shaken at its left end (our own scenario).
fn carts(t: f64, y: &[f64], dy: &mut [f64]) {
    let (k, kc, c) = (40.0, 5.0, 0.3);
    for i in 0..MASSES {
        let x = y[2 * i];
        let v = y[2 * i + 1];
        let left = if i == 0 { 0.05 * (3.0 * t).sin() } else { y[2 * i - 2] };
        let dl = left - x;
        let mut f = k * dl + kc * dl * dl * dl - c * v;
        if i + 1 < MASSES {
            let dr = y[2 * i + 2] - x;
            f += k * dr + kc * dr * dr * dr;
        }
        dy[2 * i] = v;
        dy[2 * i + 1] = f;
    }
}

fn carts_sheet() -> String {
    let mut s = String::from("k = 40\nkc = 5\nc = 0.3\n");
    for i in 0..MASSES {
        let left = if i == 0 { "0.05*sin(3*t)".to_string() } else { format!("x{}", i - 1) };
        s += &format!("dl{i} = {left} - x{i}\n");
        let mut f = format!("k*dl{i} + kc*dl{i}*dl{i}*dl{i} - c*v{i}");
        if i + 1 < MASSES {
            s += &format!("dr{i} = x{} - x{i}\n", i + 1);
            f += &format!(" + (k*dr{i} + kc*dr{i}*dr{i}*dr{i})");
        }
        s += &format!("x{i}' = v{i}\nv{i}' = {f}\nx{i}(0) = 0\nv{i}(0) = 0\n");
    }
    s
}

const ORBIT: &str = crate::problems::bench::ARENSTORF_SHEET;

fn cases() -> Vec<Case> {
    vec![
        Case {
            name: "-a/A*sqrt(2*g*h)",
            sheet: "a = 0.004\nA = 1.5\ng = 9.81\ndh/dt = -a/A*sqrt(2*g*h)\nh(0) = 2\n".into(),
            rust: tank,
            h: 1e-3,
        },
        Case { name: "-x*y + y + sin(y)", sheet: "dy/dx = -x*y + y + sin(y)\ny(0) = 1\n".into(), rust: growth, h: 1e-5 },
        Case {
            name: "-g*sin(y) - 0.1*v*abs(v) + 0.2*cos(t)",
            sheet: "g = 9.81\ny' = v\nv' = -g*sin(y) - 0.1*v*abs(v) + 0.2*cos(t)\ny(0) = 1\nv(0) = 0\n".into(),
            rust: swing,
            h: 1e-4,
        },
        Case { name: "orbit (4 states, restricted three-body)", sheet: ORBIT.into(), rust: arenstorf_rhs, h: 1e-6 },
        Case { name: "carts (20 states)", sheet: carts_sheet(), rust: carts, h: 1e-5 },
        // The 20-state model of the native sheet benchmark (examples/bench_sheet.rs).
        Case { name: "20-state thermal chain", sheet: chain::chain_sheet(20), rust: thermal, h: 1e-3 },
    ]
}

/// A case made ready: its models compiled and emitted once, outside the timing.
struct Ready {
    rust: Rates,
    dyn_rust: Box<dyn Problem>,
    interpreter: Model,
    emitted: EmittedModel,
    t0: f64,
    y0: Vec<f64>,
    h: f64,
}

thread_local! {
    static READY: RefCell<Vec<Ready>> = const { RefCell::new(Vec::new()) };
}

fn fault(msg: String) -> JsValue {
    js_sys::Error::new(&msg).into()
}

/// The case names, in order. Compiles and emits every case once; throws if
/// a sheet does not compile or a model could not be emitted.
#[wasm_bindgen(js_name = benchEmitCases)]
pub fn bench_emit_cases() -> Result<Vec<String>, JsValue> {
    let mut ready = Vec::new();
    let mut names = Vec::new();
    for c in cases() {
        let m = compile(&c.sheet).map_err(|e| fault(format!("{}: {}", c.name, e.message())))?;
        let emitted = EmittedModel::new(m.clone());
        if !emitted.is_emitted() {
            return Err(fault(format!("{}: not emitted", c.name)));
        }
        let names_of: Vec<&str> = m.state_names().iter().map(String::as_str).collect();
        let rust = c.rust;
        ready.push(Ready {
            rust,
            dyn_rust: Box::new(FnProblem::new(&names_of, rust)),
            t0: m.t0(),
            y0: m.initial_state().to_vec(),
            interpreter: m,
            emitted,
            h: c.h,
        });
        names.push(c.name.to_string());
    }
    READY.with(|r| *r.borrow_mut() = ready);
    Ok(names)
}

fn with_case<R>(case: usize, f: impl FnOnce(&mut Ready) -> R) -> Result<R, JsValue> {
    READY.with(|r| r.borrow_mut().get_mut(case).map(f)).ok_or_else(|| fault(format!("no case {case}; call benchEmitCases first")))
}

/// `calls` evaluations of the rates at varying `t` and the initial state;
/// returns the sum of the first rate.
fn rhs_loop(mut f: impl FnMut(f64, &[f64], &mut [f64]), y: &[f64], calls: u32) -> f64 {
    let mut dy = vec![0.0; y.len()];
    let mut sum = 0.0;
    for k in 0..calls {
        f(black_box(k as f64 * 1e-6), black_box(y), &mut dy);
        sum += dy[0];
    }
    sum
}

/// `steps` classical RK4 steps from `(t, y)` with the exact arithmetic of
/// [`lower::rk4_module`](crate::emit::lower::rk4_module), so that the emitted
/// stage loop and this one over the interpreter agree bit for bit.
fn rk4_loop(mut f: impl FnMut(f64, &[f64], &mut [f64]), mut t: f64, y: &mut [f64], h: f64, steps: u32) {
    let n = y.len();
    let mut k = vec![vec![0.0; n]; 4];
    let mut yt = vec![0.0; n];
    let (half, sixth) = (h * 0.5, h / 6.0);
    for _ in 0..steps {
        let (th, tf) = (t + half, t + h);
        f(t, y, &mut k[0]);
        for i in 0..n {
            yt[i] = y[i] + half * k[0][i];
        }
        f(th, &yt, &mut k[1]);
        for i in 0..n {
            yt[i] = y[i] + half * k[1][i];
        }
        f(th, &yt, &mut k[2]);
        for i in 0..n {
            yt[i] = y[i] + h * k[2][i];
        }
        f(tf, &yt, &mut k[3]);
        for i in 0..n {
            y[i] += sixth * (k[0][i] + 2.0 * k[1][i] + 2.0 * k[2][i] + k[3][i]);
        }
        t += h;
    }
}

/// Evaluate the rates of case `case` `calls` times, the way `kind` says
/// (`rust`, `rust-dyn`, `interpreter`, `emitted`); returns a checksum.
#[wasm_bindgen(js_name = benchEmitRhs)]
pub fn bench_emit_rhs(case: usize, kind: &str, calls: u32) -> Result<f64, JsValue> {
    with_case(case, |r| {
        let y = r.y0.clone();
        match kind {
            "rust" => Ok(rhs_loop(r.rust, &y, calls)),
            "rust-dyn" => Ok(rhs_loop(|t, y, dy| r.dyn_rust.rhs(t, y, dy), &y, calls)),
            "interpreter" => Ok(rhs_loop(|t, y, dy| r.interpreter.rhs(t, y, dy), &y, calls)),
            "emitted" => Ok(rhs_loop(|t, y, dy| r.emitted.rhs(t, y, dy), &y, calls)),
            _ => Err(fault(format!("unknown kind {kind}"))),
        }
    })?
}

/// `steps` RK4 steps of case `case` from its initial state, the way `kind`
/// says (the kinds of [`bench_emit_rhs`] and `emitted-rk4`); returns the
/// final state.
#[wasm_bindgen(js_name = benchEmitRk4)]
pub fn bench_emit_rk4(case: usize, kind: &str, steps: u32) -> Result<Vec<f64>, JsValue> {
    with_case(case, |r| {
        let mut y = r.y0.clone();
        let (t0, h) = (r.t0, r.h);
        match kind {
            "rust" => rk4_loop(r.rust, t0, &mut y, h, steps),
            "rust-dyn" => rk4_loop(|t, y, dy| r.dyn_rust.rhs(t, y, dy), t0, &mut y, h, steps),
            "interpreter" => rk4_loop(|t, y, dy| r.interpreter.rhs(t, y, dy), t0, &mut y, h, steps),
            "emitted" => rk4_loop(|t, y, dy| r.emitted.rhs(t, y, dy), t0, &mut y, h, steps),
            "emitted-rk4" => {
                if !r.emitted.rk4_steps(t0, &mut y, h, steps) {
                    return Err(fault("the RK4 stepper could not be emitted".into()));
                }
            }
            _ => return Err(fault(format!("unknown kind {kind}"))),
        }
        Ok(y)
    })?
}

/// Make an emitted model of case `case` `times` times from a compiled model
/// (`emit` true: emit, compile, instantiate and install; false: only clone
/// the model), for the cost of loading.
#[wasm_bindgen(js_name = benchEmitLoad)]
pub fn bench_emit_load(case: usize, emit: bool, times: u32) -> Result<u32, JsValue> {
    with_case(case, |r| {
        let mut loads = 0;
        for _ in 0..times {
            let m = r.interpreter.clone();
            if emit {
                loads += EmittedModel::new(m).loads();
            } else {
                black_box(m);
            }
        }
        loads
    })
}

/// The non-stiff problems of the shared set as sheets
/// ([`crate::problems::bench::sheet`]): `(name, sheet)`.
fn solve_sheets() -> Vec<(&'static str, String)> {
    let names = ["logistic", "cooling", "oscillator", "arenstorf", "lorenz", "brusselator", "pendulum"];
    names
        .into_iter()
        .filter_map(|n| crate::problems::bench::sheet(n).map(|s| (n, s.to_string())))
        .map(|(n, s)| match n {
            // Without helpers, like the hand-written one (helpers add work: their extrema).
            "arenstorf" => (n, ORBIT.replace("r1 = ", "# ").replace("r2 = ", "# ")
                .replace("/r1", "/((x + mu)*(x + mu) + y*y)^1.5").replace("/r2", "/((x - m)*(x - m) + y*y)^1.5")),
            _ => (n, s),
        })
        .collect()
}

/// The names of the shared non-stiff problems with a sheet for the solve benchmark.
#[wasm_bindgen(js_name = benchEmitSolveCases)]
pub fn bench_emit_solve_cases() -> Vec<String> {
    solve_sheets().into_iter().map(|(n, _)| n.to_string()).collect()
}

/// A problem of the solve benchmark, made once.
struct SolveCase {
    name: String,
    kind: String,
    problem: Box<dyn Problem>,
    t0: f64,
    y0: Vec<f64>,
    to: f64,
}

thread_local! {
    static SOLVE_READY: RefCell<Vec<SolveCase>> = const { RefCell::new(Vec::new()) };
}

fn solve_case(name: &str, kind: &str) -> Result<SolveCase, JsValue> {
    let tp = crate::problems::by_name(name).ok_or_else(|| fault(format!("no problem {name}")))?;
    let sheet = solve_sheets().into_iter().find(|(n, _)| *n == name).map(|(_, s)| s);
    let sheet = sheet.ok_or_else(|| fault(format!("no sheet for {name}")))?;
    let model = compile(&sheet).map_err(|e| fault(e.message()))?;
    let problem: Box<dyn Problem> = match kind {
        "rust" => (tp.make)(),
        "interpreter" => Box::new(model),
        "emitted" => Box::new(EmittedModel::new(model)),
        _ => return Err(fault(format!("unknown kind {kind}"))),
    };
    Ok(SolveCase { name: name.into(), kind: kind.into(), problem, t0: tp.t0, y0: tp.y0, to: tp.t_end })
}

/// Solve shared problem `name` to its end with the default method and
/// tolerances, its rates as `kind` says (`rust`: the shared set's own
/// hand-written problem; `interpreter`; `emitted`); returns
/// `[accepted steps, rate evaluations, final state…]`. The problem is made
/// (compiled, emitted) on the first call and reused after.
#[wasm_bindgen(js_name = benchEmitSolve)]
pub fn bench_emit_solve(name: &str, kind: &str) -> Result<Vec<f64>, JsValue> {
    let find = |r: &[SolveCase]| r.iter().position(|c| c.name == name && c.kind == kind);
    if SOLVE_READY.with(|r| find(&r.borrow())).is_none() {
        let c = solve_case(name, kind)?;
        SOLVE_READY.with(|r| r.borrow_mut().push(c));
    }
    SOLVE_READY.with(|r| {
        let mut r = r.borrow_mut();
        let k = find(&r).ok_or_else(|| fault(format!("no problem {name}")))?;
        let c = &mut r[k];
        let settings = Settings { to: c.to, ..Settings::default() };
        let run = crate::solve::solve(c.problem.as_mut(), c.t0, &c.y0, &settings).map_err(|e| fault(format!("{e:?}")))?;
        let mut out = vec![run.stats.steps as f64, run.stats.rhs_evals as f64];
        out.extend(run.states.iter().map(|s| s.last().copied().unwrap_or(f64::NAN)));
        Ok(out)
    })
}
