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
}

/// The bytes of one module that exports each `(name, program)` of `kernels`
/// as a kernel (see the [module docs](self)). It imports `env.memory` and only
/// the maths functions the programs use.
pub fn module(kernels: &[(&str, &Program)]) -> Result<Vec<u8>, EmitError> {
    let mut m = Module::new();
    m.import_memory(IMPORT_MODULE, "memory");
    let needed: Vec<Vec<bool>> = kernels.iter().map(|(_, p)| needed(p)).collect();
    let mut used = vec![false; MATHS.len()];
    for ((_, p), needed) in kernels.iter().zip(&needed) {
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
    let ty = kernel_type();
    for ((name, p), needed) in kernels.iter().zip(&needed) {
        let f = m.define(&ty, kernel(p, needed, &funcs)?);
        m.export(name, f);
    }
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

/// The body of one kernel for program `p`, whose slots that matter are
/// `needed`; `funcs[k]` is the function index of `MATHS[k]` where imported.
fn kernel(p: &Program, needed: &[bool], funcs: &[u32]) -> Result<Code, EmitError> {
    let dim = p.dim();
    let n_live = p.n_live();
    let first_const = 1 + dim + n_live;
    let first_inst = p.first_inst_slot();
    let insts = p.insts();
    let outputs = p.outputs();
    let total = first_inst + insts.len();
    if (dim.max(n_live).max(outputs.len()) as u64) * 8 > u32::MAX as u64 {
        return Err(EmitError::TooLarge);
    }

    // The last instruction that reads each slot; outputs are read at the end.
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

    let mut c = Code::new(4);
    let mut loc = vec![u32::MAX; total];
    let mut free: Vec<u32> = Vec::new();
    let mut n_locals = 0usize;
    let mut alloc = |c: &mut Code, free: &mut Vec<u32>| -> Result<u32, EmitError> {
        if let Some(l) = free.pop() {
            return Ok(l);
        }
        n_locals += 1;
        if n_locals > MAX_LOCALS {
            return Err(EmitError::TooLarge);
        }
        Ok(c.local(ValType::F64))
    };
    loc[0] = T;
    // States and live parameters are loaded once, up front.
    for (base, first, n) in [(Y, 1, dim), (LIVE, 1 + dim, n_live)] {
        for i in 0..n {
            if needed[first + i] {
                let l = alloc(&mut c, &mut free)?;
                c.get(base).f64_load(8 * i as u32).set(l);
                loc[first + i] = l;
            }
        }
    }
    let consts = p.consts();
    let push = |c: &mut Code, loc: &[u32], s: u32| {
        let s = s as usize;
        if (first_const..first_inst).contains(&s) {
            c.f64_const(consts[s - first_const]);
        } else {
            c.get(loc[s]);
        }
    };
    for (k, i) in insts.iter().enumerate() {
        if !needed[first_inst + k] {
            continue;
        }
        let (a, b, imm) = (i.a, i.b, i.c);
        let x = |c: &mut Code| push(c, &loc, a);
        use Op::*;
        match i.op {
            Add | Sub | Mul | Div => {
                x(&mut c);
                push(&mut c, &loc, b);
                c.op(match i.op {
                    Add => Simple::F64Add,
                    Sub => Simple::F64Sub,
                    Mul => Simple::F64Mul,
                    _ => Simple::F64Div,
                });
            }
            AddC | MulC | DivC => {
                x(&mut c);
                c.f64_const(imm).op(match i.op {
                    AddC => Simple::F64Add,
                    MulC => Simple::F64Mul,
                    _ => Simple::F64Div,
                });
            }
            CSub | CDiv => {
                c.f64_const(imm);
                x(&mut c);
                c.op(if i.op == CSub { Simple::F64Sub } else { Simple::F64Div });
            }
            Sq => {
                x(&mut c);
                x(&mut c);
                c.op(Simple::F64Mul);
            }
            Neg | Sqrt | Abs | Floor | Ceil | Trunc => {
                x(&mut c);
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
                x(&mut c);
                for cmp in [Simple::F64Eq, Simple::F64Lt, Simple::F64Gt] {
                    x(&mut c);
                    c.f64_const(0.0).op(cmp).op(Simple::Select);
                }
            }
            Step => {
                // x >= 0 ? 1 : (x < 0 ? 0 : x)
                c.f64_const(1.0).f64_const(0.0);
                x(&mut c);
                for cmp in [Simple::F64Lt, Simple::F64Ge] {
                    x(&mut c);
                    c.f64_const(0.0).op(cmp).op(Simple::Select);
                }
            }
            PowC => {
                x(&mut c);
                c.f64_const(imm);
            }
            CPow => {
                c.f64_const(imm);
                x(&mut c);
            }
            op if op.is_binary() => {
                x(&mut c);
                push(&mut c, &loc, b);
            }
            _ => x(&mut c),
        }
        if let Some(m) = maths_index(i.op) {
            c.call(funcs[m]);
        }
        // Operands read for the last time give their locals back (inputs
        // and constants included; `t` is a parameter and never freed).
        for s in [a, b] {
            let s = s as usize;
            if s != 0 && last_use[s] == k && loc[s] != u32::MAX && !(first_const..first_inst).contains(&s) {
                free.push(loc[s]);
                loc[s] = u32::MAX;
            }
        }
        let l = alloc(&mut c, &mut free)?;
        c.set(l);
        loc[first_inst + k] = l;
    }
    for (k, &o) in outputs.iter().enumerate() {
        c.get(OUT);
        push(&mut c, &loc, o);
        c.f64_store(8 * k as u32);
    }
    c.end();
    Ok(c)
}
