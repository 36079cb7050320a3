//! Lowering a checked sheet into the expression graph.
//!
//! Parameters that are not live become constants and fold away; live ones
//! become inputs. Helpers are inlined where they are used, and the graph's
//! hash-consing shares them (and every other common subexpression).
//!
//! **Switch functions.** Where a rate is not smooth, the lowering records a
//! function that changes sign exactly there, so the solver can end a step on
//! it:
//! - `abs(x)`, `sign(x)`, `signum(x)`, `heaviside(x)`: `x`;
//! - `min(a, b)`, `max(a, b)`: `a - b` (one per pair when there are more arguments);
//!   `min` and `max` fold from `+inf` and `-inf` as meval does, so a NaN argument is passed over;
//! - `clamp(x, lo, hi)`: `x - lo` and `x - hi`;
//! - `floor(x)`, `ceil(x)`: `sin(pi*x)`, which is zero at every integer, where
//!   they jump, and nowhere else;
//! - `round(x)`: `cos(pi*x)`, zero at every half-integer;
//! - `a % b`: `sin(pi*a/b)`, zero wherever `a/b` is an integer.

use super::analyze::{Name, Rate, Sheet};
use super::dag::{Graph, Id};
use super::ir::Op;
use super::scan::{Expr, Func, Tok};
use std::collections::HashMap;
use std::f64::consts::PI;

/// A sheet in graph form.
#[derive(Clone, Debug)]
pub struct Lowered {
    /// The graph holding every node below.
    pub graph: Graph,
    /// The rate of each state.
    pub rates: Vec<Id>,
    /// Each helper, in sheet order.
    pub helpers: Vec<Id>,
    /// The helpers' names, in sheet order.
    pub helper_names: Vec<String>,
    /// Indices into `helpers`, in evaluation order.
    pub helper_order: Vec<usize>,
    /// Each parameter's name, line and node, in sheet order.
    pub params: Vec<(String, usize, Id)>,
    /// The start time of each initial-value line.
    pub t0: Vec<Id>,
    /// The initial value of each state.
    pub inits: Vec<Id>,
    /// Each event function `lhs - rhs`.
    pub events: Vec<Id>,
    /// The switch functions of the rates.
    pub switches: Vec<Id>,
    /// The live parameters with their current values, in input order.
    pub live: Vec<(String, f64)>,
}

/// Lower `sheet` with the parameters named in `live` as inputs, and
/// `values` overriding parameter values.
pub fn lower(sheet: &Sheet, live: &[String], values: &HashMap<String, f64>) -> Lowered {
    let mut g = Graph::new();
    let mut def_node: Vec<Id> = vec![0; sheet.defs.len()];
    let mut live_vals: Vec<(String, f64)> = Vec::new();
    let mut switches: Vec<(Id, Id)> = Vec::new();
    let state_nodes: Vec<Id> = (0..sheet.states.len()).map(|i| g.state(i)).collect();
    let time = g.time();
    for &d in &sheet.order {
        let def = &sheet.defs[d];
        let node = lower_expr(&mut g, &def.expr, sheet, &def_node, &state_nodes, time, &mut switches);
        def_node[d] = if def.helper {
            node
        } else if live.contains(&def.name) {
            let v = values.get(&def.name).copied().unwrap_or_else(|| constant_value(&g, node, &live_vals));
            live_vals.push((def.name.clone(), v));
            g.live(live_vals.len() - 1)
        } else if let Some(&v) = values.get(&def.name) {
            g.constant(v)
        } else {
            node
        };
    }
    let mut rate_switches = Vec::new();
    let lower_here = |g: &mut Graph, e: &Expr, sw: &mut Vec<(Id, Id)>| {
        lower_expr(g, e, sheet, &def_node, &state_nodes, time, sw)
    };
    let rates: Vec<Id> = sheet
        .states
        .iter()
        .map(|s| match &s.rate {
            Rate::Next(j) => state_nodes[*j],
            Rate::Expr(e) => lower_here(&mut g, e, &mut rate_switches),
        })
        .collect();
    let inits = sheet.states.iter().map(|s| lower_here(&mut g, &s.init, &mut Vec::new())).collect();
    let t0 = sheet.t0.iter().map(|(e, _)| lower_here(&mut g, e, &mut Vec::new())).collect();
    let events = sheet
        .events
        .iter()
        .map(|ev| {
            let l = lower_here(&mut g, &ev.lhs, &mut Vec::new());
            let r = lower_here(&mut g, &ev.rhs, &mut Vec::new());
            g.binary(Op::Sub, l, r)
        })
        .collect();
    // Switches of helpers count where a rate uses the helper.
    switches.extend(rate_switches);
    let reach = g.reachable(&rates);
    let mut kept: Vec<Id> = Vec::new();
    for (call, sw) in switches {
        let used = reach.get(call as usize).copied().unwrap_or(false);
        if used && g.as_const(call).is_none() && g.as_const(sw).is_none() && !kept.contains(&sw) {
            kept.push(sw);
        }
    }
    let mut helpers = Vec::new();
    let mut helper_names = Vec::new();
    let mut params = Vec::new();
    let mut index_of = HashMap::new();
    for (d, def) in sheet.defs.iter().enumerate() {
        if def.helper {
            index_of.insert(d, helpers.len());
            helpers.push(def_node[d]);
            helper_names.push(def.name.clone());
        } else {
            params.push((def.name.clone(), def.line, def_node[d]));
        }
    }
    let helper_order = sheet.order.iter().filter_map(|d| index_of.get(d).copied()).collect();
    Lowered {
        graph: g,
        rates,
        helpers,
        helper_names,
        helper_order,
        params,
        t0,
        inits,
        events,
        switches: kept,
        live: live_vals,
    }
}

/// The value of a node that depends only on live parameters.
pub fn constant_value(g: &Graph, node: Id, live: &[(String, f64)]) -> f64 {
    if let Some(c) = g.as_const(node) {
        return c;
    }
    let mut p = g.schedule(0, live, &[node]);
    let mut out = [f64::NAN];
    p.eval(0.0, &[], &mut out);
    out[0]
}

/// Lower one expression. Its names are known to resolve (the sheet was
/// checked), and its RPN is well formed (meval produced it), so a missing
/// operand cannot happen; it would lower as NaN rather than panic.
fn lower_expr(
    g: &mut Graph,
    e: &Expr,
    sheet: &Sheet,
    def_node: &[Id],
    states: &[Id],
    time: Id,
    switches: &mut Vec<(Id, Id)>,
) -> Id {
    let mut stack: Vec<Id> = Vec::with_capacity(16);
    let nan = g.constant(f64::NAN);
    for t in &e.rpn {
        let node = match *t {
            Tok::Num(v) => g.constant(v),
            Tok::Name(k) => match e.names.get(k).and_then(|r| sheet.names.get(&r.name)) {
                Some(Name::Indep) => time,
                Some(Name::State(i)) => states[*i],
                Some(Name::Def(j)) => def_node[*j],
                None => nan,
            },
            Tok::Neg => {
                let a = stack.pop().unwrap_or(nan);
                g.unary(Op::Neg, a)
            }
            Tok::Bin(op) => {
                let b = stack.pop().unwrap_or(nan);
                let a = stack.pop().unwrap_or(nan);
                let r = g.binary(op, a, b);
                if op == Op::Rem {
                    let q = g.binary(Op::Div, a, b);
                    let s = periodic(g, Op::Sin, q);
                    switches.push((r, s));
                }
                r
            }
            Tok::Call(f, n) => {
                let at = stack.len().saturating_sub(n);
                let args: Vec<Id> = stack.split_off(at);
                let arg = |k: usize| args.get(k).copied().unwrap_or(nan);
                match f {
                    Func::Unary(op) => {
                        let x = arg(0);
                        let r = g.unary(op, x);
                        let s = match op {
                            Op::Abs | Op::Sign | Op::Signum | Op::Heaviside => Some(x),
                            Op::Floor | Op::Ceil => Some(periodic(g, Op::Sin, x)),
                            Op::Round => Some(periodic(g, Op::Cos, x)),
                            _ => None,
                        };
                        if let Some(s) = s {
                            switches.push((r, s));
                        }
                        r
                    }
                    Func::Binary(op) => g.binary(op, arg(0), arg(1)),
                    Func::Min | Func::Max => {
                        // As meval does: a fold from +inf (min) or -inf
                        // (max), so NaN arguments are passed over.
                        let (op, start) = if f == Func::Min { (Op::Min, f64::INFINITY) } else { (Op::Max, f64::NEG_INFINITY) };
                        let start = g.constant(start);
                        let mut acc = g.binary(op, start, arg(0));
                        for &x in args.iter().skip(1) {
                            let r = g.binary(op, acc, x);
                            let s = g.binary(Op::Sub, acc, x);
                            switches.push((r, s));
                            acc = r;
                        }
                        acc
                    }
                    Func::Clamp => {
                        let (x, lo, hi) = (arg(0), arg(1), arg(2));
                        let m = g.binary(Op::Max, x, lo);
                        let r = g.binary(Op::Min, m, hi);
                        let s1 = g.binary(Op::Sub, x, lo);
                        let s2 = g.binary(Op::Sub, x, hi);
                        switches.push((r, s1));
                        switches.push((r, s2));
                        r
                    }
                }
            }
        };
        stack.push(node);
    }
    stack.pop().unwrap_or(nan)
}

/// `op(pi * x)`.
fn periodic(g: &mut Graph, op: Op, x: Id) -> Id {
    let k = g.constant(PI);
    let px = g.binary(Op::Mul, x, k);
    g.unary(op, px)
}
