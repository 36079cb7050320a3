//! Lowering programs of the sheet's IR ([`crate::sheet::ir`]) to wasm
//! functions, one module per model.
//!
//! Every emitted function has the kernel signature
//! `(t: f64, y: i32, out: i32, live: i32)`: it reads the states as `f64` at
//! `y + 8·i` and the live parameters at `live + 8·j` in the solver's own
//! linear memory, and writes result `k` at `out + 8·k`.
//!
//! Each instruction becomes the wasm operations that compute exactly
//! [`apply`](crate::sheet::ir::apply): the IEEE basic operations (`+ - * /`,
//! `sqrt`, `abs`, negation, `floor`, `ceil`, `trunc`) are native wasm
//! instructions with the same correctly rounded results; `sign` and `step` are
//! comparisons and `select`s; everything else calls the solver's own Rust
//! implementation through an import ([`MATHS`]). Instructions run in the
//! tape's order, so results are bit-identical with the interpreter.

use super::wasm::{Code, FuncType, Module, Simple, ValType};
use crate::sheet::ir::{Op, Program};

/// The module every import comes from: the solver instance's exports and its memory.
pub const IMPORT_MODULE: &str = "env";

/// The maths functions an emitted module may import, by the solver's export
/// name, each with the operation whose meaning ([`apply`](crate::sheet::ir::apply))
/// it implements. Binary operations take `(x, y)`; the others take `x`.
/// `x ^ c` and `c ^ x` call the `pow` of this list too.
pub const MATHS: &[(&str, Op)] = &[
    ("rb_rem", Op::Rem),
    ("rb_pow", Op::Pow),
    ("rb_atan2", Op::Atan2),
    ("rb_min", Op::Min),
    ("rb_max", Op::Max),
    ("rb_hypot", Op::Hypot),
    ("rb_exp", Op::Exp),
    ("rb_ln", Op::Ln),
    ("rb_log10", Op::Log10),
    ("rb_sin", Op::Sin),
    ("rb_cos", Op::Cos),
    ("rb_tan", Op::Tan),
    ("rb_asin", Op::Asin),
    ("rb_acos", Op::Acos),
    ("rb_atan", Op::Atan),
    ("rb_sinh", Op::Sinh),
    ("rb_cosh", Op::Cosh),
    ("rb_tanh", Op::Tanh),
    ("rb_asinh", Op::Asinh),
    ("rb_acosh", Op::Acosh),
    ("rb_atanh", Op::Atanh),
    ("rb_round", Op::Round),
    ("rb_signum", Op::Signum),
];

/// The signature of every emitted kernel: `(t, y, out, live)`.
pub fn kernel_type() -> FuncType {
    FuncType { params: vec![ValType::F64, ValType::I32, ValType::I32, ValType::I32], results: vec![] }
}

fn maths_type(binary: bool) -> FuncType {
    let params = if binary { vec![ValType::F64, ValType::F64] } else { vec![ValType::F64] };
    FuncType { params, results: vec![ValType::F64] }
}

/// The position in [`MATHS`] of the import that computes `op`, if any.
fn maths_index(op: Op) -> Option<usize> {
    let op = match op {
        Op::PowC | Op::CPow => Op::Pow,
        o => o,
    };
    MATHS.iter().position(|&(_, o)| o == op)
}

/// Why a program could not be emitted; the interpreter is used instead.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum EmitError {
    /// The program is larger than a wasm function may be (too many live
    /// values or too large a memory offset).
    TooLarge,
    /// A stepper was asked for a program that does not give one rate per state.
    NotRates,
}

/// Imports of a module: the function index of each entry of [`MATHS`] that
/// some program uses (`u32::MAX` for the others).
struct Imports(Vec<u32>);

impl Imports {
    /// Import memory and every maths function that the slots `needed` of
    /// `programs` use.
    fn declare(m: &mut Module, programs: &[(&Program, &[bool])]) -> Imports {
        m.import_memory(IMPORT_MODULE, "memory");
        let mut used = vec![false; MATHS.len()];
        for (p, needed) in programs {
            let first = p.first_inst_slot();
            for (k, i) in p.insts().iter().enumerate() {
                if let (true, Some(m)) = (needed[first + k], maths_index(i.op)) {
                    used[m] = true;
                }
            }
        }
        let mut funcs = vec![u32::MAX; MATHS.len()];
        for (k, &(name, op)) in MATHS.iter().enumerate() {
            if used[k] {
                funcs[k] = m.import_func(IMPORT_MODULE, name, &maths_type(op.is_binary()));
            }
        }
        Imports(funcs)
    }
}

/// The bytes of one module that exports each `(name, program)` of `kernels`
/// as a kernel (see the [module docs](self)). It imports `env.memory` and only
/// the maths functions the programs use.
pub fn module(kernels: &[(&str, &Program)]) -> Result<Vec<u8>, EmitError> {
    let mut m = Module::new();
    let needed: Vec<Vec<bool>> = kernels.iter().map(|(_, p)| needed(p)).collect();
    let programs: Vec<(&Program, &[bool])> = kernels.iter().zip(&needed).map(|((_, p), n)| (*p, &n[..])).collect();
    let imports = Imports::declare(&mut m, &programs);
    let ty = kernel_type();
    for ((name, p), needed) in kernels.iter().zip(&needed) {
        let f = m.define(&ty, kernel(p, needed, &imports)?);
        m.export(name, f);
    }
    Ok(m.finish())
}

/// The signature of the emitted RK4 stepper: `(t, y, h, steps, live)`.
pub fn rk4_type() -> FuncType {
    FuncType { params: vec![ValType::F64, ValType::I32, ValType::F64, ValType::I32, ValType::I32], results: vec![] }
}

/// A module exporting `rk4(t, y, h, steps, live)`: `steps` steps of the
/// classical fourth-order Runge–Kutta method (Kutta 1901; Hairer, Nørsett &
/// Wanner, Solving ODEs I, Table II.1.2, from memory) on the rates `rates`,
/// with the stage loop and the formulas in one function, the states kept in
/// locals and written back to `y` at the end.
///
/// Each step computes, in this order and with these roundings,
/// `k1 = f(t, y)`, `k2 = f(t + h·0.5, y + (h·0.5)·k1)`,
/// `k3 = f(t + h·0.5, y + (h·0.5)·k2)`, `k4 = f(t + h, y + h·k3)`,
/// `y ← y + (h/6)·(((k1 + 2·k2) + 2·k3) + k4)` and `t ← t + h`, so that the
/// same loop written in Rust over the interpreter gives the same bits.
pub fn rk4_module(rates: &Program) -> Result<Vec<u8>, EmitError> {
    let dim = rates.dim();
    if rates.outputs().len() != dim {
        return Err(EmitError::NotRates);
    }
    let mut m = Module::new();
    let need = needed(rates);
    let imports = Imports::declare(&mut m, &[(rates, &need)]);
    const T0: u32 = 0;
    const YP: u32 = 1;
    const H: u32 = 2;
    const STEPS: u32 = 3;
    const LIVEP: u32 = 4;
    let mut c = Code::new(5);
    let mut locals = Locals::default();
    let many = |c: &mut Code, locals: &mut Locals, n: usize| -> Result<Vec<u32>, EmitError> {
        (0..n).map(|_| locals.fresh(c, ValType::F64)).collect()
    };
    let y = many(&mut c, &mut locals, dim)?;
    let yt = many(&mut c, &mut locals, dim)?;
    let k: Vec<Vec<u32>> = (0..4).map(|_| many(&mut c, &mut locals, dim)).collect::<Result<_, _>>()?;
    let live = many(&mut c, &mut locals, rates.n_live())?;
    let scalars = many(&mut c, &mut locals, 4)?;
    let (half, sixth, t_half, t_full) = (scalars[0], scalars[1], scalars[2], scalars[3]);
    for (i, &l) in y.iter().enumerate() {
        c.get(YP).f64_load(8 * i as u32).set(l);
    }
    for (j, &l) in live.iter().enumerate() {
        c.get(LIVEP).f64_load(8 * j as u32).set(l);
    }
    c.get(H).f64_const(0.5).op(Simple::F64Mul).set(half);
    c.get(H).f64_const(6.0).op(Simple::F64Div).set(sixth);
    c.block().loop_();
    c.get(STEPS).op(Simple::I32Eqz).br_if(1);
    c.get(T0).get(half).op(Simple::F64Add).set(t_half);
    c.get(T0).get(H).op(Simple::F64Add).set(t_full);
    // Stage s reads the states `input` at time `at` and writes k[s];
    // the next stage's input is y + factor·k[s].
    let stages = [(T0, &y, Some(half)), (t_half, &yt, Some(half)), (t_half, &yt, Some(H)), (t_full, &yt, None)];
    for (s, (at, input, factor)) in stages.into_iter().enumerate() {
        let frame = Frame { t: at, states: input, live: &live };
        let out = body(&mut c, rates, &need, &imports, &frame, &mut locals)?;
        for (v, &kl) in out.iter().zip(&k[s]) {
            v.push(&mut c);
            c.set(kl);
        }
        locals.release(&out);
        if let Some(f) = factor {
            for i in 0..dim {
                c.get(y[i]).get(f).get(k[s][i]).op(Simple::F64Mul).op(Simple::F64Add).set(yt[i]);
            }
        }
    }
    for i in 0..dim {
        c.get(y[i]).get(sixth);
        c.get(k[0][i]).f64_const(2.0).get(k[1][i]).op(Simple::F64Mul).op(Simple::F64Add);
        c.f64_const(2.0).get(k[2][i]).op(Simple::F64Mul).op(Simple::F64Add);
        c.get(k[3][i]).op(Simple::F64Add);
        c.op(Simple::F64Mul).op(Simple::F64Add).set(y[i]);
    }
    c.get(T0).get(H).op(Simple::F64Add).set(T0);
    c.get(STEPS).i32_const(-1).op(Simple::I32Add).set(STEPS);
    c.br(0).end().end();
    for (i, &l) in y.iter().enumerate() {
        c.get(YP).get(l).f64_store(8 * i as u32);
    }
    c.end();
    let f = m.define(&rk4_type(), c);
    m.export("rk4", f);
    Ok(m.finish())
}

/// Parameters of a kernel.
const T: u32 = 0;
const Y: u32 = 1;
const OUT: u32 = 2;
const LIVE: u32 = 3;

/// Most locals a function may declare in the engines we target (V8 and
/// SpiderMonkey refuse more than 50 000).
const MAX_LOCALS: usize = 50_000;

/// Which slots of `p` matter: those whose value reaches an output.
fn needed(p: &Program) -> Vec<bool> {
    let first_inst = p.first_inst_slot();
    let mut needed = vec![false; first_inst + p.insts().len()];
    for &o in p.outputs() {
        needed[o as usize] = true;
    }
    for (k, i) in p.insts().iter().enumerate().rev() {
        if needed[first_inst + k] {
            needed[i.a as usize] = true;
            needed[i.b as usize] = true;
        }
    }
    needed
}

/// The `f64` locals of a function being emitted; values that are dead give
/// theirs back for reuse.
#[derive(Default)]
struct Locals {
    free: Vec<u32>,
    count: usize,
}

impl Locals {
    /// A new local of type `t` (never reused).
    fn fresh(&mut self, c: &mut Code, t: ValType) -> Result<u32, EmitError> {
        self.count += 1;
        if self.count > MAX_LOCALS {
            return Err(EmitError::TooLarge);
        }
        Ok(c.local(t))
    }

    /// An `f64` local for a value, reusing a freed one when there is one.
    fn take(&mut self, c: &mut Code) -> Result<u32, EmitError> {
        match self.free.pop() {
            Some(l) => Ok(l),
            None => self.fresh(c, ValType::F64),
        }
    }

    /// Give back the locals of values that are no longer read.
    fn release(&mut self, values: &[Value]) {
        for v in values {
            if let Value::Temp(l) = *v {
                if !self.free.contains(&l) {
                    self.free.push(l);
                }
            }
        }
    }
}

/// Where an output of [`body`] is.
#[derive(Clone, Copy, Debug, PartialEq)]
enum Value {
    /// In a local owned by the caller (`t`, a state, a live parameter).
    Input(u32),
    /// In a local of [`body`]'s own, to [`Locals::release`] once read.
    Temp(u32),
    /// A constant.
    Const(f64),
}

impl Value {
    fn push(self, c: &mut Code) {
        match self {
            Value::Input(l) | Value::Temp(l) => c.get(l),
            Value::Const(v) => c.f64_const(v),
        };
    }
}

/// The locals holding a program's inputs.
struct Frame<'a> {
    /// The independent variable.
    t: u32,
    /// One per state (only those the program reads are used).
    states: &'a [u32],
    /// One per live parameter.
    live: &'a [u32],
}

/// Emit the instructions of `p` whose slots are `needed`, reading its inputs
/// from `frame`; returns where each output is.
fn body(
    c: &mut Code,
    p: &Program,
    needed: &[bool],
    imports: &Imports,
    frame: &Frame,
    locals: &mut Locals,
) -> Result<Vec<Value>, EmitError> {
    let dim = p.dim();
    let first_const = 1 + dim + p.n_live();
    let first_inst = p.first_inst_slot();
    let insts = p.insts();
    let outputs = p.outputs();
    let total = first_inst + insts.len();
    let consts = p.consts();

    // The last instruction that reads each slot; outputs are read after all.
    const AT_END: usize = usize::MAX;
    let mut last_use = vec![0usize; total];
    for (k, i) in insts.iter().enumerate() {
        if needed[first_inst + k] {
            last_use[i.a as usize] = k;
            last_use[i.b as usize] = k;
        }
    }
    for &o in outputs {
        last_use[o as usize] = AT_END;
    }

    let mut val = vec![Value::Const(f64::NAN); total];
    val[0] = Value::Input(frame.t);
    for (i, &l) in frame.states.iter().enumerate().take(dim) {
        val[1 + i] = Value::Input(l);
    }
    for (j, &l) in frame.live.iter().enumerate() {
        val[1 + dim + j] = Value::Input(l);
    }
    for (j, &v) in consts.iter().enumerate() {
        val[first_const + j] = Value::Const(v);
    }
    for (k, i) in insts.iter().enumerate() {
        if !needed[first_inst + k] {
            continue;
        }
        let (x, y, imm) = (val[i.a as usize], val[i.b as usize], i.c);
        use Op::*;
        match i.op {
            Add | Sub | Mul | Div => {
                x.push(c);
                y.push(c);
                c.op(match i.op {
                    Add => Simple::F64Add,
                    Sub => Simple::F64Sub,
                    Mul => Simple::F64Mul,
                    _ => Simple::F64Div,
                });
            }
            AddC | MulC | DivC => {
                x.push(c);
                c.f64_const(imm).op(match i.op {
                    AddC => Simple::F64Add,
                    MulC => Simple::F64Mul,
                    _ => Simple::F64Div,
                });
            }
            CSub | CDiv => {
                c.f64_const(imm);
                x.push(c);
                c.op(if i.op == CSub { Simple::F64Sub } else { Simple::F64Div });
            }
            Sq => {
                x.push(c);
                x.push(c);
                c.op(Simple::F64Mul);
            }
            Neg | Sqrt | Abs | Floor | Ceil | Trunc => {
                x.push(c);
                c.op(match i.op {
                    Neg => Simple::F64Neg,
                    Sqrt => Simple::F64Sqrt,
                    Abs => Simple::F64Abs,
                    Floor => Simple::F64Floor,
                    Ceil => Simple::F64Ceil,
                    _ => Simple::F64Trunc,
                });
            }
            Sign => {
                // x > 0 ? 1 : (x < 0 ? -1 : (x == 0 ? 0 : x))
                c.f64_const(1.0).f64_const(-1.0).f64_const(0.0);
                x.push(c);
                for cmp in [Simple::F64Eq, Simple::F64Lt, Simple::F64Gt] {
                    x.push(c);
                    c.f64_const(0.0).op(cmp).op(Simple::Select);
                }
            }
            Heaviside => {
                // x >= 0 ? 1 : (x < 0 ? 0 : x)
                c.f64_const(1.0).f64_const(0.0);
                x.push(c);
                for cmp in [Simple::F64Lt, Simple::F64Ge] {
                    x.push(c);
                    c.f64_const(0.0).op(cmp).op(Simple::Select);
                }
            }
            PowC => {
                x.push(c);
                c.f64_const(imm);
            }
            CPow => {
                c.f64_const(imm);
                x.push(c);
            }
            op if op.is_binary() => {
                x.push(c);
                y.push(c);
            }
            _ => x.push(c),
        }
        if let Some(m) = maths_index(i.op) {
            c.call(imports.0[m]);
        }
        // Operands read for the last time give their locals back.
        for s in [i.a as usize, i.b as usize] {
            if last_use[s] == k {
                locals.release(&[val[s]]);
            }
        }
        let l = locals.take(c)?;
        c.set(l);
        val[first_inst + k] = Value::Temp(l);
    }
    Ok(outputs.iter().map(|&o| val[o as usize]).collect())
}

/// The body of one kernel for program `p`, whose slots that matter are
/// `needed`.
fn kernel(p: &Program, needed: &[bool], imports: &Imports) -> Result<Code, EmitError> {
    let dim = p.dim();
    let n_live = p.n_live();
    if (dim.max(n_live).max(p.outputs().len()) as u64) * 8 > u32::MAX as u64 {
        return Err(EmitError::TooLarge);
    }
    let mut c = Code::new(4);
    let mut locals = Locals::default();
    // States and live parameters that the program reads are loaded once, up front.
    let load = |c: &mut Code, locals: &mut Locals, base: u32, first: usize, n: usize| {
        let mut ls = vec![u32::MAX; n];
        for (i, l) in ls.iter_mut().enumerate() {
            if needed[first + i] {
                *l = locals.fresh(c, ValType::F64)?;
                c.get(base).f64_load(8 * i as u32).set(*l);
            }
        }
        Ok::<_, EmitError>(ls)
    };
    let states = load(&mut c, &mut locals, Y, 1, dim)?;
    let live = load(&mut c, &mut locals, LIVE, 1 + dim, n_live)?;
    let frame = Frame { t: T, states: &states, live: &live };
    let out = body(&mut c, p, needed, imports, &frame, &mut locals)?;
    for (k, v) in out.iter().enumerate() {
        c.get(OUT);
        v.push(&mut c);
        c.f64_store(8 * k as u32);
    }
    c.end();
    Ok(c)
}
