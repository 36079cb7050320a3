//! A compiled sheet: the [`Model`] the solvers run.

use super::analyze::{Rate, Sheet};
use super::scan::Expr;
use super::dag::Id;
use super::ir::{Op, Program};
use super::lower::{lower, Lowered};
use crate::problem::{Crossing, EventAction, EventSpec, NonFiniteCause, Problem};
use std::collections::HashMap;

/// A parameter of a sheet: a name whose value does not change during a run.
#[derive(Clone, Debug, PartialEq)]
pub struct Param {
    /// The name.
    pub name: String,
    /// Its current value.
    pub value: f64,
    /// The line that defines it, 1-based.
    pub line: usize,
}

/// A compiled sheet. It implements [`Problem`], so every solver can run it.
///
/// Evaluation runs flat instruction tapes ([`Program`]s, see
/// [`ir`](super::ir)) over preallocated slot arrays, so no call allocates.
/// The Jacobian and `∂f/∂t` tapes are built the first time they are asked
/// for.
#[derive(Clone, Debug)]
pub struct Model {
    sheet: Sheet,
    live: Vec<String>,
    values: HashMap<String, f64>,
    low: Lowered,
    state_names: Vec<String>,
    events: Vec<EventSpec>,
    rhs: Program,
    all: Program,
    event_prog: Program,
    switch_prog: Program,
    /// Outputs: `[t0, y0…, params…]`; inputs are the live parameters only.
    const_prog: Program,
    jac: Option<Program>,
    dfdt: Option<Program>,
    /// Gradients of the helpers, row `m` = `[∂h_m/∂y…, ∂h_m/∂t]`.
    helper_grad: Option<Program>,
    grad_buf: Vec<f64>,
    t0: f64,
    y0: Vec<f64>,
    params: Vec<Param>,
}

impl Model {
    /// Compile a checked sheet. Returns the model, or the line of the first
    /// initial value whose start time differs from the first one's, with the two times.
    pub(crate) fn build(sheet: Sheet) -> Result<Model, (usize, f64, usize, f64)> {
        let low = lower(&sheet, &[], &HashMap::new());
        let state_names = sheet.states.iter().map(|s| s.name.clone()).collect();
        let events = sheet
            .events
            .iter()
            .map(|e| EventSpec {
                name: e.text.clone(),
                action: if e.stop { EventAction::Stop } else { EventAction::Mark },
                crossing: match e.cmp {
                    "<" | "<=" => Crossing::Falling,
                    ">" | ">=" => Crossing::Rising,
                    _ => Crossing::Either,
                },
            })
            .collect();
        let mut m = Model::assemble(sheet, Vec::new(), HashMap::new(), low, state_names, events);
        // All initial values share one start time.
        let times = m.start_times();
        if let Some(k) = times.iter().position(|&t| t != times[0] && !(t.is_nan() && times[0].is_nan())) {
            let (l0, lk) = (m.sheet.t0[0].1, m.sheet.t0[k].1);
            return Err((lk, times[k], l0, times[0]));
        }
        m.refresh_constants();
        Ok(m)
    }

    fn assemble(
        sheet: Sheet,
        live: Vec<String>,
        values: HashMap<String, f64>,
        low: Lowered,
        state_names: Vec<String>,
        events: Vec<EventSpec>,
    ) -> Model {
        let dim = sheet.states.len();
        let g = &low.graph;
        let lv = &low.live;
        let rhs = g.schedule(dim, lv, &low.rates);
        let mut all_roots = low.rates.clone();
        all_roots.extend(&low.helpers);
        let all = g.schedule(dim, lv, &all_roots);
        let event_prog = g.schedule(dim, lv, &low.events);
        let switch_prog = g.schedule(dim, lv, &low.switches);
        let mut const_roots: Vec<Id> = low.t0.first().copied().into_iter().collect();
        const_roots.extend(&low.inits);
        const_roots.extend(low.params.iter().map(|p| p.2));
        let const_prog = g.schedule(0, lv, &const_roots);
        let params = low.params.iter().map(|(n, l, _)| Param { name: n.clone(), value: f64::NAN, line: *l }).collect();
        let mut m = Model {
            sheet,
            live,
            values,
            low,
            state_names,
            events,
            rhs,
            all,
            event_prog,
            switch_prog,
            const_prog,
            jac: None,
            dfdt: None,
            helper_grad: None,
            grad_buf: Vec::new(),
            t0: 0.0,
            y0: vec![0.0; dim],
            params,
        };
        m.refresh_constants();
        m
    }

    /// The start time of every initial-value line.
    fn start_times(&self) -> Vec<f64> {
        let g = &self.low.graph;
        let roots = &self.low.t0;
        let mut p = g.schedule(0, &self.low.live, roots);
        let mut out = vec![0.0; roots.len()];
        p.eval(0.0, &[], &mut out);
        out
    }

    /// Recompute the start, the initial state and the parameter values.
    fn refresh_constants(&mut self) {
        let p = &mut self.const_prog;
        p.run_plain(0.0, &[]);
        let s = p.slots();
        let out = p.outputs();
        let dim = self.y0.len();
        let has_t0 = !self.low.t0.is_empty();
        let base = usize::from(has_t0);
        self.t0 = if has_t0 { s[out[0] as usize] } else { 0.0 };
        for (i, y) in self.y0.iter_mut().enumerate() {
            *y = s[out[base + i] as usize];
        }
        for (k, prm) in self.params.iter_mut().enumerate() {
            prm.value = s[out[base + dim + k] as usize];
        }
    }

    /// Lower and schedule again (after a change of the live set or of a
    /// folded parameter).
    fn recompile(&mut self) {
        let low = lower(&self.sheet, &self.live, &self.values);
        let sheet = self.sheet.clone();
        let names = std::mem::take(&mut self.state_names);
        let events = std::mem::take(&mut self.events);
        let live = std::mem::take(&mut self.live);
        let values = std::mem::take(&mut self.values);
        *self = Model::assemble(sheet, live, values, low, names, events);
    }

    /// The start of the run (the `t0` of the initial values).
    pub fn t0(&self) -> f64 {
        self.t0
    }

    /// The initial state, in state order.
    pub fn initial_state(&self) -> &[f64] {
        &self.y0
    }

    /// The independent variable: `t` unless a `dX/dT` line names another.
    pub fn independent(&self) -> &str {
        &self.sheet.indep
    }

    /// The parameters, in sheet order, with their current values.
    pub fn params(&self) -> &[Param] {
        &self.params
    }

    /// The names of the live parameters, in input order.
    pub fn live(&self) -> &[String] {
        &self.live
    }

    /// Make exactly these parameters live: they stay inputs of the compiled
    /// tapes instead of being folded, so [`set_param`](Self::set_param) on
    /// them is fast. Names that are not parameters are ignored. A live
    /// parameter is an independent input: its sheet expression gives only its
    /// starting value. Recompiles once.
    pub fn set_live(&mut self, names: &[&str]) {
        let mut live: Vec<String> = Vec::new();
        for n in names {
            let is_param = self.params.iter().any(|p| p.name == *n);
            if is_param && !live.iter().any(|l| l == n) {
                live.push(n.to_string());
            }
        }
        // Keep current values of parameters that stop or start being live.
        for p in &self.params {
            if self.live.contains(&p.name) || live.contains(&p.name) {
                self.values.insert(p.name.clone(), p.value);
            }
        }
        self.live = live;
        self.recompile();
    }

    /// Set a parameter's value. For a live parameter this writes one slot of
    /// each tape and costs no recompilation; for any other it recompiles.
    /// Parameters defined from this one follow it. Returns `false` when
    /// `name` is not a parameter.
    pub fn set_param(&mut self, name: &str, value: f64) -> bool {
        if !self.params.iter().any(|p| p.name == name) {
            return false;
        }
        self.values.insert(name.to_string(), value);
        match self.live.iter().position(|l| l == name) {
            Some(k) => {
                for p in [&mut self.rhs, &mut self.all, &mut self.event_prog, &mut self.switch_prog, &mut self.const_prog] {
                    p.set_live(k, value);
                }
                for p in [&mut self.jac, &mut self.dfdt, &mut self.helper_grad].into_iter().flatten() {
                    p.set_live(k, value);
                }
                if let Some(l) = self.low.live.get_mut(k) {
                    l.1 = value;
                }
                self.refresh_constants();
            }
            None => self.recompile(),
        }
        true
    }

    /// Set several parameters at once: the same model as
    /// [`set_param`](Self::set_param) on each in turn, with at most one
    /// recompilation. Returns the first name that is not a parameter (and
    /// then changes nothing).
    pub fn set_params<'a>(&mut self, values: &[(&'a str, f64)]) -> Result<(), &'a str> {
        if let Some((name, _)) = values.iter().find(|(n, _)| !self.params.iter().any(|p| p.name == *n)) {
            return Err(name);
        }
        let mut folded = false;
        for &(name, value) in values {
            if self.live.iter().any(|l| l == name) {
                self.set_param(name, value);
            } else {
                self.values.insert(name.to_string(), value);
                folded = true;
            }
        }
        if folded {
            self.recompile();
        }
        Ok(())
    }

    /// This model with parameter values replaced, made from its checked
    /// sheet in one lowering: the same model as a clone on which
    /// [`set_params`](Self::set_params) is called, without copying the
    /// compiled tapes first. Returns the first name that is not a parameter.
    pub fn with_params<'a>(&self, values: &[(&'a str, f64)]) -> Result<Model, &'a str> {
        if !self.live.is_empty() {
            let mut m = self.clone();
            m.set_params(values)?;
            return Ok(m);
        }
        if let Some((name, _)) = values.iter().find(|(n, _)| !self.params.iter().any(|p| p.name == *n)) {
            return Err(name);
        }
        let mut vals = self.values.clone();
        vals.extend(values.iter().map(|&(n, v)| (n.to_string(), v)));
        let low = lower(&self.sheet, &self.live, &vals);
        Ok(Model::assemble(self.sheet.clone(), Vec::new(), vals, low, self.state_names.clone(), self.events.clone()))
    }

    /// Evaluate every rate and then every helper in one call:
    /// `out[..dim]` gets the rates, `out[dim..]` the helpers in the order of
    /// [`Problem::helper_names`].
    pub fn eval_all(&mut self, t: f64, y: &[f64], out: &mut [f64]) {
        self.all.eval(t, y, out);
    }

    /// The tape that computes the rates (outputs in state order).
    pub fn rhs_program(&self) -> &Program {
        &self.rhs
    }

    /// The tape that computes rates then helpers (see [`eval_all`](Self::eval_all)).
    pub fn all_program(&self) -> &Program {
        &self.all
    }

    /// The tape that computes the event functions.
    pub fn event_program(&self) -> &Program {
        &self.event_prog
    }

    /// The tape that computes the switch functions.
    pub fn switch_program(&self) -> &Program {
        &self.switch_prog
    }

    /// The tape that computes the Jacobian, row-major (building it on first use).
    pub fn jacobian_program(&mut self) -> &Program {
        self.jac.get_or_insert_with(|| build_jacobian(&mut self.low))
    }

    /// The tape that computes `∂f/∂t` (building it on first use).
    pub fn time_derivative_program(&mut self) -> &Program {
        self.dfdt.get_or_insert_with(|| build_dfdt(&mut self.low))
    }

    /// The tape that computes the helpers' gradients, `n + 1` outputs per
    /// helper (`∂h_m/∂y_j`, then `∂h_m/∂t`), building it on first use; see
    /// [`Problem::helper_rates`].
    pub fn helper_gradient_program(&mut self) -> &Program {
        self.helper_grad.get_or_insert_with(|| build_helper_gradients(&mut self.low))
    }

    /// The helpers' rates along the solution from their gradients `grad`
    /// (the outputs of [`helper_gradient_program`](Self::helper_gradient_program)
    /// at `(t, y)`) and the states' rates `dy`: `∂h/∂t + Σ_j ∂h/∂y_j · dy_j`.
    pub fn helper_rates_from(&self, grad: &[f64], dy: &[f64], out: &mut [f64]) {
        let n = self.state_names.len();
        for (o, row) in out.iter_mut().zip(grad.chunks_exact(n + 1)) {
            *o = row[n] + row[..n].iter().zip(dy).map(|(g, d)| g * d).sum::<f64>();
        }
    }
}

fn build_jacobian(low: &mut Lowered) -> Program {
    let n = low.rates.len();
    let mut roots = vec![0; n * n];
    for j in 0..n {
        let var = low.graph.state(j);
        let d = low.graph.derivatives(&low.rates, var);
        for (i, &di) in d.iter().enumerate() {
            roots[i * n + j] = di;
        }
    }
    low.graph.schedule(n, &low.live, &roots)
}

/// The helpers' gradients: `n + 1` outputs per helper, `∂h_m/∂y_j` then `∂h_m/∂t`.
fn build_helper_gradients(low: &mut Lowered) -> Program {
    let n = low.rates.len();
    let helpers = low.helpers.clone();
    let mut roots = vec![0; helpers.len() * (n + 1)];
    for j in 0..=n {
        let var = if j < n { low.graph.state(j) } else { low.graph.time() };
        for (m, d) in low.graph.derivatives(&helpers, var).into_iter().enumerate() {
            roots[m * (n + 1) + j] = d;
        }
    }
    low.graph.schedule(n, &low.live, &roots)
}

fn build_dfdt(low: &mut Lowered) -> Program {
    let var = low.graph.time();
    let d = low.graph.derivatives(&low.rates, var);
    low.graph.schedule(low.rates.len(), &low.live, &d)
}

impl Problem for Model {
    fn dim(&self) -> usize {
        self.state_names.len()
    }

    fn state_names(&self) -> &[String] {
        &self.state_names
    }

    fn rhs(&mut self, t: f64, y: &[f64], dy: &mut [f64]) {
        self.rhs.eval(t, y, dy);
    }

    fn jacobian(&mut self, t: f64, y: &[f64], jac: &mut [f64]) -> bool {
        if self.jac.is_none() {
            self.jac = Some(build_jacobian(&mut self.low));
        }
        if let Some(p) = &mut self.jac {
            p.eval(t, y, jac);
        }
        true
    }

    fn time_derivative(&mut self, t: f64, y: &[f64], dfdt: &mut [f64]) -> bool {
        if self.dfdt.is_none() {
            self.dfdt = Some(build_dfdt(&mut self.low));
        }
        if let Some(p) = &mut self.dfdt {
            p.eval(t, y, dfdt);
        }
        true
    }

    fn helper_names(&self) -> &[String] {
        &self.low.helper_names
    }

    fn helpers(&mut self, t: f64, y: &[f64], out: &mut [f64]) {
        let dim = self.state_names.len();
        self.all.eval_from(t, y, dim, out);
    }

    fn helper_rates(&mut self, t: f64, y: &[f64], dy: &[f64], out: &mut [f64]) -> bool {
        let n = self.state_names.len();
        let grad = self.helper_grad.get_or_insert_with(|| build_helper_gradients(&mut self.low));
        let mut buf = std::mem::take(&mut self.grad_buf);
        buf.resize(out.len() * (n + 1), 0.0);
        grad.eval(t, y, &mut buf);
        self.helper_rates_from(&buf, dy, out);
        self.grad_buf = buf;
        true
    }

    fn events(&self) -> &[EventSpec] {
        &self.events
    }

    fn event_values(&mut self, t: f64, y: &[f64], out: &mut [f64]) {
        self.event_prog.eval(t, y, out);
    }

    fn switch_count(&self) -> usize {
        self.low.switches.len()
    }

    fn switch_values(&mut self, t: f64, y: &[f64], out: &mut [f64]) {
        self.switch_prog.eval(t, y, out);
    }

    fn explain_nonfinite(&mut self, t: f64, y: &[f64]) -> Option<NonFiniteCause> {
        let dim = self.state_names.len();
        if let Some(i) = y.iter().take(dim).position(|v| !v.is_finite()) {
            return Some(NonFiniteCause { name: self.state_names[i].clone(), what: "the state itself is not a finite number".into() });
        }
        if !t.is_finite() {
            return Some(NonFiniteCause { name: self.sheet.indep.clone(), what: "the independent variable is not a finite number".into() });
        }
        self.all.run_plain(t, y);
        let p = &self.all;
        let s = p.slots();
        let out = p.outputs();
        // The first helper in evaluation order, then the first rate, with its formula.
        let named = self
            .low
            .helper_order
            .iter()
            .map(|&h| {
                let name = &self.low.helper_names[h];
                (name.clone(), out[dim + h], self.sheet.defs.iter().find(|d| d.name == *name).map(|d| &d.expr))
            })
            .chain(self.sheet.states.iter().enumerate().map(|(i, st)| {
                let expr = match &st.rate {
                    Rate::Expr(e) => Some(e),
                    Rate::Next(_) => None,
                };
                (rate_name(&st.name, &self.sheet.indep), out[i], expr)
            }))
            .find(|(_, slot, _)| !s[*slot as usize].is_finite())?;
        // A parameter with no finite value is named with its line: folded
        // into the formula, it would look like an overflow there.
        if let Some(prm) = named.2.and_then(|e| self.bad_param_in(e)) {
            let what = if prm.value.is_nan() { "not a number (NaN, as 0/0 gives)" } else { "infinite (as 1/0 gives)" };
            return Some(NonFiniteCause { name: named.0, what: format!("the parameter `{}` of line {} is {what}", prm.name, prm.line) });
        }
        Some(NonFiniteCause { name: named.0, what: first_cause(p, named.1 as usize) })
    }
}

impl Model {
    /// The first parameter with no finite value that `expr` uses, directly
    /// or through other definitions.
    fn bad_param_in(&self, expr: &Expr) -> Option<&Param> {
        let mut seen: Vec<&str> = Vec::new();
        let mut todo = vec![expr];
        while let Some(e) = todo.pop() {
            for n in &e.names {
                if seen.contains(&n.name.as_str()) {
                    continue;
                }
                seen.push(&n.name);
                if let Some(p) = self.params.iter().find(|p| p.name == n.name && !p.value.is_finite()) {
                    return Some(p);
                }
                if let Some(d) = self.sheet.defs.iter().find(|d| d.name == n.name) {
                    todo.push(&d.expr);
                }
            }
        }
        None
    }
}

/// How a rate is named in messages: `dh/dt`.
fn rate_name(state: &str, indep: &str) -> String {
    format!("d{state}/d{indep}")
}

/// Why slot `target` of a run program is not finite: the first instruction
/// feeding it that made a non-finite value out of finite operands.
fn first_cause(p: &Program, target: usize) -> String {
    let s = p.slots();
    let first = p.first_inst_slot();
    let mut feeds = vec![false; s.len()];
    if let Some(f) = feeds.get_mut(target) {
        *f = true;
    }
    for slot in (first..s.len()).rev() {
        if feeds[slot] {
            let i = p.insts()[slot - first];
            feeds[i.a as usize] = true;
            feeds[i.b as usize] = true;
        }
    }
    if let Some(k) = (1 + p.dim()..first).find(|&k| feeds[k] && !s[k].is_finite()) {
        return if k < 1 + p.dim() + p.n_live() {
            format!("the parameter {} is not a finite number", p.live_names()[k - 1 - p.dim()])
        } else {
            "a constant in the sheet is not a finite number".into()
        };
    }
    for slot in first..s.len() {
        let i = p.insts()[slot - first];
        let (x, y) = (s[i.a as usize], s[i.b as usize]);
        if feeds[slot] && !s[slot].is_finite() && x.is_finite() && y.is_finite() {
            return describe(i.op, x, y, i.c);
        }
    }
    "a value that is not a finite number".into()
}

fn describe(op: Op, x: f64, y: f64, c: f64) -> String {
    use Op::*;
    let s = match op {
        Sqrt => "sqrt of a negative number",
        Ln | Log10 if x == 0.0 => "log of zero",
        Ln | Log10 => "log of a negative number",
        Div if y == 0.0 => "division by zero",
        CDiv if x == 0.0 => "division by zero",
        DivC if c == 0.0 => "division by zero",
        Rem => "remainder after division by zero",
        Pow | PowC | CPow => {
            let (base, ex) = match op {
                Pow => (x, y),
                PowC => (x, c),
                _ => (c, x),
            };
            if base == 0.0 && ex < 0.0 {
                "zero raised to a negative power"
            } else if base < 0.0 && ex.fract() != 0.0 {
                "a negative number raised to a fractional power"
            } else {
                "overflow: the power is too large for a double-precision number"
            }
        }
        Asin | Acos => "asin or acos of a number outside -1 … 1",
        Acosh => "acosh of a number below 1",
        Atanh => "atanh of a number outside -1 … 1",
        _ => "overflow: the value is too large for a double-precision number",
    };
    s.to_string()
}
