//! Event crossings: the sign of each event function `g = lhs − rhs` is
//! followed across the samples of every accepted step, and each change is
//! located on the continuous extension. Two crossings closer together than
//! the samples (a dip across zero and back) are found from the parabola
//! through three samples of one sign.

use super::step::{sign, StepView};
use crate::problem::{Crossing, EventAction, EventSpec, Problem};
use crate::solve::locate::golden_max;
use crate::solve::{Diagnostic, EventHit, Level};

/// A dip counts as predicted when the parabola's turning point, in units of
/// the sample spacing from the middle sample, lies within the three samples'
/// span (|x| ≤ 1) and its value is across zero, or within a quarter of the
/// middle sample's distance from zero of it (the parabola underestimates a
/// narrow dip).
const DIP_REACH: f64 = 0.25;

/// The event state of a run.
pub(super) struct Events {
    specs: Vec<EventSpec>,
    /// `g` at the current point.
    now: Vec<f64>,
    /// The side of zero each `g` was last seen on (`None` while it is 0).
    side: Vec<Option<bool>>,
    hits: Vec<EventHit>,
    max_events: usize,
    /// More crossings than `max_events` were dropped.
    capped: bool,
    /// An event function dipped across zero and back between two samples:
    /// the next step is held to half this one.
    dip: bool,
    t0: f64,
    dir: f64,
}

impl Events {
    /// The events of `problem` at the start `(t0, y0)`.
    pub fn new(problem: &mut dyn Problem, t0: f64, y0: &[f64], max_events: usize, dir: f64) -> Self {
        let specs = problem.events().to_vec();
        let mut now = vec![0.0; specs.len()];
        problem.event_values(t0, y0, &mut now);
        let side = now.iter().map(|g| (*g != 0.0).then(|| sign(*g))).collect();
        Events { specs, now, side, hits: Vec::new(), max_events, capped: false, dip: false, t0, dir }
    }

    /// Whether the last step saw a dip (and forget it).
    pub fn take_dip(&mut self) -> bool {
        std::mem::take(&mut self.dip)
    }

    /// The crossings recorded, in time order.
    pub fn into_hits(self) -> Vec<EventHit> {
        self.hits
    }

    /// Record the crossings in the step. Returns the stop event and its time
    /// when one ends the run in this step.
    pub fn in_step(&mut self, view: &StepView, problem: &mut dyn Problem, diagnostics: &mut Vec<Diagnostic>) -> Option<(usize, f64)> {
        let ne = self.specs.len();
        let dim = view.y_new.len();
        let mut ys = vec![0.0; dim];
        // Samples: (t, g) with the start of the step first.
        let mut ts = vec![view.t];
        let mut gs = vec![self.now.clone()];
        for tau in view.sample_times() {
            view.dense_at(tau, &mut ys);
            let mut g = vec![0.0; ne];
            problem.event_values(tau, &ys, &mut g);
            ts.push(tau);
            gs.push(g);
        }
        let mut found: Vec<(f64, usize)> = Vec::new();
        for i in 0..ne {
            let crossing = self.specs[i].crossing;
            let mut last = self.side[i];
            let mut last_j = 0;
            let mut dip_done = 0;
            for j in 1..ts.len() {
                let gj = gs[j][i];
                if !gj.is_finite() {
                    continue;
                }
                if j + 1 < ts.len() && j > dip_done && gj != 0.0 {
                    let (ga, gc) = (gs[j - 1][i], gs[j + 1][i]);
                    if let Some(s) = dip_predicted(ga, gj, gc) {
                        let (ta, tc) = (ts[j - 1], ts[j + 1]);
                        dip_done = j + 1;
                        if let Some((tm, gm)) = turning_point_across(view, problem, i, ne, s, ta, tc) {
                            // Two crossings: across to the turning point and back.
                            for (x0, g0, x1, g1) in [(ta, ga, tm, gm), (tm, gm, tc, gc)] {
                                let (_, tb) = view.root(problem, event_values, i, ne, x0, x1, g0, g1);
                                if fires(crossing, g1 > 0.0) && tb != self.t0 {
                                    found.push((tb, i));
                                }
                            }
                            // Resolve the next steps more finely.
                            self.dip = true;
                        }
                    }
                }
                if gj == 0.0 {
                    continue;
                }
                let now = sign(gj);
                match last {
                    None => {}
                    Some(was) if was != now => {
                        let (ga, ta) = (gs[last_j][i], ts[last_j]);
                        let ga = if ga == 0.0 { if was { f64::MIN_POSITIVE } else { -f64::MIN_POSITIVE } } else { ga };
                        let (_, tb) = view.root(problem, event_values, i, ne, ta, ts[j], ga, gj);
                        if fires(crossing, now) && tb != self.t0 {
                            found.push((tb, i));
                        }
                    }
                    _ => {}
                }
                last = Some(now);
                last_j = j;
            }
            self.side[i] = last;
        }
        found.sort_by(|a, b| ((a.0 - b.0) * self.dir).total_cmp(&0.0));
        found.dedup();
        let stop = self.record(view, problem, &found, diagnostics);
        if stop.is_none() {
            problem.event_values(view.t_next, view.y_new, &mut self.now);
        }
        stop
    }

    /// Record the crossings `found` (in time order) up to the first stop
    /// event, within the cap; returns the stop event and its time.
    fn record(&mut self, view: &StepView, problem: &mut dyn Problem, found: &[(f64, usize)], diagnostics: &mut Vec<Diagnostic>) -> Option<(usize, f64)> {
        let mut stop: Option<(usize, f64)> = None;
        let mut yv = vec![0.0; view.y_new.len()];
        let n_helpers = problem.helper_names().len();
        for &(te, i) in found {
            if let Some((_, ts)) = stop {
                if (te - ts) * self.dir > 0.0 {
                    break;
                }
            }
            let is_stop = self.specs[i].action == EventAction::Stop;
            if self.hits.len() >= self.max_events && !is_stop {
                if !self.capped {
                    self.capped = true;
                    diagnostics.push(Diagnostic {
                        level: Level::Warning,
                        code: "max-events",
                        message: format!("more than {} event crossings; later ones are not recorded", self.max_events),
                        t: Some(te),
                    });
                }
                continue;
            }
            view.dense_at(te, &mut yv);
            let mut helpers = vec![0.0; n_helpers];
            if n_helpers > 0 {
                problem.helpers(te, &yv, &mut helpers);
            }
            self.hits.push(EventHit { index: i, name: self.specs[i].name.clone(), t: te, states: yv.clone(), helpers });
            if is_stop && stop.is_none() {
                stop = Some((i, te));
            }
        }
        stop
    }
}

fn event_values(problem: &mut dyn Problem, t: f64, y: &[f64], out: &mut [f64]) {
    problem.event_values(t, y, out);
}

/// A dip between samples that the samples do not show (two crossings close
/// together): the parabola through three samples `ga, gb, gc` of one sign
/// predicts a turning point near zero within their span. Returns the sign
/// `s` that makes `s·g` negative there (so that a dip of `|g|` is a peak of
/// `s·g`).
fn dip_predicted(ga: f64, gb: f64, gc: f64) -> Option<f64> {
    if !(ga.is_finite() && gc.is_finite() && sign(ga) == sign(gb) && sign(gc) == sign(gb) && ga != 0.0 && gc != 0.0) {
        return None;
    }
    let s = if gb > 0.0 { -1.0 } else { 1.0 };
    let (a, b, c) = (s * ga, s * gb, s * gc);
    let curv = a - 2.0 * b + c;
    let x_v = if curv < 0.0 { (a - c) / (2.0 * curv) } else { f64::INFINITY };
    let p_v = b - (c - a) * (c - a) / (8.0 * curv);
    (x_v.abs() <= 1.0 && (p_v > 0.0 || p_v > DIP_REACH * b)).then_some(s)
}

/// The dip search: the turning point of `s·g_i` between `ta` and `tc` by
/// golden-section search on the continuous extension, with `g_i` there,
/// when it lies across zero.
#[allow(clippy::too_many_arguments)]
fn turning_point_across(view: &StepView, problem: &mut dyn Problem, i: usize, ne: usize, s: f64, ta: f64, tc: f64) -> Option<(f64, f64)> {
    let mut yv = vec![0.0; view.y_new.len()];
    let mut out = vec![0.0; ne];
    let (tm, vm) = golden_max(
        |tau| {
            view.dense_at(tau, &mut yv);
            problem.event_values(tau, &yv, &mut out);
            s * out[i]
        },
        ta.min(tc),
        ta.max(tc),
    );
    (vm > 0.0).then_some((tm, s * vm))
}

fn fires(c: Crossing, rising: bool) -> bool {
    match c {
        Crossing::Rising => rising,
        Crossing::Falling => !rising,
        Crossing::Either => true,
    }
}
