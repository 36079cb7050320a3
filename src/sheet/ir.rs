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
/// operation set (every `Op` and every chain of [`CHAINS`]) from the same
/// lists, so the two cannot drift apart.
macro_rules! operations {
    (($x:ident, $y:ident, $c:ident) $( $(#[$doc:meta])* $name:ident => $body:expr; )*
     @chains { $( $(#[$cdoc:meta])* $cname:ident = [ $( $cop:ident $cside:ident ),+ ]; )* }) => {
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

        /// What one step of the interpreter runs: a plain operation, or a
        /// chain of them (see [`CHAINS`]).
        #[derive(Clone, Copy, Debug, PartialEq)]
        enum XOp {
            $( $name, )*
            $( $(#[$cdoc])* $cname, )*
        }

        impl XOp {
            /// The interpreter's form of a plain operation.
            fn plain(op: Op) -> XOp {
                match op {
                    $( Op::$name => XOp::$name, )*
                }
            }
        }

        /// The chains the interpreter runs as one step, longest first, each
        /// with its step operation.
        const CHAINS: &[(XOp, Chain)] = &[
            $( (XOp::$cname, &[ $( (Op::$cop, Side::$cside) ),+ ]), )*
        ];

        /// Run step `e` over the slot array `x`.
        ///
        /// # Safety
        /// Every slot `e` reads is inside `x` (see [`Program::run`]).
        #[inline(always)]
        unsafe fn exec(e: &Exec, x: &[f64]) -> f64 {
            let at = |k: usize| unsafe { *x.get_unchecked(e.s[k] as usize) };
            match e.op {
                $( XOp::$name => apply(Op::$name, at(0), at(1), e.c[0]), )*
                $( XOp::$cname => unsafe { run_chain(&[ $( (Op::$cop, Side::$cside) ),+ ], e, x) }, )*
            }
        }
    };
}

/// Which operand of a chain's operation is the previous operation's result.
#[derive(Clone, Copy, Debug, PartialEq)]
enum Side {
    /// The first (`x`); also used for one-operand operations.
    L,
    /// The second (`y`).
    R,
}

/// A chain: plain operations, each after the first taking the previous
/// result as its operand on the given side. The first reads slots `s[0]` (and
/// `s[1]` when binary); every later two-operand operation reads the next slot
/// of [`Exec::s`] as its other operand; every operation with an immediate
/// takes the next of [`Exec::c`].
type Chain = &'static [(Op, Side)];

/// The slots and immediates a chain reads.
fn chain_needs(chain: Chain) -> (usize, usize) {
    let mut slots = 0;
    let mut imms = 0;
    for (k, &(op, _)) in chain.iter().enumerate() {
        slots += match (k, op.is_binary()) {
            (0, true) => 2,
            (0, false) => 1,
            (_, true) => 1,
            (_, false) => 0,
        };
        imms += usize::from(op.uses_immediate());
    }
    (slots, imms)
}

/// Run a chain, rounding after each operation exactly like the plain tape
/// (each operation is [`apply`]). Called with a constant `chain`, so that
/// it compiles to straight-line code.
///
/// # Safety
/// Every slot of `e.s` that the chain reads is inside `x`.
#[inline(always)]
unsafe fn run_chain(chain: Chain, e: &Exec, x: &[f64]) -> f64 {
    let at = |k: usize| unsafe { *x.get_unchecked(e.s[k] as usize) };
    let (op0, _) = chain[0];
    let mut si = if op0.is_binary() { 2 } else { 1 };
    let mut ci = usize::from(op0.uses_immediate());
    let mut v = apply(op0, at(0), at(si - 1), e.c[0]);
    let mut k = 1;
    while k < chain.len() {
        let (op, side) = chain[k];
        let c = if op.uses_immediate() { e.c[ci] } else { 0.0 };
        ci += usize::from(op.uses_immediate());
        v = if op.is_binary() {
            let z = at(si);
            si += 1;
            if side == Side::R { apply(op, z, v, c) } else { apply(op, v, z, c) }
        } else {
            apply(op, v, v, c)
        };
        k += 1;
    }
    v
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
    /// `heaviside(x)`: `1` at or above zero, `0` below, NaN for NaN.
    Heaviside => {
            if x >= 0.0 {
                1.0
            } else if x < 0.0 {
                0.0
            } else {
                x
            }
        };

    @chains {
        /// `((z - x·c) + w)·c2`, a difference stencil such as `k*(l - 2*T + r)`
        StencilMulC = [MulC L, Sub R, Add L, MulC L];
        /// `z - (x + c)·c2`, as in `… - h*(T - Ta)`
        AddCMulCSubR = [AddC L, MulC L, Sub R];
        /// `z + (x + c)·c2`
        AddCMulCAddR = [AddC L, MulC L, Add R];
        /// `((x + c)·c2) / z`
        AddCMulCDiv = [AddC L, MulC L, Div L];
        /// `sqrt(x·c)·c2`, an orifice law such as `-a/A*sqrt(2*g*h)`
        MulCSqrtMulC = [MulC L, Sqrt L, MulC L];
        /// `sin(x·c)·c2`
        MulCSinMulC = [MulC L, Sin L, MulC L];
        /// `cos(x·c)·c2`
        MulCCosMulC = [MulC L, Cos L, MulC L];
        /// `(z - x·c) + w`
        MulCSubAdd = [MulC L, Sub R, Add L];
        /// `sin(x)·c - z`
        SinMulCSub = [Sin L, MulC L, Sub L];
        /// `z + sin(x)·c`
        SinMulCAddR = [Sin L, MulC L, Add R];
        /// `z + cos(x)·c`
        CosMulCAddR = [Cos L, MulC L, Add R];
        /// `z - (x·c)·w`
        MulCMulSubR = [MulC L, Mul L, Sub R];
        /// `(x + c)² + z`
        AddCSqAdd = [AddC L, Sq L, Add L];
        /// `x·y + z`
        MulAdd = [Mul L, Add L];
        /// `z + x·y`
        MulAddR = [Mul L, Add R];
        /// `x·y - z`
        MulSub = [Mul L, Sub L];
        /// `z - x·y`
        MulSubR = [Mul L, Sub R];
        /// `x·c + z`
        MulCAdd = [MulC L, Add L];
        /// `z + x·c`
        MulCAddR = [MulC L, Add R];
        /// `x·c - z`
        MulCSub = [MulC L, Sub L];
        /// `z - x·c`
        MulCSubR = [MulC L, Sub R];
        /// `(x + y)·c`
        AddMulC = [Add L, MulC L];
        /// `(x - y)·c`
        SubMulC = [Sub L, MulC L];
        /// `(x + c)·c2`
        AddCMulC = [AddC L, MulC L];
        /// `x·c + c2`
        MulCAddC = [MulC L, AddC L];
        /// `(x·c)·z`
        MulCMul = [MulC L, Mul L];
        /// `z·(x·c)`
        MulCMulR = [MulC L, Mul R];
        /// `(x·c) / z`
        MulCDiv = [MulC L, Div L];
        /// `(x·y) / z`
        MulDiv = [Mul L, Div L];
        /// `(x·y)·z`
        MulMul = [Mul L, Mul L];
        /// `(x·y)·c`
        MulMulC = [Mul L, MulC L];
        /// `sqrt(x)·c`
        SqrtMulC = [Sqrt L, MulC L];
        /// `sqrt(x·c)`
        MulCSqrt = [MulC L, Sqrt L];
        /// `sin(x·c)`
        MulCSin = [MulC L, Sin L];
        /// `cos(x·c)`
        MulCCos = [MulC L, Cos L];
        /// `sin(x)·c`
        SinMulC = [Sin L, MulC L];
        /// `cos(x)·c`
        CosMulC = [Cos L, MulC L];
        /// `exp(x·c)`
        MulCExp = [MulC L, Exp L];
        /// `(x + y) + z`
        AddAdd = [Add L, Add L];
        /// `(x - y) + z`
        SubAdd = [Sub L, Add L];
        /// `(x + y) - z`
        AddSub = [Add L, Sub L];
        /// `(x - y) - z`
        SubSub = [Sub L, Sub L];
        /// `z + (x + y)`
        AddAddR = [Add L, Add R];
        /// `z - (x + y)`
        AddSubR = [Add L, Sub R];
        /// `z + (x - y)`
        SubAddR = [Sub L, Add R];
        /// `z - (x - y)`
        SubSubR = [Sub L, Sub R];
        /// `z + x / y`
        DivAddR = [Div L, Add R];
        /// `z - x / y`
        DivSubR = [Div L, Sub R];
        /// `x / y + z`
        DivAdd = [Div L, Add L];
        /// `x / y - z`
        DivSub = [Div L, Sub L];
        /// `x² + z`
        SqAdd = [Sq L, Add L];
        /// `z + x²`
        SqAddR = [Sq L, Add R];
        /// `z·|x|`
        AbsMulR = [Abs L, Mul R];
        /// `|x|·z`
        AbsMul = [Abs L, Mul L];
        /// `-(x·y)`
        MulNeg = [Mul L, Neg L];
    }
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

/// Most slots and immediates one step reads.
const STEP_SLOTS: usize = 4;
const STEP_IMMS: usize = 3;

/// Step `k` of the interpreter: `x[first + k] = op(…)` over the
/// interpreter's slot array `x` (see [`Program`]'s fields), reading the
/// slots `s` and the immediates `c` (unused entries are slot 0 and 0.0).
#[derive(Clone, Copy, Debug)]
struct Exec {
    op: XOp,
    s: [u32; STEP_SLOTS],
    c: [f64; STEP_IMMS],
}

/// The interpreter's tape for a checked plain tape, and where it leaves the
/// outputs.
///
/// Runs of instructions where each result is used exactly once, by the next
/// one, and is not an output, become one step when they form one of the
/// [`CHAINS`]; the step keeps the intermediate results in registers and
/// rounds after each operation exactly like the plain instructions (none is
/// a fused multiply-add), so results are bit-identical with the plain tape.
/// Chains are chosen from the last instruction back, longest first, so a
/// long chain is not cut short by a shorter one below it. The steps keep the
/// tape's order, each writing the next slot after the inputs and constants.
fn fuse_tape(first: usize, insts: &[Inst], outputs: &[u32]) -> (Vec<Exec>, Vec<u32>) {
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
    let mut steps: Vec<Option<Exec>> = vec![None; insts.len()];
    for k in (0..insts.len()).rev() {
        if absorbed[k] {
            continue;
        }
        for &(op, chain) in CHAINS {
            if let Some((e, members)) = match_chain(chain, k, first, insts, &uses, &absorbed) {
                for m in members {
                    absorbed[m] = true;
                }
                steps[k] = Some(Exec { op, ..e });
                break;
            }
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
        let e = steps[k].unwrap_or(Exec { op: XOp::plain(i.op), s: [i.a, i.b, 0, 0], c: [i.c, 0.0, 0.0] });
        exec.push(Exec { s: e.s.map(|s| at[s as usize]), ..e });
        at[first + k] = (first + exec.len() - 1) as u32;
    }
    let outs = outputs.iter().map(|&o| at[o as usize]).collect();
    (exec, outs)
}

/// Whether `chain` ends at instruction `k`, reaching back through results
/// used only by the next member: the step (its operation still unset) and
/// the members it absorbs.
fn match_chain(
    chain: Chain,
    k: usize,
    first: usize,
    insts: &[Inst],
    uses: &[u32],
    absorbed: &[bool],
) -> Option<(Exec, Vec<usize>)> {
    let (n_slots, n_imms) = chain_needs(chain);
    if n_slots > STEP_SLOTS || n_imms > STEP_IMMS {
        return None;
    }
    let mut cur = k;
    let mut members = Vec::new();
    // The other operands and immediates of the later members, last first.
    let mut slots_rev = Vec::new();
    let mut imms_rev = Vec::new();
    for &(op, side) in chain[1..].iter().rev() {
        let i = insts[cur];
        if i.op != op {
            return None;
        }
        let (prev, other) = if op.is_binary() && side == Side::R { (i.b, i.a) } else { (i.a, i.b) };
        if op.is_binary() {
            slots_rev.push(other);
        }
        if op.uses_immediate() {
            imms_rev.push(i.c);
        }
        let j = (prev as usize).checked_sub(first)?;
        if uses[prev as usize] != 1 || absorbed[j] {
            return None;
        }
        members.push(j);
        cur = j;
    }
    let i = insts[cur];
    if i.op != chain[0].0 {
        return None;
    }
    let mut s = [0u32; STEP_SLOTS];
    let mut c = [0.0; STEP_IMMS];
    let head_slots: &[u32] = if i.op.is_binary() { &[i.a, i.b] } else { &[i.a] };
    for (d, v) in s.iter_mut().zip(head_slots.iter().chain(slots_rev.iter().rev())) {
        *d = *v;
    }
    let head_imm = i.op.uses_immediate().then_some(i.c);
    for (d, v) in c.iter_mut().zip(head_imm.iter().chain(imms_rev.iter().rev())) {
        *d = *v;
    }
    Some((Exec { op: XOp::plain(i.op), s, c }, members))
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
            // slots only; the renumbering keeps every slot that step `k`
            // reads (its unused ones are slot 0) below `first + k`, and
            // `load` confirmed that `x` has `first + exec.len()` slots
            // (nothing resizes it).
            unsafe {
                let v = exec(e, x);
                *x.get_unchecked_mut(first + k) = v;
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

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn every_chain_fits_a_step_and_reads_its_previous_result() {
        for &(op, chain) in CHAINS {
            let (slots, imms) = chain_needs(chain);
            assert!(chain.len() >= 2 && slots <= STEP_SLOTS && imms <= STEP_IMMS, "{op:?}");
            for &(o, side) in &chain[1..] {
                assert!(side == Side::L || o.is_binary(), "{op:?}: {o:?} has no second operand");
            }
        }
        // Longest first, so that a long chain is tried before its tail.
        assert!(CHAINS.windows(2).all(|w| w[0].1.len() >= w[1].1.len()));
    }
}
