//! The expression graph: hash-consed nodes, constant folding, symbolic
//! derivatives and scheduling into [`Program`]s.
//!
//! Small integer and half-integer powers (`x^3`, `x^-1`, `x^1.5`, …) stay
//! single nodes in the graph, so that their derivatives follow the power
//! rule (`d x^1.5 = 1.5 x^0.5`, zero at `x = 0` where a product rule over
//! `x·sqrt(x)` would give `0·∞`), and become multiplies, a division and
//! `sqrt` when they are scheduled; see [`SmallPower`].
//!
//! Nodes are created children first, so a node's id is always larger than
//! its operands' ids; every pass over the graph is a plain loop over ids and
//! nothing recurses, whatever the depth of an expression.

use super::ir::{apply, Inst, Op, Program};
use std::collections::HashMap;

/// Index of a node in a [`Graph`].
pub type Id = u32;

/// A node of the expression graph.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Node {
    /// A constant.
    Const(f64),
    /// The independent variable.
    Time,
    /// State `y[i]`.
    State(u32),
    /// Live parameter number `i` (an input that a view may change).
    Live(u32),
    /// An operation on earlier nodes; `b == a` for one-operand operations.
    Op {
        /// The operation.
        op: Op,
        /// First operand.
        a: Id,
        /// Second operand.
        b: Id,
        /// Immediate constant.
        c: f64,
    },
}

#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
enum Key {
    Const(u64),
    Time,
    State(u32),
    Live(u32),
    Op(Op, Id, Id, u64),
}

fn key(n: &Node) -> Key {
    match *n {
        Node::Const(c) => Key::Const(c.to_bits()),
        Node::Time => Key::Time,
        Node::State(i) => Key::State(i),
        Node::Live(i) => Key::Live(i),
        Node::Op { op, a, b, c } => Key::Op(op, a, b, c.to_bits()),
    }
}

/// A hash-consed expression graph: equal subexpressions are one node.
#[derive(Clone, Debug, Default)]
pub struct Graph {
    nodes: Vec<Node>,
    index: HashMap<Key, Id>,
}

impl Graph {
    /// An empty graph.
    pub fn new() -> Self {
        Graph::default()
    }

    /// The node with this id.
    pub fn node(&self, id: Id) -> Node {
        self.nodes[id as usize]
    }

    /// Number of nodes.
    pub fn len(&self) -> usize {
        self.nodes.len()
    }

    fn intern(&mut self, n: Node) -> Id {
        let k = key(&n);
        if let Some(&id) = self.index.get(&k) {
            return id;
        }
        let id = self.nodes.len() as Id;
        self.nodes.push(n);
        self.index.insert(k, id);
        id
    }

    /// The constant `c`.
    pub fn constant(&mut self, c: f64) -> Id {
        self.intern(Node::Const(c))
    }

    /// The independent variable.
    pub fn time(&mut self) -> Id {
        self.intern(Node::Time)
    }

    /// State `i`.
    pub fn state(&mut self, i: usize) -> Id {
        self.intern(Node::State(i as u32))
    }

    /// Live parameter `i`.
    pub fn live(&mut self, i: usize) -> Id {
        self.intern(Node::Live(i as u32))
    }

    /// The value of a constant node.
    pub fn as_const(&self, id: Id) -> Option<f64> {
        match self.nodes[id as usize] {
            Node::Const(c) => Some(c),
            _ => None,
        }
    }

    fn is(&self, id: Id, v: f64) -> bool {
        self.as_const(id) == Some(v)
    }

    fn raw(&mut self, op: Op, a: Id, b: Id, c: f64) -> Id {
        self.intern(Node::Op { op, a, b, c })
    }

    /// A one-operand operation, folded when its operand is constant.
    pub fn unary(&mut self, op: Op, a: Id) -> Id {
        if let Some(x) = self.as_const(a) {
            return self.constant(apply(op, x, x, 0.0));
        }
        if op == Op::Neg {
            if let Node::Op { op: Op::Neg, a: inner, .. } = self.node(a) {
                return inner;
            }
        }
        self.raw(op, a, a, 0.0)
    }

    /// A two-operand operation, folded when both operands are constant, with
    /// a constant operand moved into the immediate. Only rewrites that give
    /// bit-identical IEEE results are made (`x - c` is `x + (-c)`, `x * 1` is
    /// `x`, `x ^ 2` is `x * x`, …), so values agree exactly with a plain
    /// evaluation of the written expression. (Other small powers are written
    /// as multiplies only when scheduled; see [`SmallPower`].)
    pub fn binary(&mut self, op: Op, a: Id, b: Id) -> Id {
        use Op::*;
        let (ca, cb) = (self.as_const(a), self.as_const(b));
        if let (Some(x), Some(y)) = (ca, cb) {
            return self.constant(apply(op, x, y, 0.0));
        }
        match (op, ca, cb) {
            (Add, _, Some(c)) => self.with_const(AddC, a, c),
            (Add, Some(c), _) => self.with_const(AddC, b, c),
            (Sub, _, Some(c)) => self.with_const(AddC, a, -c),
            (Sub, Some(c), _) => self.with_const(CSub, b, c),
            (Mul, _, Some(c)) => self.with_const(MulC, a, c),
            (Mul, Some(c), _) => self.with_const(MulC, b, c),
            (Div, _, Some(c)) => self.with_const(DivC, a, c),
            (Div, Some(c), _) => self.with_const(CDiv, b, c),
            (Pow, _, Some(c)) => self.with_const(PowC, a, c),
            (Pow, Some(c), _) => self.with_const(CPow, b, c),
            (Mul, None, None) if a == b => self.raw(Sq, a, a, 0.0),
            _ => self.raw(op, a, b, 0.0),
        }
    }

    /// `op(a, c)` with the constant `c` as second operand.
    fn bin_rc(&mut self, op: Op, a: Id, c: f64) -> Id {
        let k = self.constant(c);
        self.binary(op, a, k)
    }

    /// `op(c, b)` with the constant `c` as first operand.
    fn bin_lc(&mut self, op: Op, c: f64, b: Id) -> Id {
        let k = self.constant(c);
        self.binary(op, k, b)
    }

    /// `op(a, c)` for an operation with an immediate, with its exact identities.
    fn with_const(&mut self, op: Op, a: Id, c: f64) -> Id {
        use Op::*;
        match op {
            AddC if c == 0.0 => a,
            MulC | DivC if c == 1.0 => a,
            MulC if c == -1.0 => self.unary(Neg, a),
            PowC if c == 1.0 => a,
            // `pow(x, 0)` is 1 for every x, NaN included.
            PowC if c == 0.0 => self.constant(1.0),
            PowC if c == 2.0 => self.raw(Sq, a, a, 0.0),
            _ => self.raw(op, a, a, c),
        }
    }

    // Algebra for derivatives: here `0 * x` is `0` (derivatives assume finite
    // values), so most terms of a Jacobian vanish at compile time.

    fn d_add(&mut self, a: Id, b: Id) -> Id {
        if self.is(a, 0.0) {
            b
        } else if self.is(b, 0.0) {
            a
        } else {
            self.binary(Op::Add, a, b)
        }
    }

    fn d_sub(&mut self, a: Id, b: Id) -> Id {
        if self.is(b, 0.0) {
            a
        } else if self.is(a, 0.0) {
            self.unary(Op::Neg, b)
        } else if a == b {
            self.constant(0.0)
        } else {
            self.binary(Op::Sub, a, b)
        }
    }

    fn d_mul(&mut self, a: Id, b: Id) -> Id {
        if self.is(a, 0.0) || self.is(b, 0.0) {
            self.constant(0.0)
        } else {
            self.binary(Op::Mul, a, b)
        }
    }

    fn d_div(&mut self, a: Id, b: Id) -> Id {
        if self.is(a, 0.0) {
            self.constant(0.0)
        } else {
            self.binary(Op::Div, a, b)
        }
    }

    fn d_mulc(&mut self, a: Id, c: f64) -> Id {
        if c == 0.0 || self.is(a, 0.0) {
            self.constant(0.0)
        } else {
            self.bin_rc(Op::Mul, a, c)
        }
    }

    /// The derivatives of `roots` with respect to the input node `var`
    /// (a state or the time node). Operands are differentiated before the
    /// nodes that use them, in one loop over ids.
    pub fn derivatives(&mut self, roots: &[Id], var: Id) -> Vec<Id> {
        let top = roots.iter().copied().max().map_or(0, |m| m as usize + 1);
        let zero = self.constant(0.0);
        let one = self.constant(1.0);
        let mut d = vec![zero; top];
        // Only nodes below `top` that depend on `var` need work.
        let mut dep = vec![false; top];
        for id in 0..top {
            let n = self.nodes[id];
            dep[id] = match n {
                Node::Op { a, b, .. } => dep[a as usize] || dep[b as usize],
                _ => id as Id == var,
            };
            if !dep[id] {
                continue;
            }
            d[id] = match n {
                Node::Op { op, a, b, c } => self.derive_op(id as Id, op, a, b, c, d[a as usize], d[b as usize]),
                _ => one,
            };
        }
        roots.iter().map(|&r| d[r as usize]).collect()
    }

    /// The derivative of node `me = op(a, b, c)` given `da` and `db`.
    #[allow(clippy::too_many_arguments)]
    fn derive_op(&mut self, me: Id, op: Op, a: Id, b: Id, c: f64, da: Id, db: Id) -> Id {
        use Op::*;
        let zero = self.constant(0.0);
        match op {
            Add => self.d_add(da, db),
            Sub => self.d_sub(da, db),
            Mul => {
                let l = self.d_mul(da, b);
                let r = self.d_mul(a, db);
                self.d_add(l, r)
            }
            Div => {
                // d(a/b) = (da - (a/b) db) / b
                let t = self.d_mul(me, db);
                let n = self.d_sub(da, t);
                self.d_div(n, b)
            }
            Rem => {
                // a % b = a - b trunc(a/b); the trunc is piecewise constant.
                let q = self.binary(Div, a, b);
                let q = self.unary(Trunc, q);
                let t = self.d_mul(db, q);
                self.d_sub(da, t)
            }
            Pow => {
                // d(a^b) = a^b (db ln a + b da / a)
                let la = self.unary(Ln, a);
                let l = self.d_mul(db, la);
                let r0 = self.d_mul(b, da);
                let r = self.d_div(r0, a);
                let s = self.d_add(l, r);
                self.d_mul(me, s)
            }
            PowC => {
                // d(a^c) = c a^(c-1) da
                let p = if c == 2.0 { a } else { self.bin_rc(Pow, a, c - 1.0) };
                let t = self.d_mulc(p, c);
                self.d_mul(t, da)
            }
            CPow => {
                // d(c^a) = c^a ln(c) da
                let t = self.d_mulc(me, c.ln());
                self.d_mul(t, da)
            }
            Atan2 => {
                // d atan2(a, b) = (b da - a db) / (a^2 + b^2)
                let l = self.d_mul(b, da);
                let r = self.d_mul(a, db);
                let n = self.d_sub(l, r);
                let a2 = self.unary(Sq, a);
                let b2 = self.unary(Sq, b);
                let den = self.binary(Add, a2, b2);
                self.d_div(n, den)
            }
            Min | Max => {
                // min: da where a < b, else db; max: da where a > b, else db.
                let diff = if op == Min { self.binary(Sub, a, b) } else { self.binary(Sub, b, a) };
                let s = self.unary(Heaviside, diff);
                let delta = self.d_sub(db, da);
                let t = self.d_mul(s, delta);
                self.d_add(da, t)
            }
            Hypot => {
                let l = self.d_mul(a, da);
                let r = self.d_mul(b, db);
                let n = self.d_add(l, r);
                self.d_div(n, me)
            }
            MulC => self.d_mulc(da, c),
            CSub | Neg => self.unary(Neg, da),
            DivC => {
                if self.is(da, 0.0) {
                    zero
                } else {
                    self.bin_rc(Div, da, c)
                }
            }
            CDiv => {
                // d(c/a) = -(c/a) da / a
                let t = self.d_mul(me, da);
                let t = self.d_div(t, a);
                self.unary(Neg, t)
            }
            Sq => {
                let t = self.d_mul(a, da);
                self.d_mulc(t, 2.0)
            }
            Sqrt => {
                // d sqrt(a) = da / (2 sqrt(a))
                let den = self.d_mulc(me, 2.0);
                self.d_div(da, den)
            }
            Exp => self.d_mul(me, da),
            Ln => self.d_div(da, a),
            Log10 => {
                let den = self.d_mulc(a, std::f64::consts::LN_10);
                self.d_div(da, den)
            }
            Abs => {
                let s = self.unary(Sign, a);
                self.d_mul(s, da)
            }
            Sin => {
                let t = self.unary(Cos, a);
                self.d_mul(t, da)
            }
            Cos => {
                let t = self.unary(Sin, a);
                let t = self.d_mul(t, da);
                self.unary(Neg, t)
            }
            Tan => {
                // d tan(a) = (1 + tan^2 a) da
                let t2 = self.unary(Sq, me);
                let t = self.bin_rc(Add, t2, 1.0);
                self.d_mul(t, da)
            }
            Asin | Acos => {
                // d asin(a) = da / sqrt(1 - a^2); acos is its negative.
                let a2 = self.unary(Sq, a);
                let s = self.bin_lc(Sub, 1.0, a2);
                let s = self.unary(Sqrt, s);
                let t = self.d_div(da, s);
                if op == Asin {
                    t
                } else {
                    self.unary(Neg, t)
                }
            }
            Atan => {
                let a2 = self.unary(Sq, a);
                let den = self.bin_rc(Add, a2, 1.0);
                self.d_div(da, den)
            }
            Sinh => {
                let t = self.unary(Cosh, a);
                self.d_mul(t, da)
            }
            Cosh => {
                let t = self.unary(Sinh, a);
                self.d_mul(t, da)
            }
            Tanh => {
                // d tanh(a) = (1 - tanh^2 a) da
                let t2 = self.unary(Sq, me);
                let t = self.bin_lc(Sub, 1.0, t2);
                self.d_mul(t, da)
            }
            Asinh | Acosh => {
                // d asinh(a) = da / sqrt(a^2 + 1); acosh: da / sqrt(a^2 - 1)
                let a2 = self.unary(Sq, a);
                let k = if op == Asinh { 1.0 } else { -1.0 };
                let s = self.bin_rc(Add, a2, k);
                let s = self.unary(Sqrt, s);
                self.d_div(da, s)
            }
            Atanh => {
                let a2 = self.unary(Sq, a);
                let den = self.bin_lc(Sub, 1.0, a2);
                self.d_div(da, den)
            }
            Floor | Ceil | Round | Trunc | Signum | Sign | Heaviside => zero,
            AddC => da,
        }
    }

    /// For each node below `limit`, whether it is reachable from `roots`.
    pub fn reachable(&self, roots: &[Id]) -> Vec<bool> {
        let top = roots.iter().copied().max().map_or(0, |m| m as usize + 1);
        let mut seen = vec![false; top];
        for &r in roots {
            seen[r as usize] = true;
        }
        for id in (0..top).rev() {
            if !seen[id] {
                continue;
            }
            if let Node::Op { a, b, .. } = self.nodes[id] {
                seen[a as usize] = true;
                seen[b as usize] = true;
            }
        }
        seen
    }

    /// Schedule the nodes `roots` need into a [`Program`] whose outputs are
    /// the roots' values, in order. `live` gives the live parameters' names
    /// and current values, indexed like [`Node::Live`].
    pub fn schedule(&self, dim: usize, live: &[(String, f64)], roots: &[Id]) -> Program {
        let seen = self.reachable(roots);
        let n_live = live.len();
        let mut slot = vec![u32::MAX; seen.len()];
        let mut consts = Vec::new();
        // Inputs and constants first, then one instruction per operation node.
        for (id, &s) in seen.iter().enumerate() {
            if !s {
                continue;
            }
            slot[id] = match self.nodes[id] {
                Node::Time => 0,
                Node::State(i) => 1 + i,
                Node::Live(i) => (1 + dim) as u32 + i,
                Node::Const(c) => {
                    consts.push(c);
                    (dim + n_live + consts.len()) as u32
                }
                Node::Op { .. } => continue,
            };
        }
        let first = (1 + dim + n_live + consts.len()) as u32;
        let mut insts: Vec<Inst> = Vec::new();
        // Equal instructions share one slot: the graph is hash-consed, so
        // only the pieces of expanded powers can repeat (`x^1.5` next to
        // `x^0.5` or `x^2`).
        let mut made: HashMap<(Op, u32, u32, u64), u32> = HashMap::new();
        let mut emit = |op: Op, a: u32, b: u32, c: f64| -> u32 {
            *made.entry((op, a, b, c.to_bits())).or_insert_with(|| {
                insts.push(Inst { op, a, b, c });
                first + insts.len() as u32 - 1
            })
        };
        for (id, &s) in seen.iter().enumerate() {
            if let (true, Node::Op { op, a, b, c }) = (s, self.nodes[id]) {
                let (a, b) = (slot[a as usize], slot[b as usize]);
                slot[id] = match (op, small_power(c)) {
                    (Op::PowC, Some(power)) => power.emit(a, &mut emit),
                    _ => emit(op, a, b, c),
                };
            }
        }
        let outputs = roots.iter().map(|&r| slot[r as usize]).collect();
        // The schedule is built in id order from a graph whose operands
        // precede their users, which is exactly what `Program::new` checks.
        match Program::new(dim, live.to_vec(), consts, insts, outputs) {
            Some(p) => p,
            None => unreachable!("a schedule of a well-formed graph is a well-formed program"),
        }
    }
}


/// A power `x^c` that scheduling writes as multiplies and `sqrt`: `c` is an
/// integer or half-integer with `0.5 ≤ |c| ≤ 4`, other than `1` and `2`
/// (`x^2` is already a square in the graph, `x^1` is `x` and `x^0` is `1`).
///
/// `x^n` for a whole `n` is `x·x` (2), `(x·x)·x` (3) or `(x·x)·(x·x)` (4);
/// a half adds `· sqrt(x + 0)` (alone for `x^0.5`), where `+ 0` turns `-0`
/// into `+0` as `pow` does; a negative power is `1 / x^|c|`. Each is within a
/// few units in the last place of the correctly rounded power wherever the
/// result is a normal number; the exceptions are where `x^|c|` overflows
/// although `x^c` is a subnormal (`0` instead), and `x = -inf` with a
/// half-integer power (NaN, where `pow` gives `+inf` or `+0`).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct SmallPower {
    /// The whole part of `|c|`, `0 ..= 4`.
    pub whole: u8,
    /// Whether `|c|` has a half.
    pub half: bool,
    /// Whether `c` is negative.
    pub negative: bool,
}

/// The [`SmallPower`] for the exponent `c`, if it is one.
pub fn small_power(c: f64) -> Option<SmallPower> {
    let m = c.abs();
    let twice = 2.0 * m;
    if !(twice == twice.trunc() && (0.5..=4.0).contains(&m)) || c == 1.0 || c == 2.0 {
        return None;
    }
    Some(SmallPower { whole: m.trunc() as u8, half: m.fract() != 0.0, negative: c < 0.0 })
}

impl SmallPower {
    /// Write the power of the value in slot `x` with `emit(op, a, b, c)`,
    /// which appends an instruction (or finds an equal one) and returns its
    /// slot; returns the slot of the power.
    pub fn emit(self, x: u32, emit: &mut impl FnMut(Op, u32, u32, f64) -> u32) -> u32 {
        let whole = match self.whole {
            0 => None,
            1 => Some(x),
            2 => Some(emit(Op::Sq, x, x, 0.0)),
            3 => {
                let s = emit(Op::Sq, x, x, 0.0);
                Some(emit(Op::Mul, s, x, 0.0))
            }
            _ => {
                let s = emit(Op::Sq, x, x, 0.0);
                Some(emit(Op::Sq, s, s, 0.0))
            }
        };
        let root = self.half.then(|| {
            let z = emit(Op::AddC, x, x, 0.0);
            emit(Op::Sqrt, z, z, 0.0)
        });
        let p = match (whole, root) {
            (Some(w), Some(r)) => emit(Op::Mul, w, r, 0.0),
            (Some(w), None) => w,
            (None, Some(r)) => r,
            (None, None) => x,
        };
        if self.negative {
            emit(Op::CDiv, p, p, 1.0)
        } else {
            p
        }
    }
}
