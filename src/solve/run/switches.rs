//! Switches: the points where the rates change branch (`heaviside`, `floor`,
//! `min`, …). A step that crosses one is aimed to end on its near side, so
//! that every stage sees one branch of the rates, and the next step starts a
//! few ulps past it, on the far side.

use super::step::{sign, StepView};
use crate::problem::Problem;

/// A crossing found within this distance of a step's start (relative to the
/// step, plus a few ulps of `t`) lies at the start: the step is not aimed at
/// it again. The same distance before the end of a step already aimed at a
/// switch means the aim was good.
const LANDING_GUARD: f64 = 1e-9;
/// The hop past a switch reaches at most this fraction of the step beyond
/// the step's end on its continuous extension; a crossing that does not show
/// within it is left to the next step.
const HOP_REACH: f64 = 1e-6;

/// The switch values at the current point.
pub(super) struct Switches {
    now: Vec<f64>,
    to: f64,
    dir: f64,
}

impl Switches {
    /// The switches of `problem` at the start `(t0, y0)`.
    pub fn new(problem: &mut dyn Problem, t0: f64, y0: &[f64], to: f64, dir: f64) -> Self {
        let mut now = vec![0.0; problem.switch_count()];
        problem.switch_values(t0, y0, &mut now);
        Switches { now, to, dir }
    }

    /// The run moved to `(t, y)`.
    pub fn update(&mut self, problem: &mut dyn Problem, t: f64, y: &[f64]) {
        problem.switch_values(t, y, &mut self.now);
    }

    /// Whether some switch has another sign at `(t_next, y_new)` than at the
    /// current point.
    pub fn crosses(&self, problem: &mut dyn Problem, t_next: f64, y_new: &[f64]) -> bool {
        let mut s = vec![0.0; self.now.len()];
        problem.switch_values(t_next, y_new, &mut s);
        s.iter().zip(&self.now).any(|(a, b)| *a != 0.0 && *b != 0.0 && sign(*a) != sign(*b))
    }

    /// Where the step should end instead: the near side of the first switch
    /// crossing in it, and the switch's index; `None` when it crosses none,
    /// or the crossing lies at the very start of the step, or (`landing`: the
    /// step was already aimed at a switch) at its very end.
    pub fn landing(&self, view: &StepView, problem: &mut dyn Problem, landing: bool) -> Option<(f64, usize)> {
        let ns = self.now.len();
        let mut ys = vec![0.0; view.y_new.len()];
        let mut prev = self.now.clone();
        let mut t_prev = view.t;
        let mut s = vec![0.0; ns];
        let guard = LANDING_GUARD * view.h.abs() + 8.0 * f64::EPSILON * view.t.abs().max(view.t_next.abs());
        for tau in view.sample_times() {
            view.dense_at(tau, &mut ys);
            problem.switch_values(tau, &ys, &mut s);
            let mut best: Option<(f64, usize)> = None;
            for k in 0..ns {
                if prev[k] != 0.0 && s[k] != 0.0 && sign(prev[k]) != sign(s[k]) && s[k].is_finite() && prev[k].is_finite() {
                    let (ta, _) = view.root(problem, switch_values, k, ns, t_prev, tau, prev[k], s[k]);
                    if best.is_none_or(|(b, _)| (ta - b) * self.dir < 0.0) {
                        best = Some((ta, k));
                    }
                }
            }
            if let Some((ta, k)) = best {
                let near_start = ((ta - view.t) * self.dir).abs() <= guard;
                let near_end = ((view.t_next - ta) * self.dir) <= guard;
                if near_start || (landing && near_end) || ta == view.t_next {
                    return None;
                }
                return Some((ta, k));
            }
            prev.copy_from_slice(&s);
            t_prev = tau;
        }
        None
    }

    /// After a step that landed on the near side of switch `k`: the first
    /// point past the crossing on the step's continuous extension
    /// (extrapolated by at most [`HOP_REACH`] of the step), found by doubling
    /// the distance from the step's end and then bisecting, with the state
    /// there. `None` when the end is already across or no crossing shows
    /// that close.
    pub fn hop(&self, k: usize, view: &StepView, problem: &mut dyn Problem) -> Option<(f64, Vec<f64>)> {
        let ns = self.now.len();
        let (h, t_next) = (view.h, view.t_next);
        let mut s = vec![0.0; ns];
        let old = sign(self.now[k]);
        // Across: strictly on the other side. A switch value of exactly zero
        // is not across, whichever way it goes: `heaviside(0)` is 1, so a
        // falling switch that ends a step on zero still has the near branch
        // there.
        let across = |v: f64| v != 0.0 && sign(v) != old;
        problem.switch_values(t_next, view.y_new, &mut s);
        if across(s[k]) || (t_next - self.to) * self.dir >= 0.0 {
            return None;
        }
        let (mut ga, mut ta) = (s[k], t_next);
        let mut ys = vec![0.0; view.y_new.len()];
        // The extension past the step's end: no shortcut to `y_new` there.
        let beyond = StepView { t_next: f64::NAN, ..*view };
        let mut d = 4.0 * f64::EPSILON * t_next.abs().max(h.abs());
        while d <= HOP_REACH * h.abs() {
            let tau = t_next + self.dir * d;
            if (tau - self.to) * self.dir > 0.0 {
                return None;
            }
            beyond.dense_at(tau, &mut ys);
            problem.switch_values(tau, &ys, &mut s);
            if s[k].is_finite() && across(s[k]) {
                let gb = s[k];
                // A zero counts on the near side (sign() is false for 0).
                let ga = if ga == 0.0 { if old { f64::MIN_POSITIVE } else { -f64::MIN_POSITIVE } } else { ga };
                let (_, mut tb) = beyond.root(problem, switch_values, k, ns, ta, tau, ga, gb);
                beyond.dense_at(tb, &mut ys);
                problem.switch_values(tb, &ys, &mut s);
                if !across(s[k]) {
                    tb = tau;
                    beyond.dense_at(tb, &mut ys);
                }
                return Some((tb, ys));
            }
            if s[k].is_finite() {
                ga = s[k];
                ta = tau;
            }
            d *= 2.0;
        }
        None
    }
}

fn switch_values(problem: &mut dyn Problem, t: f64, y: &[f64], out: &mut [f64]) {
    problem.switch_values(t, y, out);
}
