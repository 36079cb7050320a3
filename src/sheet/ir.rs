//! The lowered form of a sheet: flat instruction tapes over a slot array.
//!
//! A [`Program`] is what the evaluator runs and what a code generator
//! translates. Its semantics, stated once:
//!
//! - It works on an array of `f64` **slots**, laid out as
//!   1. slot `0`: the independent variable `t`;
//!   2. slots `1 ..= dim`: the states `y[0..dim]`;
//!   3. the next [`Program::n_live`] slots: the live parameters, in the order of
//!      [`Program::live_names`];
//!   4. the next `consts.len()` slots: the constants of [`Program::consts`];
//!   5. one slot per instruction: instruction `k` writes slot
//!      [`Program::first_inst_slot`]` + k`.
//! - Instructions run in order. Each reads its operand slots `a` and `b`
//!   `a`, `b` and `d` (always earlier slots; an operand the operation does
//!   not use repeats `a`) and its immediate `c`, and writes
//!   [`apply`]`(op, s[a], s[b], s[d], c)`.
//! - Fused operations (`MulAdd`, `AddMulC`, …) round after each step, exactly
//!   like the pair they replace; none is a fused multiply-add.
//! - The results are the slots listed in [`Program::outputs`], in order.
//!
//! Every slot is written once per run, so a translator may keep each slot in
//! a local variable. [`apply`] is the reference meaning of every [`Op`]; a
//! translated program that performs the same IEEE operations in the same
//! order gives bit-identical results.

/// One operation of the tape. `x = s[a]`, `y = s[b]`, `c` is the immediate.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum Op {
    /// `x + y`
    Add,
    /// `x - y`
    Sub,
    /// `x * y`
    Mul,
    /// `x / y`
    Div,
    /// `x % y`: the remainder with the sign of `x` (Rust's `%`, C's `fmod`).
    Rem,
    /// `x.powf(y)`
    Pow,
    /// `x.atan2(y)`: the angle whose tangent is `x / y`, in the quadrant of
    /// the point with abscissa `y` and ordinate `x` (meval's `atan2(x, y)`).
    Atan2,
    /// `x.min(y)` (a NaN operand yields the other operand).
    Min,
    /// `x.max(y)` (a NaN operand yields the other operand).
    Max,
    /// `x.hypot(y)`
    Hypot,
    /// `x + c`
    AddC,
    /// `x * c`
    MulC,
    /// `c - x`
    CSub,
    /// `x / c`
    DivC,
    /// `c / x`
    CDiv,
    /// `x.powf(c)`
    PowC,
    /// `c.powf(x)`
    CPow,
    /// `-x`
    Neg,
    /// `x * x`
    Sq,
    /// `x.sqrt()`
    Sqrt,
    /// `x.exp()`
    Exp,
    /// `x.ln()`
    Ln,
    /// `x.log10()`
    Log10,
    /// `x.abs()`
    Abs,
    /// `x.sin()`
    Sin,
    /// `x.cos()`
    Cos,
    /// `x.tan()`
    Tan,
    /// `x.asin()`
    Asin,
    /// `x.acos()`
    Acos,
    /// `x.atan()`
    Atan,
    /// `x.sinh()`
    Sinh,
    /// `x.cosh()`
    Cosh,
    /// `x.tanh()`
    Tanh,
    /// `x.asinh()`
    Asinh,
    /// `x.acosh()`
    Acosh,
    /// `x.atanh()`
    Atanh,
    /// `x.floor()`
    Floor,
    /// `x.ceil()`
    Ceil,
    /// `x.round()` (halves away from zero)
    Round,
    /// `x.trunc()`
    Trunc,
    /// `x.signum()`: `1` for `+0` and positive, `-1` for `-0` and negative.
    Signum,
    /// `sign(x)`: `1` above zero, `-1` below, `0` at zero, NaN for NaN.
    Sign,
    /// `step(x)`: `1` at or above zero, `0` below, NaN for NaN.
    Step,
    /// Fused `x * y + z` (two roundings, like the unfused pair).
    MulAdd,
    /// Fused `x * y - z`.
    MulSub,
    /// Fused `z - x * y`.
    NegMulAdd,
    /// Fused `x + y * c`.
    AddMulC,
    /// Fused `x - y * c`.
    SubMulC,
    /// Fused `x * c - y`.
    MulCSub,
    /// Fused `(x + y) * c`.
    AddThenMulC,
    /// Fused `(x - y) * c`.
    SubThenMulC,
}

impl Op {
    /// Whether the operation reads its second operand `b`.
    pub fn is_binary(self) -> bool {
        use Op::*;
        matches!(
            self,
            Add | Sub | Mul | Div | Rem | Pow | Atan2 | Min | Max | Hypot | MulAdd | MulSub | NegMulAdd | AddMulC
                | SubMulC | MulCSub | AddThenMulC | SubThenMulC
        )
    }

    /// Whether the operation reads its third operand `d`.
    pub fn is_ternary(self) -> bool {
        use Op::*;
        matches!(self, MulAdd | MulSub | NegMulAdd)
    }

    /// Whether the operation reads its immediate `c`.
    pub fn uses_immediate(self) -> bool {
        use Op::*;
        matches!(self, AddC | MulC | CSub | DivC | CDiv | PowC | CPow | AddMulC | SubMulC | MulCSub | AddThenMulC | SubThenMulC)
    }
}

/// The meaning of every operation: `x = s[a]`, `y = s[b]`, `z = s[d]`, `c`
/// the immediate.
#[inline(always)]
pub fn apply(op: Op, x: f64, y: f64, z: f64, c: f64) -> f64 {
    use Op::*;
    match op {
        Add => x + y,
        Sub => x - y,
        Mul => x * y,
        Div => x / y,
        Rem => x % y,
        Pow => x.powf(y),
        Atan2 => x.atan2(y),
        Min => x.min(y),
        Max => x.max(y),
        Hypot => x.hypot(y),
        AddC => x + c,
        MulC => x * c,
        CSub => c - x,
        DivC => x / c,
        CDiv => c / x,
        PowC => x.powf(c),
        CPow => c.powf(x),
        Neg => -x,
        Sq => x * x,
        Sqrt => x.sqrt(),
        Exp => x.exp(),
        Ln => x.ln(),
        Log10 => x.log10(),
        Abs => x.abs(),
        Sin => x.sin(),
        Cos => x.cos(),
        Tan => x.tan(),
        Asin => x.asin(),
        Acos => x.acos(),
        Atan => x.atan(),
        Sinh => x.sinh(),
        Cosh => x.cosh(),
        Tanh => x.tanh(),
        Asinh => x.asinh(),
        Acosh => x.acosh(),
        Atanh => x.atanh(),
        Floor => x.floor(),
        Ceil => x.ceil(),
        Round => x.round(),
        Trunc => x.trunc(),
        Signum => x.signum(),
        Sign => {
            if x > 0.0 {
                1.0
            } else if x < 0.0 {
                -1.0
            } else if x == 0.0 {
                0.0
            } else {
                x
            }
        }
        Step => {
            if x >= 0.0 {
                1.0
            } else if x < 0.0 {
                0.0
            } else {
                x
            }
        }
        MulAdd => x * y + z,
        MulSub => x * y - z,
        NegMulAdd => z - x * y,
        AddMulC => x + y * c,
        SubMulC => x - y * c,
        MulCSub => x * c - y,
        AddThenMulC => (x + y) * c,
        SubThenMulC => (x - y) * c,
    }
}

/// One instruction: `s[first_inst_slot + k] = apply(op, s[a], s[b], s[d], c)`.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Inst {
    /// The operation.
    pub op: Op,
    /// First operand slot.
    pub a: u32,
    /// Second operand slot; equal to `a` when the operation has one operand.
    pub b: u32,
    /// Third operand slot; equal to `a` unless the operation has three operands.
    pub d: u32,
    /// Immediate constant; `0.0` when the operation has none.
    pub c: f64,
}

/// A flat instruction tape with its slot array. See the [module docs](self)
/// for the slot layout and semantics.
#[derive(Clone, Debug)]
pub struct Program {
    dim: usize,
    live_names: Vec<String>,
    consts: Vec<f64>,
    insts: Vec<Inst>,
    outputs: Vec<u32>,
    /// The slot array, reused across runs: inputs, constants, then results.
    slots: Vec<f64>,
}

impl Program {
    /// Assemble a program. Every operand must name an earlier slot and every
    /// output an existing one; a program that breaks this is refused
    /// (`None`), so a constructed program can never index out of range.
    pub fn new(
        dim: usize,
        live: Vec<(String, f64)>,
        consts: Vec<f64>,
        insts: Vec<Inst>,
        outputs: Vec<u32>,
    ) -> Option<Program> {
        let first = 1 + dim + live.len() + consts.len();
        let total = first + insts.len();
        if total > u32::MAX as usize {
            return None;
        }
        for (k, i) in insts.iter().enumerate() {
            let me = first + k;
            if i.a as usize >= me || i.b as usize >= me || i.d as usize >= me {
                return None;
            }
        }
        if outputs.iter().any(|&o| o as usize >= total) {
            return None;
        }
        let mut slots = vec![0.0; total];
        let (live_names, live_values): (Vec<String>, Vec<f64>) = live.into_iter().unzip();
        slots[1 + dim..1 + dim + live_values.len()].copy_from_slice(&live_values);
        slots[1 + dim + live_values.len()..first].copy_from_slice(&consts);
        Some(Program { dim, live_names, consts, insts, outputs, slots })
    }

    /// Number of states (slots `1 ..= dim`).
    pub fn dim(&self) -> usize {
        self.dim
    }

    /// Number of live-parameter slots.
    pub fn n_live(&self) -> usize {
        self.live_names.len()
    }

    /// Names of the live parameters, in slot order.
    pub fn live_names(&self) -> &[String] {
        &self.live_names
    }

    /// Current values of the live parameters, in slot order.
    pub fn live_values(&self) -> &[f64] {
        &self.slots[1 + self.dim..1 + self.dim + self.live_names.len()]
    }

    /// The constants, in slot order, starting at slot `1 + dim + n_live`.
    pub fn consts(&self) -> &[f64] {
        &self.consts
    }

    /// The first slot written by an instruction.
    pub fn first_inst_slot(&self) -> usize {
        1 + self.dim + self.live_names.len() + self.consts.len()
    }

    /// The instructions, in execution order.
    pub fn insts(&self) -> &[Inst] {
        &self.insts
    }

    /// The slots holding the results, in order.
    pub fn outputs(&self) -> &[u32] {
        &self.outputs
    }

    /// Set the live parameter at `index` (its position in
    /// [`live_names`](Self::live_names)). Out-of-range indices are ignored.
    pub fn set_live(&mut self, index: usize, value: f64) {
        if index < self.live_names.len() {
            self.slots[1 + self.dim + index] = value;
        }
    }

    /// Run the program at `(t, y)`. Missing states read as their last value;
    /// extra ones are ignored.
    #[inline]
    pub fn run(&mut self, t: f64, y: &[f64]) {
        let first = self.first_inst_slot();
        let slots = &mut self.slots[..];
        slots[0] = t;
        for (s, &v) in slots[1..=self.dim].iter_mut().zip(y) {
            *s = v;
        }
        if slots.len() != first + self.insts.len() {
            return; // cannot happen: the slot array is sized once, in `new`
        }
        for (k, i) in self.insts.iter().enumerate() {
            // SAFETY: `Program::new`, the only constructor, refuses any
            // instruction whose operands are not earlier slots, and the check
            // above confirms the slot array holds `first + insts.len()`
            // entries. So `a, b, d < first + k < slots.len()`.
            unsafe {
                let x = *slots.get_unchecked(i.a as usize);
                let y = *slots.get_unchecked(i.b as usize);
                let z = *slots.get_unchecked(i.d as usize);
                *slots.get_unchecked_mut(first + k) = apply(i.op, x, y, z, i.c);
            }
        }
    }

    /// Run the program and copy its results into `out` (as many as fit).
    #[inline]
    pub fn eval(&mut self, t: f64, y: &[f64], out: &mut [f64]) {
        self.run(t, y);
        for (o, &s) in out.iter_mut().zip(&self.outputs) {
            *o = self.slots[s as usize];
        }
    }

    /// The slot array as left by the last run.
    pub fn slots(&self) -> &[f64] {
        &self.slots
    }
}
