//! The page side of emitted models: the maths exports that emitted modules
//! import, and the loader that compiles, instantiates and installs them.
//!
//! Loading a module is synchronous: `new WebAssembly.Module(bytes)`, then
//! `new WebAssembly.Instance(module, { env: { memory, rb_sin, … } })`, where
//! `memory` is this solver's memory and the maths functions are this solver's
//! own exports, so every call stays inside wasm. Each exported kernel goes into
//! a slot of the solver's function table (grown when no freed slot is left),
//! and the slot's index is the function pointer the solver calls. Works the
//! same in a Web Worker. When the engine refuses to compile (a CSP without
//! `'wasm-unsafe-eval'`) or anything else fails, the model runs on the
//! interpreter.

use std::cell::RefCell;

use js_sys::{Float64Array, Function, Object, Reflect, Uint8Array, WebAssembly};
use wasm_bindgen::prelude::*;
use wasm_bindgen::JsCast;

use crate::emit::lower::{IMPORT_MODULE, MATHS};
use crate::emit::{self, EmittedModel, Loader};
use crate::problem::Problem;
use crate::sheet::ir::{apply, Op};

/// Exports `rb_NAME`, computing exactly what the interpreter computes for `op`.
macro_rules! maths {
    ($($name:ident($($arg:ident),+) = $op:ident;)*) => {$(
        #[doc = concat!("`", stringify!($op), "` as the interpreter computes it, for emitted modules to import.")]
        #[no_mangle]
        pub extern "C" fn $name($($arg: f64),+) -> f64 {
            let [x, y] = operands([$($arg),+]);
            apply(Op::$op, x, y, 0.0)
        }
    )*};
}

/// The operands `(x, y)` of [`apply`]: a one-operand operation reads `x` twice.
fn operands<const N: usize>(args: [f64; N]) -> [f64; 2] {
    [args[0], args[N - 1]]
}

maths! {
    rb_rem(x, y) = Rem;
    rb_pow(x, y) = Pow;
    rb_atan2(x, y) = Atan2;
    rb_min(x, y) = Min;
    rb_max(x, y) = Max;
    rb_hypot(x, y) = Hypot;
    rb_exp(x) = Exp;
    rb_ln(x) = Ln;
    rb_log10(x) = Log10;
    rb_sin(x) = Sin;
    rb_cos(x) = Cos;
    rb_tan(x) = Tan;
    rb_asin(x) = Asin;
    rb_acos(x) = Acos;
    rb_atan(x) = Atan;
    rb_sinh(x) = Sinh;
    rb_cosh(x) = Cosh;
    rb_tanh(x) = Tanh;
    rb_asinh(x) = Asinh;
    rb_acosh(x) = Acosh;
    rb_atanh(x) = Atanh;
    rb_round(x) = Round;
    rb_signum(x) = Signum;
}

thread_local! {
    /// The import object, made once: `{ env: { memory, rb_… } }`.
    static IMPORTS: RefCell<Option<Object>> = const { RefCell::new(None) };
    /// Table slots given back, for reuse.
    static FREE: RefCell<Vec<u32>> = const { RefCell::new(Vec::new()) };
}

fn imports() -> Result<Object, JsValue> {
    IMPORTS.with(|cell| {
        if let Some(o) = cell.borrow().as_ref() {
            return Ok(o.clone());
        }
        let env = Object::new();
        Reflect::set(&env, &"memory".into(), &wasm_bindgen::memory())?;
        let exports = wasm_bindgen::exports();
        for (name, _) in MATHS {
            Reflect::set(&env, &(*name).into(), &Reflect::get(&exports, &(*name).into())?)?;
        }
        let o = Object::new();
        Reflect::set(&o, &IMPORT_MODULE.into(), &env)?;
        *cell.borrow_mut() = Some(o.clone());
        Ok(o)
    })
}

fn table() -> WebAssembly::Table {
    wasm_bindgen::function_table().unchecked_into()
}

fn install(bytes: &[u8], names: &[&str]) -> Result<Vec<usize>, JsValue> {
    let module = WebAssembly::Module::new(&Uint8Array::from(bytes).into())?;
    let instance = WebAssembly::Instance::new(&module, &imports()?)?;
    let exports = instance.exports();
    let table = table();
    let mut fns = Vec::with_capacity(names.len());
    for name in names {
        let put = |fns: &mut Vec<usize>| -> Result<(), JsValue> {
            let f: Function = Reflect::get(&exports, &(*name).into())?.dyn_into()?;
            let slot = match FREE.with(|free| free.borrow_mut().pop()) {
                Some(s) => s,
                None => table.grow(1)?,
            };
            // On wasm32 a function pointer is an index into this table.
            fns.push(slot as usize);
            table.set(slot, &f)
        };
        if let Err(e) = put(&mut fns) {
            release(&fns);
            return Err(e);
        }
    }
    Ok(fns)
}

fn load(bytes: &[u8], names: &[&str]) -> Option<Vec<usize>> {
    install(bytes, names).ok()
}

fn release(fns: &[usize]) {
    let table = table();
    FREE.with(|free| {
        let mut free = free.borrow_mut();
        for &f in fns {
            let slot = f as u32;
            // Drop the instance's function so that its module can be collected.
            if table.set_raw(slot, &JsValue::NULL).is_ok() {
                free.push(slot);
            }
        }
    });
}

/// Register the loader; called once when the solver starts.
pub fn register() {
    emit::model::set_loader(Loader { load, release });
}

/// Turn emitted models on or off (on by default). Off, every model runs on
/// the interpreter; for comparisons and as a switch for the page.
#[wasm_bindgen(js_name = setEmitting)]
pub fn set_emitting(on: bool) {
    emit::model::set_enabled(on);
}

fn compile(sheet: &str) -> Result<crate::sheet::Model, JsValue> {
    crate::sheet::compile(sheet).map_err(|e| JsValue::from(js_sys::Error::new(&e.message())))
}

/// The bytes of the emitted module for a sheet's rates, helpers, events and
/// switches (exports `rates`, `all`, `events`, `switches`). Throws for a
/// sheet that cannot be read or a model too large to emit.
#[wasm_bindgen(js_name = emitModule)]
pub fn emit_module(sheet: &str) -> Result<Uint8Array, JsValue> {
    let m = compile(sheet)?;
    let kernels = [
        ("rates", m.rhs_program()),
        ("all", m.all_program()),
        ("events", m.event_program()),
        ("switches", m.switch_program()),
    ];
    let bytes = emit::lower::module(&kernels).map_err(|e| JsValue::from(js_sys::Error::new(&format!("{e:?}"))))?;
    Ok(Uint8Array::from(&bytes[..]))
}

/// Every evaluation a solver can ask of a model, at each point, in one flat
/// array: rates, helpers, events, switches, Jacobian, `∂f/∂t` and the
/// helpers' rates.
fn evaluate(p: &mut dyn Problem, points: &[f64]) -> Vec<f64> {
    let n = p.dim();
    let mut out = Vec::new();
    for point in points.chunks_exact(1 + n) {
        let (t, y) = (point[0], &point[1..]);
        let nh = p.helper_names().len();
        let sizes = [n, nh, p.events().len(), p.switch_count(), n * n, n, nh];
        let start = out.len();
        out.resize(start + sizes.iter().sum::<usize>(), 0.0);
        let mut rest = &mut out[start..];
        let mut take = |k: usize| {
            let (head, tail) = std::mem::take(&mut rest).split_at_mut(k);
            rest = tail;
            head
        };
        let dy = take(sizes[0]);
        p.rhs(t, y, dy);
        let dy = dy.to_vec();
        p.helpers(t, y, take(sizes[1]));
        p.event_values(t, y, take(sizes[2]));
        p.switch_values(t, y, take(sizes[3]));
        p.jacobian(t, y, take(sizes[4]));
        p.time_derivative(t, y, take(sizes[5]));
        p.helper_rates(t, y, &dy, take(sizes[6]));
    }
    out
}

/// Evaluate a sheet both ways at `points` (each `t` then the states), for
/// the equivalence tests. `live`, when given, is a list of `[name, value]`:
/// those parameters are made live, then set, before evaluating.
///
/// Returns `{ emitted, loads, dim, interpreted: Float64Array, compiled: Float64Array }`:
/// `emitted` says whether the compiled side really ran emitted code, `loads`
/// how many modules it loaded.
#[wasm_bindgen(js_name = emitCheck)]
pub fn emit_check(sheet: &str, points: &[f64], live: JsValue) -> Result<JsValue, JsValue> {
    let live: Vec<(String, f64)> =
        if live.is_undefined() || live.is_null() { Vec::new() } else { serde_wasm_bindgen::from_value(live)? };
    let m = compile(sheet)?;
    let mut interpreted = m.clone();
    let mut compiled = EmittedModel::new(m);
    if !live.is_empty() {
        let names: Vec<&str> = live.iter().map(|(n, _)| n.as_str()).collect();
        interpreted.set_live(&names);
        compiled.set_live(&names);
        for (n, v) in &live {
            interpreted.set_param(n, *v);
            compiled.set_param(n, *v);
        }
    }
    let emitted = compiled.is_emitted();
    let a = evaluate(&mut interpreted, points);
    let b = evaluate(&mut compiled, points);
    let o = Object::new();
    Reflect::set(&o, &"emitted".into(), &emitted.into())?;
    Reflect::set(&o, &"loads".into(), &compiled.loads().into())?;
    Reflect::set(&o, &"dim".into(), &(compiled.dim() as u32).into())?;
    Reflect::set(&o, &"interpreted".into(), &Float64Array::from(&a[..]))?;
    Reflect::set(&o, &"compiled".into(), &Float64Array::from(&b[..]))?;
    Ok(o.into())
}
