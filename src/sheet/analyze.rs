//! Making sense of the statements: which names are states, parameters and
//! helpers, in what order definitions are evaluated, and every check that
//! does not need numbers.

use super::error::{suggest, ModelError, ModelErrorKind as K};
use super::scan::{Expr, Line, Stmt};
use std::collections::HashMap;

/// Most states in a sheet.
pub const MAX_STATES: usize = 200;

/// Where a state's rate comes from.
#[derive(Clone, Debug)]
pub enum Rate {
    /// An expression of the sheet.
    Expr(Expr),
    /// The next state of a higher-order chain (`x` has rate `x'`).
    Next(usize),
}

/// A state.
#[derive(Clone, Debug)]
pub struct State {
    /// Its name, with primes (`x'`).
    pub name: String,
    /// Line and column of the rate equation that makes it.
    pub line: usize,
    /// Column of the rate equation's left side.
    pub col: usize,
    /// Its rate.
    pub rate: Rate,
    /// Its initial value.
    pub init: Expr,
}

/// A definition `name = expr`.
#[derive(Clone, Debug)]
pub struct Def {
    /// The name.
    pub name: String,
    /// Its line.
    pub line: usize,
    /// Column of its name.
    pub col: usize,
    /// Its expression.
    pub expr: Expr,
    /// Whether it depends on the states or the independent variable.
    pub helper: bool,
}

/// An event.
#[derive(Clone, Debug)]
pub struct Event {
    /// `stop when` (`true`) or `mark when`.
    pub stop: bool,
    /// The condition text as written.
    pub text: String,
    /// The comparison.
    pub cmp: &'static str,
    /// Left side.
    pub lhs: Expr,
    /// Right side.
    pub rhs: Expr,
}

/// What a name refers to.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Name {
    /// The independent variable.
    Indep,
    /// State `i`.
    State(usize),
    /// Definition `i` (index into [`Sheet::defs`]).
    Def(usize),
}

/// A checked sheet, ready to lower.
#[derive(Clone, Debug)]
pub struct Sheet {
    /// The independent variable.
    pub indep: String,
    /// The states, in order.
    pub states: Vec<State>,
    /// The definitions, in sheet order.
    pub defs: Vec<Def>,
    /// Definition indices in evaluation order (each after what it uses).
    pub order: Vec<usize>,
    /// The start time, and the line it was first given on.
    pub t0: Vec<(Expr, usize)>,
    /// The events, in order.
    pub events: Vec<Event>,
    /// Every name.
    pub names: HashMap<String, Name>,
}

fn err(line: usize, col: usize, kind: K) -> ModelError {
    ModelError::new(line, col, kind)
}

/// Check the statements and sort out the names.
pub fn analyze(lines: Vec<Line>) -> Result<Sheet, ModelError> {
    let Some(first) = lines.first() else {
        return Err(err(1, 1, K::EmptySheet));
    };
    let first_line = first.line;
    // The independent variable.
    let mut indep: Option<(String, usize)> = None;
    for l in &lines {
        if let Stmt::Rate { indep: Some((t, tcol)), .. } = &l.stmt {
            match &indep {
                None => indep = Some((t.clone(), l.line)),
                Some((first, fl)) if first != t => {
                    return Err(err(l.line, *tcol, K::MixedIndependentVariable { first: first.clone(), first_line: *fl, found: t.clone() }))
                }
                _ => {}
            }
        }
    }
    let indep = indep.map_or_else(|| "t".to_string(), |(t, _)| t);
    let mut names: HashMap<String, Name> = HashMap::new();
    let mut lines_of: HashMap<String, usize> = HashMap::new();
    names.insert(indep.clone(), Name::Indep);
    // States and definitions.
    let mut states: Vec<State> = Vec::new();
    let mut defs: Vec<Def> = Vec::new();
    let mut pending_inits: Vec<&Line> = Vec::new();
    // The line and order of the rate equation of each state's base name.
    let mut equations: HashMap<&str, (usize, usize)> = HashMap::new();
    let mut events = Vec::new();
    let placeholder = || Expr { col: 0, text: String::new(), rpn: Vec::new(), names: Vec::new() };
    let mut claim = |name: &str, line: usize, col: usize, kind: Name, names: &mut HashMap<String, Name>| {
        if let Some(old) = names.get(name) {
            if *old == Name::Indep {
                return Err(err(line, col, K::Syntax { expected: format!("\"{name}\" is the independent variable and cannot be defined") }));
            }
            let first_line = lines_of.get(name).copied().unwrap_or(line);
            return Err(err(line, col, K::DuplicateDefinition { name: name.to_string(), first_line }));
        }
        names.insert(name.to_string(), kind);
        lines_of.insert(name.to_string(), line);
        Ok(())
    };
    for l in &lines {
        match &l.stmt {
            Stmt::Rate { state, col, order, expr, .. } => {
                let base = states.len();
                if let Some(&(first_line, first_order)) = equations.get(state.as_str()) {
                    let kind = K::RateGivenTwice { state: state.clone(), order: *order, first_line, first_order };
                    return Err(err(l.line, *col, kind));
                }
                equations.insert(state, (l.line, *order));
                if base + order > MAX_STATES {
                    return Err(err(l.line, *col, K::TooManyStates { limit: MAX_STATES }));
                }
                for k in 0..*order {
                    let name = format!("{state}{}", "'".repeat(k));
                    claim(&name, l.line, *col, Name::State(base + k), &mut names)?;
                    let rate = if k + 1 < *order { Rate::Next(base + k + 1) } else { Rate::Expr(expr.clone()) };
                    states.push(State { name, line: l.line, col: *col, rate, init: placeholder() });
                }
            }
            Stmt::Def { name, col, expr } => {
                claim(name, l.line, *col, Name::Def(defs.len()), &mut names)?;
                defs.push(Def { name: name.clone(), line: l.line, col: *col, expr: expr.clone(), helper: false });
            }
            Stmt::Init { .. } => pending_inits.push(l),
            Stmt::Event { stop, text, cmp, lhs, rhs } => {
                events.push(Event { stop: *stop, text: text.clone(), cmp, lhs: lhs.clone(), rhs: rhs.clone() })
            }
        }
    }
    if states.is_empty() {
        return Err(err(first_line, 1, K::NoRateEquations));
    }
    // Every name used must be known; check in line order.
    for l in &lines {
        for e in exprs(&l.stmt) {
            for r in &e.names {
                if !names.contains_key(&r.name) {
                    let mut known: Vec<&str> = names.keys().map(String::as_str).collect();
                    known.sort_unstable();
                    known.extend(["pi", "e"]);
                    let suggestion = suggest(&r.name, known);
                    return Err(err(l.line, r.col, K::UnknownName { name: r.name.clone(), suggestion }));
                }
            }
        }
    }
    let order = evaluation_order(&defs, &names)?;
    for &d in &order {
        let helper = defs[d].expr.names.iter().any(|r| match names.get(&r.name) {
            Some(Name::Indep) | Some(Name::State(_)) => true,
            Some(Name::Def(j)) => defs[*j].helper,
            None => false,
        });
        defs[d].helper = helper;
    }
    // Initial values.
    let mut init_line: Vec<Option<usize>> = vec![None; states.len()];
    let mut t0 = Vec::new();
    for l in pending_inits {
        let Stmt::Init { state, col, t0: t, value } = &l.stmt else { continue };
        let i = match names.get(state) {
            Some(Name::State(i)) => *i,
            _ => {
                let suggestion = suggest(state, states.iter().map(|s| s.name.as_str()));
                return Err(err(l.line, *col, K::NotAState { name: state.clone(), suggestion }));
            }
        };
        if let Some(first_line) = init_line[i] {
            return Err(err(l.line, *col, K::DuplicateInitialValue { state: state.clone(), first_line }));
        }
        constant(t, "the start time", &names, &defs, l.line)?;
        constant(value, &format!("the initial value of {state}"), &names, &defs, l.line)?;
        init_line[i] = Some(l.line);
        states[i].init = value.clone();
        t0.push((t.clone(), l.line));
    }
    if let Some(i) = init_line.iter().position(Option::is_none) {
        let s = &states[i];
        return Err(err(s.line, s.col, K::MissingInitialValue { state: s.name.clone() }));
    }
    Ok(Sheet { indep, states, defs, order, t0, events, names })
}

/// The expressions of a statement.
fn exprs(s: &Stmt) -> Vec<&Expr> {
    match s {
        Stmt::Def { expr, .. } | Stmt::Rate { expr, .. } => vec![expr],
        Stmt::Init { t0, value, .. } => vec![t0, value],
        Stmt::Event { lhs, rhs, .. } => vec![lhs, rhs],
    }
}

/// Check that `e` uses only parameters.
fn constant(e: &Expr, what: &str, names: &HashMap<String, Name>, defs: &[Def], line: usize) -> Result<(), ModelError> {
    for r in &e.names {
        let varies = match names.get(&r.name) {
            Some(Name::Def(j)) => defs[*j].helper,
            _ => true,
        };
        if varies {
            return Err(err(line, r.col, K::NotConstant { what: what.to_string(), name: r.name.clone() }));
        }
    }
    Ok(())
}

/// Definitions ordered so that each comes after the definitions it uses; a
/// cycle is an error naming its members, reported at the earliest of them.
fn evaluation_order(defs: &[Def], names: &HashMap<String, Name>) -> Result<Vec<usize>, ModelError> {
    let uses: Vec<Vec<usize>> = defs
        .iter()
        .map(|d| {
            let mut u: Vec<usize> = d
                .expr
                .names
                .iter()
                .filter_map(|r| match names.get(&r.name) {
                    Some(Name::Def(j)) => Some(*j),
                    _ => None,
                })
                .collect();
            u.dedup();
            u
        })
        .collect();
    // Iterative depth-first search: 0 unvisited, 1 on the path, 2 done.
    let mut mark = vec![0u8; defs.len()];
    let mut order = Vec::with_capacity(defs.len());
    for root in 0..defs.len() {
        if mark[root] != 0 {
            continue;
        }
        let mut path: Vec<(usize, usize)> = vec![(root, 0)];
        mark[root] = 1;
        while let Some(&mut (node, ref mut next)) = path.last_mut() {
            if let Some(&child) = uses[node].get(*next) {
                *next += 1;
                match mark[child] {
                    0 => {
                        mark[child] = 1;
                        path.push((child, 0));
                    }
                    1 => {
                        let from = path.iter().position(|&(n, _)| n == child).unwrap_or(0);
                        let ring: Vec<usize> = path[from..].iter().map(|&(n, _)| n).collect();
                        let start = (0..ring.len()).min_by_key(|&k| defs[ring[k]].line).unwrap_or(0);
                        let names: Vec<String> =
                            (0..ring.len()).map(|k| defs[ring[(start + k) % ring.len()]].name.clone()).collect();
                        let d = &defs[ring[start]];
                        return Err(err(d.line, d.col, K::HelperCycle { names }));
                    }
                    _ => {}
                }
            } else {
                mark[node] = 2;
                order.push(node);
                path.pop();
            }
        }
    }
    Ok(order)
}
