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
//!   `a` and `b` (always earlier slots; `b` equals `a` for one-operand
//!   operations) and its immediate `c`, and writes [`apply`]`(op, s[a], s[b], c)`.
//! - The results are the slots listed in [`Program::outputs`], in order.
//!
//! Every slot is written once per run, so a translator may keep each slot in
//! a local variable. [`apply`] is the reference meaning of every [`Op`]; a
//! translated program that performs the same IEEE operations in the same
//! order gives bit-identical results.

/// Defines [`Op`] and [`apply`] from one list, and the interpreter's own
/// operation set (every `Op` plus fused pairs) from the same list, so the two
/// cannot drift apart.
macro_rules! operations {
    (($x:ident, $y:ident, $c:ident) $( $(#[$doc:meta])* $name:ident => $body:expr; )*) => {
        /// One operation of the tape. `x = s[a]`, `y = s[b]`, `c` is the immediate.
        #[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
        pub enum Op {
            $( $(#[$doc])* $name, )*
        }

        /// The meaning of every operation: `x = s[a]`, `y = s[b]`, `c` the immediate.
        #[inline(always)]
        pub fn apply(op: Op, $x: f64, $y: f64, $c: f64) -> f64 {
            match op {
                $( Op::$name => $body, )*
            }
        }

        /// The interpreter's operations: every [`Op`], and pairs fused into
        /// one dispatch. A fused pair rounds after each step exactly like the
        /// two instructions it replaces (none is a fused multiply-add), so
        /// results are bit-identical with the plain tape.
        #[derive(Clone, Copy, Debug, PartialEq)]
        enum XOp {
            $( $name, )*
            /// `x * y + z`
            MulAdd,
            /// `x * y - z`
            MulSub,
            /// `z - x * y`
            NegMulAdd,
            /// `x + y * c`
            AddMulC,
            /// `x - y * c`
            SubMulC,
            /// `x * c - y`
            MulCSub,
            /// `(x + y) * c`
            AddThenMulC,
            /// `(x - y) * c`
            SubThenMulC,
        }

        impl XOp {
            /// The interpreter's form of a plain operation.
            fn plain(op: Op) -> XOp {
                match op {
                    $( Op::$name => XOp::$name, )*
                }
            }
        }

        /// What the interpreter computes for `op`; `z = s[d]`.
        #[inline(always)]
        fn exec_apply(op: XOp, $x: f64, $y: f64, z: f64, $c: f64) -> f64 {
            match op {
                $( XOp::$name => $body, )*
                XOp::MulAdd => $x * $y + z,
                XOp::MulSub => $x * $y - z,
                XOp::NegMulAdd => z - $x * $y,
                XOp::AddMulC => $x + $y * $c,
                XOp::SubMulC => $x - $y * $c,
                XOp::MulCSub => $x * $c - $y,
                XOp::AddThenMulC => ($x + $y) * $c,
                XOp::SubThenMulC => ($x - $y) * $c,
            }
        }
    };
}

operations! {
    (x, y, c)
    /// `x + y`
    Add => x + y;
    /// `x - y`
    Sub => x - y;
    /// `x * y`
    Mul => x * y;
    /// `x / y`
    Div => x / y;
    /// `x % y`: the remainder with the sign of `x` (Rust's `%`, C's `fmod`).
    Rem => x % y;
    /// `x.powf(y)`
    Pow => x.powf(y);
    /// `x.atan2(y)`: the angle whose tangent is `x / y`, in the quadrant of
    /// the point with abscissa `y` and ordinate `x` (meval's `atan2(x, y)`).
    Atan2 => x.atan2(y);
    /// `x.min(y)` (a NaN operand yields the other operand).
    Min => x.min(y);
    /// `x.max(y)` (a NaN operand yields the other operand).
    Max => x.max(y);
    /// `x.hypot(y)`
    Hypot => x.hypot(y);
    /// `x + c`
    AddC => x + c;
    /// `x * c`
    MulC => x * c;
    /// `c - x`
    CSub => c - x;
    /// `x / c`
    DivC => x / c;
    /// `c / x`
    CDiv => c / x;
    /// `x.powf(c)`
    PowC => x.powf(c);
    /// `c.powf(x)`
    CPow => c.powf(x);
    /// `-x`
    Neg => -x;
    /// `x * x`
    Sq => x * x;
    /// `x.sqrt()`
    Sqrt => x.sqrt();
    /// `x.exp()`
    Exp => x.exp();
    /// `x.ln()`
    Ln => x.ln();
    /// `x.log10()`
    Log10 => x.log10();
    /// `x.abs()`
    Abs => x.abs();
    /// `x.sin()`
    Sin => x.sin();
    /// `x.cos()`
    Cos => x.cos();
    /// `x.tan()`
    Tan => x.tan();
    /// `x.asin()`
    Asin => x.asin();
    /// `x.acos()`
    Acos => x.acos();
    /// `x.atan()`
    Atan => x.atan();
    /// `x.sinh()`
    Sinh => x.sinh();
    /// `x.cosh()`
    Cosh => x.cosh();
    /// `x.tanh()`
    Tanh => x.tanh();
    /// `x.asinh()`
    Asinh => x.asinh();
    /// `x.acosh()`
    Acosh => x.acosh();
    /// `x.atanh()`
    Atanh => x.atanh();
    /// `x.floor()`
    Floor => x.floor();
    /// `x.ceil()`
    Ceil => x.ceil();
    /// `x.round()` (halves away from zero)
    Round => x.round();
    /// `x.trunc()`
    Trunc => x.trunc();
    /// `x.signum()`: `1` for `+0` and positive, `-1` for `-0` and negative.
    Signum => x.signum();
    /// `sign(x)`: `1` above zero, `-1` below, `0` at zero, NaN for NaN.
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
        };
    /// `step(x)`: `1` at or above zero, `0` below, NaN for NaN.
    Step => {
            if x >= 0.0 {
                1.0
            } else if x < 0.0 {
                0.0
            } else {
                x
            }
        };
}

impl Op {
    /// Whether the operation reads its second operand `b`.
    pub fn is_binary(self) -> bool {
        use Op::*;
        matches!(self, Add | Sub | Mul | Div | Rem | Pow | Atan2 | Min | Max | Hypot)
    }

    /// Whether the operation reads its immediate `c`.
    pub fn uses_immediate(self) -> bool {
        use Op::*;
        matches!(self, AddC | MulC | CSub | DivC | CDiv | PowC | CPow)
    }
}


/// One instruction: `s[first_inst_slot + k] = apply(op, s[a], s[b], c)`.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Inst {
    /// The operation.
    pub op: Op,
    /// First operand slot.
    pub a: u32,
    /// Second operand slot; equal to `a` when the operation has one operand.
    pub b: u32,
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
    /// What the interpreter runs: the same tape with fused pairs, over its
    /// own slot array `xslots` (inputs and constants as in `slots`, then one
    /// slot per step), leaving the results at `xoutputs`.
    exec: Vec<Exec>,
    xslots: Vec<f64>,
    xoutputs: Vec<u32>,
}

/// Step `k` of the interpreter: `x[first + k] = op(x[a], x[b], x[d], c)`
/// over the interpreter's slot array `x` (see [`Program`]'s fields).
#[derive(Clone, Copy, Debug)]
struct Exec {
    op: XOp,
    a: u32,
    b: u32,
    d: u32,
    c: f64,
}

/// The interpreter's tape for a checked plain tape, and where it leaves the
/// outputs. An instruction whose result is used exactly once, by one
/// instruction, and is not an output, may be fused into that user and then
/// has no slot of its own; the others keep their order, each writing the
/// next slot after the inputs and constants.
fn fuse_tape(first: usize, insts: &[Inst], outputs: &[u32]) -> (Vec<Exec>, Vec<u32>) {
    use Op::*;
    let total = first + insts.len();
    let mut uses = vec![0u32; total];
    for &o in outputs {
        uses[o as usize] += 2;
    }
    for i in insts {
        uses[i.a as usize] += 1;
        if i.op.is_binary() {
            uses[i.b as usize] += 1;
        }
    }
    let mut absorbed = vec![false; insts.len()];
    let mut fused: Vec<Option<Exec>> = vec![None; insts.len()];
    for (k, i) in insts.iter().enumerate() {
        // The operand at slot `s`, when it is a plain instruction used only here.
        let single = |s: u32, fused: &[Option<Exec>], absorbed: &[bool]| -> Option<(usize, Inst)> {
            let j = (s as usize).checked_sub(first)?;
            (uses[s as usize] == 1 && fused[j].is_none() && !absorbed[j]).then_some((j, insts[j]))
        };
        let mk = |op, a, b, d, c| Exec { op, a, b, d, c };
        let pick = match i.op {
            Add | Sub => {
                let add = i.op == Add;
                match (single(i.a, &fused, &absorbed), single(i.b, &fused, &absorbed)) {
                    (_, Some((j, m))) if m.op == MulC => {
                        Some((j, mk(if add { XOp::AddMulC } else { XOp::SubMulC }, i.a, m.a, i.a, m.c)))
                    }
                    (Some((j, m)), _) if m.op == MulC => Some((
                        j,
                        if add { mk(XOp::AddMulC, i.b, m.a, i.b, m.c) } else { mk(XOp::MulCSub, m.a, i.b, m.a, m.c) },
                    )),
                    (_, Some((j, m))) if m.op == Mul => {
                        Some((j, mk(if add { XOp::MulAdd } else { XOp::NegMulAdd }, m.a, m.b, i.a, 0.0)))
                    }
                    (Some((j, m)), _) if m.op == Mul => {
                        Some((j, mk(if add { XOp::MulAdd } else { XOp::MulSub }, m.a, m.b, i.b, 0.0)))
                    }
                    _ => None,
                }
            }
            MulC => match single(i.a, &fused, &absorbed) {
                Some((j, m)) if m.op == Add => Some((j, mk(XOp::AddThenMulC, m.a, m.b, m.a, i.c))),
                Some((j, m)) if m.op == Sub => Some((j, mk(XOp::SubThenMulC, m.a, m.b, m.a, i.c))),
                _ => None,
            },
            _ => None,
        };
        if let Some((j, e)) = pick {
            absorbed[j] = true;
            fused[k] = Some(e);
        }
    }
    // Renumber: inputs and constants stay; kept instructions close up.
    let mut at: Vec<u32> = (0..first as u32).collect();
    at.resize(total, u32::MAX);
    let mut exec = Vec::with_capacity(insts.len());
    for (k, i) in insts.iter().enumerate() {
        if absorbed[k] {
            continue;
        }
        let e = fused[k].unwrap_or(Exec { op: XOp::plain(i.op), a: i.a, b: i.b, d: i.a, c: i.c });
        exec.push(Exec { a: at[e.a as usize], b: at[e.b as usize], d: at[e.d as usize], ..e });
        at[first + k] = (first + exec.len() - 1) as u32;
    }
    let outs = outputs.iter().map(|&o| at[o as usize]).collect();
    (exec, outs)
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
            if i.a as usize >= me || i.b as usize >= me {
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
        let (exec, xoutputs) = fuse_tape(first, &insts, &outputs);
        let mut xslots = slots[..first].to_vec();
        xslots.resize(first + exec.len(), 0.0);
        Some(Program { dim, live_names, consts, insts, outputs, slots, exec, xslots, xoutputs })
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

    /// How many steps the interpreter runs: the instructions, less those
    /// fused into their only user.
    pub fn steps(&self) -> usize {
        self.exec.len()
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
            self.xslots[1 + self.dim + index] = value;
        }
    }

    /// Run the program at `(t, y)`. Missing states read as their last value;
    /// extra ones are ignored. The results are then read by
    /// [`eval`](Self::eval); [`slots`](Self::slots) is not updated (see
    /// [`run_plain`](Self::run_plain)).
    #[inline]
    pub fn run(&mut self, t: f64, y: &[f64]) {
        let first = self.first_inst_slot();
        let Some(x) = load(&mut self.xslots, first + self.exec.len(), self.dim, t, y) else { return };
        for (k, e) in self.exec.iter().enumerate() {
            // SAFETY: `exec` comes from `fuse_tape` over instructions that
            // `Program::new`, the only constructor, checked to read earlier
            // slots only; the renumbering keeps every operand of step `k`
            // below `first + k`, and `load` confirmed that `x` has
            // `first + exec.len()` slots (nothing resizes it).
            unsafe {
                let a = *x.get_unchecked(e.a as usize);
                let b = *x.get_unchecked(e.b as usize);
                let d = *x.get_unchecked(e.d as usize);
                *x.get_unchecked_mut(first + k) = exec_apply(e.op, a, b, d, e.c);
            }
        }
    }

    /// Run the program and copy its results into `out` (as many as fit).
    #[inline]
    pub fn eval(&mut self, t: f64, y: &[f64], out: &mut [f64]) {
        self.eval_from(t, y, 0, out);
    }

    /// Run the program and copy its results from number `skip` on into `out`
    /// (as many as fit).
    #[inline]
    pub fn eval_from(&mut self, t: f64, y: &[f64], skip: usize, out: &mut [f64]) {
        self.run(t, y);
        for (o, &s) in out.iter_mut().zip(self.xoutputs.iter().skip(skip)) {
            *o = self.xslots[s as usize];
        }
    }

    /// Run the plain tape at `(t, y)`, one instruction at a time, writing
    /// every slot of [`slots`](Self::slots). Slower than [`run`](Self::run);
    /// for diagnosis.
    pub fn run_plain(&mut self, t: f64, y: &[f64]) {
        let first = self.first_inst_slot();
        let Some(s) = load(&mut self.slots, first + self.insts.len(), self.dim, t, y) else { return };
        for (k, i) in self.insts.iter().enumerate() {
            let (x, y) = (s[i.a as usize], s[i.b as usize]);
            s[first + k] = apply(i.op, x, y, i.c);
        }
    }

    /// The slot array in the layout of the [module docs](self), as left by
    /// the last [`run_plain`](Self::run_plain).
    pub fn slots(&self) -> &[f64] {
        &self.slots
    }
}

/// Write `t` and `y` into a slot array that must have `n` slots; `None` if it
/// has not (which cannot happen: slot arrays are sized once, in
/// [`Program::new`]).
#[inline(always)]
fn load<'s>(slots: &'s mut [f64], n: usize, dim: usize, t: f64, y: &[f64]) -> Option<&'s mut [f64]> {
    if slots.len() != n || n <= dim {
        return None;
    }
    slots[0] = t;
    for (s, &v) in slots[1..=dim].iter_mut().zip(y) {
        *s = v;
    }
    Some(slots)
}
