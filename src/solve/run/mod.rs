//! The driver: [`solve`] and its step loop. Each concern of a run keeps its
//! own state in a part of its own, and reads the step just taken through one
//! [`StepView`] (where it starts, its size, the new state and the stepper's
//! continuous extension; in [`step`]):
//! - [`validate`]: the settings and inputs, checked before the run;
//! - [`output`]: the output points (every step, thinned, or the `at` times);
//! - [`events`]: event crossings, including two close together (a dip);
//! - [`switches`]: where a step must end to land on a switch, and the hop across;
//! - [`extrema`]: the peaks and troughs of the states and helpers;
//! - [`watch`]: the stiffness test, the stability of fixed steps and the blow-up test;
//! - [`failure`]: the errors a run can end with, explained.
//!
//! The loop here ([`Driver::run`]) chooses where each step ends, attempts it,
//! accepts or rejects it, and hands an accepted step to the parts. It owns the
//! stepper as a `Box<dyn Stepper>` so that a switching policy can swap the
//! method mid-run.

mod events;
mod extrema;
mod failure;
mod output;
mod step;
mod switches;
mod validate;
mod watch;

pub use validate::invalid;

use self::events::Events;
use self::extrema::Extrema;
use self::output::Output;
use self::step::StepView;
use self::switches::Switches;
use self::watch::{Growth, Stiffness};
use super::control::{initial_step, PiController};
use super::methods::{method, MethodInfo};
use super::stepper::{inf_norm, min_of, Attempt, Stats, StepFault, Stepper, Tolerance};
use super::{num, Diagnostic, Level, Run, Settings, SolveError, Status, StepReport, Switching};
use crate::problem::Problem;

/// States larger than this count as a blow-up at once.
const HUGE: f64 = 1e150;
/// A failed attempt (non-finite rates, a singular matrix, Newton failing)
/// gives no error estimate to size the retry: it is retried at a quarter of
/// the step, which reaches the scale of a singularity or a narrow valid
/// range in a few retries (common practice, no source).
const FAULT_SHRINK: f64 = 0.25;
/// Failed attempts in a row before an adaptive run gives up. At
/// [`FAULT_SHRINK`] each, 60 shrink the step by 4⁶⁰ ≈ 1e36, past the
/// resolution of any `t` that started from a sane step, so the cap only
/// bounds the work when the rates fail at every step size.
const MAX_FAULTS: u32 = 60;
/// Times in a row a step aimed at a switch may be aimed again when its
/// re-attempt shows the crossing earlier still (each re-aim follows the newer
/// continuous extension, which moves the root by its own error); after that
/// the step is taken as it is, so that a switch that keeps moving cannot
/// hold the run.
const MAX_RELANDS: u32 = 4;
/// A fixed step whose end comes within this fraction of a step of `to`
/// ends on `to`, so that rounding in `t0 + k·h` never leaves a sliver of a
/// last step.
const FIXED_END_SNAP: f64 = 1e-12;
/// The stability of fixed steps is checked this many times per run: at the
/// start and at each further part of the steps, so that a mode that turns
/// unstable later on is seen too, at a few Jacobians per run.
const FIXED_CHECKS: u64 = 4;

/// Solve `y' = f(t, y)` from `(t0, y0)` to `settings.to` with the method named
/// in `settings`. Returns `Err` only for invalid settings or inputs; a run that
/// fails on the way comes back as `Ok` with [`Status::Failed`] and the
/// trajectory up to the failure.
pub fn solve(problem: &mut dyn Problem, t0: f64, y0: &[f64], settings: &Settings) -> Result<Run, SolveError> {
    let (m, tol, notes, max_output) = validate::validate(problem, t0, y0, settings)?;
    let capped;
    let settings = if max_output < settings.max_output {
        capped = Settings { max_output, ..settings.clone() };
        &capped
    } else {
        settings
    };
    let mut d = Driver::new(problem, t0, y0, settings, m, tol);
    d.diagnostics.extend(notes);
    d.run();
    Ok(d.finish())
}

/// What the loop does after one attempt.
enum Flow {
    /// Attempt again from the same point (with a new `h` or a new end).
    Retry,
    /// The step was accepted; go on.
    Go,
    /// The run is over (its status is set).
    End,
}

/// Where the next step ends, and what decides it.
struct Pace {
    /// The fixed step, for a fixed-step run.
    fixed: Option<f64>,
    /// The adaptive step size the controller proposes.
    h_abs: f64,
    /// The largest step.
    h_max: f64,
    /// Run the fixed-step stability check every this many fixed steps.
    check_every: Option<u64>,
    /// Fixed steps taken on the grid `t0 + k·h` (a step that lands on a
    /// switch does not count).
    fixed_count: u64,
    /// Failed attempts in a row.
    faults: u32,
    /// The step is aimed at a switch: its end, and the switch.
    landing: Option<(f64, usize)>,
    /// Re-aims of the current landing.
    relands: u32,
}

impl Pace {
    /// The end of the next step from `t`.
    fn step_end(&self, t: f64, t0: f64, to: f64, dir: f64) -> f64 {
        if let Some((target, _)) = self.landing {
            target
        } else if let Some(step) = self.fixed {
            let tn = t0 + dir * step * (self.fixed_count + 1) as f64;
            if (tn - to) * dir >= -FIXED_END_SNAP * step {
                to
            } else {
                tn
            }
        } else {
            let tn = t + dir * min_of(self.h_abs, self.h_max);
            if (tn - to) * dir >= 0.0 {
                to
            } else {
                tn
            }
        }
    }

    /// The fixed step, when its stability check is due before this step.
    fn stability_check_due(&self) -> Option<f64> {
        match (self.fixed, self.check_every) {
            (Some(step), Some(every)) if self.fixed_count % every == 0 => Some(step),
            _ => None,
        }
    }
}

struct Driver<'a> {
    problem: &'a mut dyn Problem,
    settings: &'a Settings,
    tol: Tolerance,
    method: &'static MethodInfo,
    stepper: Box<dyn Stepper>,
    switching: Option<Box<dyn Switching>>,
    ctrl: PiController,
    dim: usize,
    dir: f64,
    t0: f64,
    t: f64,
    y: Vec<f64>,
    stats: Stats,
    diagnostics: Vec<Diagnostic>,
    status: Option<Status>,
    output: Output<'a>,
    events: Option<Events>,
    switches: Option<Switches>,
    extrema: Option<Extrema>,
    stiffness: Stiffness,
    growth: Growth,
}

impl<'a> Driver<'a> {
    fn new(problem: &'a mut dyn Problem, t0: f64, y0: &[f64], settings: &'a Settings, m: &'static MethodInfo, tol: Tolerance) -> Self {
        let dim = y0.len();
        let dir = if settings.to >= t0 { 1.0 } else { -1.0 };
        let switching = m.switching.map(|f| f());
        let mut stepper = m.build(dim);
        stepper.set_stiffness_estimate(switching.is_some() || m.stability_limit() > 0.0);
        let output = Output::new(&mut *problem, t0, y0, settings, dir);
        let extrema = settings.extrema.then(|| Extrema::new(&mut *problem, t0, y0, dir));
        let events = (!problem.events().is_empty()).then(|| Events::new(&mut *problem, t0, y0, settings.max_events, dir));
        let switches = (problem.switch_count() > 0).then(|| Switches::new(&mut *problem, t0, y0, settings.to, dir));
        Driver {
            ctrl: PiController::new(m.error_order(), m.step_control()),
            stiffness: Stiffness::new(m.stability_limit()),
            growth: Growth::new(y0),
            problem,
            settings,
            tol,
            method: m,
            stepper,
            switching,
            dim,
            dir,
            t0,
            t: t0,
            y: y0.to_vec(),
            stats: Stats::default(),
            diagnostics: Vec::new(),
            status: None,
            output,
            events,
            switches,
            extrema,
        }
    }

    fn fail(&mut self, e: SolveError) {
        self.diagnostics.push(Diagnostic { level: Level::Error, code: e.code(), message: e.to_string(), t: failure::failure_time(&e) });
        self.status = Some(Status::Failed(e));
    }

    /// The smallest step that `t` can resolve here.
    fn h_min(&self) -> f64 {
        16.0 * f64::EPSILON * self.t.abs().max((self.settings.to - self.t0).abs() * 1e-12).max(f64::MIN_POSITIVE)
    }

    /// The step size collapsed: a blow-up when the solution was growing,
    /// else a step too small.
    fn collapse(&mut self, h: f64) {
        let e = if self.growth.growing(&self.y) {
            SolveError::BlowUp { t: self.t, magnitude: inf_norm(&self.y) }
        } else {
            SolveError::StepSizeTooSmall { t: self.t, h }
        };
        self.fail(e);
    }

    /// The first step: the fixed one, the user's first step, or the
    /// automatic initial step (whose `f(t0, y0)` seeds the stepper).
    fn pace(&mut self) -> Pace {
        let span = (self.settings.to - self.t0).abs();
        let fixed = self.settings.step;
        let h_max = self.settings.max_step.unwrap_or(span).min(span);
        let mut h_abs = match (fixed, self.settings.first_step) {
            (Some(h), _) => h,
            (None, Some(h)) => h.min(h_max),
            (None, None) => {
                let mut f0 = vec![0.0; self.dim];
                let h = initial_step(&mut *self.problem, self.t, &self.y, self.dir, self.method.family.order(), &self.tol, h_max, &mut f0, &mut self.stats);
                self.stepper.seed_slope(&f0);
                h
            }
        };
        if !(h_abs > 0.0) {
            h_abs = h_max;
        }
        let check_every = fixed.map(|h| ((span / h).ceil().min(1e15) as u64).div_ceil(FIXED_CHECKS).max(1));
        Pace { fixed, h_abs, h_max, check_every, fixed_count: 0, faults: 0, landing: None, relands: 0 }
    }

    /// The step loop: choose the step's end, attempt it, then reject it
    /// (fault or error), aim it at a switch, or accept it.
    fn run(&mut self) {
        let to = self.settings.to;
        if self.t == to {
            self.status = Some(Status::Finished);
            return;
        }
        let mut pace = self.pace();
        let mut y_new = vec![0.0; self.dim];
        while self.status.is_none() {
            if self.stats.steps >= self.settings.max_steps {
                let e = SolveError::MaxSteps { t: self.t, steps: self.stats.steps };
                self.fail(e);
                break;
            }
            if let Some(step) = pace.stability_check_due() {
                watch::check_fixed_stability(&mut *self.problem, self.method, self.t, &self.y, step, &mut self.stats, &mut self.diagnostics);
            }
            let t_next = pace.step_end(self.t, self.t0, to, self.dir);
            let h = t_next - self.t;
            if h == 0.0 {
                // The step is below the resolution of t.
                self.collapse(h);
                break;
            }
            let res = self.stepper.attempt(&mut *self.problem, self.t, &self.y, h, &self.tol, &mut y_new, &mut self.stats);
            let flow = match res {
                Err(fault) => self.on_fault(&mut pace, fault, h),
                Ok(att) => self.on_attempt(&mut pace, att, h, t_next, &mut y_new),
            };
            if let Flow::End = flow {
                break;
            }
        }
    }

    /// A failed attempt: a fixed step fails the run; an adaptive one is
    /// retried smaller, up to [`MAX_FAULTS`] times in a row.
    fn on_fault(&mut self, pace: &mut Pace, fault: StepFault, h: f64) -> Flow {
        self.stats.rejected += 1;
        pace.faults += 1;
        pace.landing = None;
        if pace.fixed.is_some() {
            let e = match fault {
                StepFault::NonFinite => failure::explain_nonfinite(&mut *self.problem, self.t, &self.y, h, &mut self.stats),
                _ => SolveError::StepFailed { t: self.t, h, fault },
            };
            self.fail(e);
            return Flow::End;
        }
        pace.h_abs = h.abs() * FAULT_SHRINK;
        if pace.h_abs < self.h_min() || pace.faults > MAX_FAULTS {
            if self.growth.growing(&self.y) || inf_norm(&self.y) > HUGE {
                self.collapse(h);
            } else {
                let e = match fault {
                    StepFault::NonFinite => failure::explain_nonfinite(&mut *self.problem, self.t, &self.y, h, &mut self.stats),
                    _ => SolveError::StepSizeTooSmall { t: self.t, h },
                };
                self.fail(e);
            }
            return Flow::End;
        }
        Flow::Retry
    }

    /// An attempt that produced a state: reject it on its error, aim it at a
    /// switch it crosses, or accept it.
    fn on_attempt(&mut self, pace: &mut Pace, att: Attempt, h: f64, t_next: f64, y_new: &mut Vec<f64>) -> Flow {
        let err = if pace.fixed.is_some() { None } else { att.error };
        if let Some(e) = err.filter(|e| *e > 1.0) {
            return self.on_rejected(pace, e, h, t_next, y_new);
        }
        pace.faults = 0;
        let needs_dense = self.switches.is_some() || self.events.is_some() || self.extrema.is_some() || self.settings.at.is_some();
        if needs_dense {
            self.stepper.prepare_dense(&mut *self.problem, &mut self.stats);
        }
        if pace.relands < MAX_RELANDS && self.aim_at_switch(pace, h, t_next, y_new) {
            return Flow::Retry;
        }
        let landed = pace.landing.take();
        pace.relands = 0;
        self.stepper.accept();
        self.stats.steps += 1;
        if pace.fixed.is_some() && landed.is_none() {
            pace.fixed_count += 1;
        }
        if let Flow::End = self.accept(h, t_next, y_new, landed) {
            return Flow::End;
        }
        if let Some(e) = err {
            if landed.is_none() {
                pace.h_abs = h.abs() * self.ctrl.accepted(e, h);
            }
            if self.events.as_mut().is_some_and(Events::take_dip) {
                pace.h_abs = pace.h_abs.min(0.5 * h.abs());
            }
        }
        self.review(h, att.stiffness);
        if self.status.is_some() {
            Flow::End
        } else {
            Flow::Go
        }
    }

    /// An error above 1: retry smaller, or aimed at the switch the step
    /// crossed, which is most often why it failed.
    fn on_rejected(&mut self, pace: &mut Pace, e: f64, h: f64, t_next: f64, y_new: &[f64]) -> Flow {
        self.stats.rejected += 1;
        if let (Some(sw), None) = (self.switches.as_ref(), pace.landing) {
            if sw.crosses(&mut *self.problem, t_next, y_new) {
                self.stepper.prepare_dense(&mut *self.problem, &mut self.stats);
                let view = StepView { t: self.t, h, t_next, y_new, stepper: &*self.stepper };
                if let Some(target) = sw.landing(&view, &mut *self.problem, false) {
                    pace.landing = Some(target);
                    return Flow::Retry;
                }
            }
        }
        pace.landing = None;
        pace.h_abs = h.abs() * self.ctrl.rejected(e);
        if pace.h_abs < self.h_min() {
            self.collapse(h);
            return Flow::End;
        }
        Flow::Retry
    }

    /// When the step crosses a switch, aim it (again) to end on the near side
    /// of the first crossing, so that every stage sees one branch of the
    /// rates; the attempt counts as rejected.
    fn aim_at_switch(&mut self, pace: &mut Pace, h: f64, t_next: f64, y_new: &[f64]) -> bool {
        let Some(sw) = self.switches.as_ref() else { return false };
        let view = StepView { t: self.t, h, t_next, y_new, stepper: &*self.stepper };
        let Some(target) = sw.landing(&view, &mut *self.problem, pace.landing.is_some()) else { return false };
        self.stats.rejected += 1;
        if pace.landing.is_some() {
            pace.relands += 1;
        }
        pace.landing = Some(target);
        true
    }

    /// Hand the accepted step to the parts (events, output, extrema), then
    /// move to its end: the stop event's point, the far side of the switch
    /// it landed on, or its end.
    fn accept(&mut self, h: f64, t_next: f64, y_new: &mut Vec<f64>, landed: Option<(f64, usize)>) -> Flow {
        let view = StepView { t: self.t, h, t_next, y_new, stepper: &*self.stepper };
        let stop = match self.events.as_mut() {
            Some(ev) => ev.in_step(&view, &mut *self.problem, &mut self.diagnostics),
            None => None,
        };
        let t_end = stop.map(|(_, ts)| ts).unwrap_or(t_next);
        // The state where the step ends: at a stop event, from the dense output.
        let stop_y = stop.map(|_| {
            let mut v = vec![0.0; self.dim];
            view.dense_at(t_end, &mut v);
            v
        });
        let y_end = stop_y.as_deref().unwrap_or(y_new);
        let last = stop.is_some() || t_next == self.settings.to;
        self.output.after_step(&view, &mut *self.problem, t_end, y_end, last, self.stats.steps, &mut self.diagnostics);
        if let Some(ex) = self.extrema.as_mut() {
            ex.in_step(&view, &mut *self.problem, t_end);
        }
        if let (Some((event, ts)), Some(ys)) = (stop, stop_y) {
            self.t = ts;
            self.y = ys;
            self.status = Some(Status::Stopped { event });
            return Flow::End;
        }
        // Then hop the few ulps across the switch, so that the next step
        // starts on the far side.
        let hop = match (landed, self.switches.as_ref()) {
            (Some((_, k)), Some(sw)) => sw.hop(k, &view, &mut *self.problem),
            _ => None,
        };
        match hop {
            Some((tb, yb)) => {
                // The far side's values count from the switch on (a
                // helper that jumps there has its new extreme there).
                if let Some(ex) = self.extrema.as_mut() {
                    ex.see_point(&mut *self.problem, tb, &yb);
                }
                self.t = tb;
                self.y = yb;
            }
            None => {
                self.t = t_next;
                // The accepted state: y_new is overwritten by the next attempt.
                std::mem::swap(&mut self.y, y_new);
            }
        }
        let norm = inf_norm(&self.y);
        self.growth.push(norm);
        if norm > HUGE {
            self.fail(SolveError::BlowUp { t: self.t, magnitude: norm });
            return Flow::End;
        }
        if let Some(sw) = self.switches.as_mut() {
            sw.update(&mut *self.problem, self.t, &self.y);
        }
        if landed.is_some() {
            self.stepper.restart();
            self.ctrl.reset();
        }
        if self.t == self.settings.to {
            self.status = Some(Status::Finished);
            return Flow::End;
        }
        Flow::Go
    }

    /// Hairer's stiffness test on the step just accepted, then the switching
    /// policy.
    fn review(&mut self, h: f64, est: Option<f64>) {
        let adaptive = self.settings.step.is_none();
        let warn = self.switching.is_none();
        let stiff = self.stiffness.see(est, adaptive, warn, self.t, self.method.name, &mut self.diagnostics);
        let Some(policy) = self.switching.as_mut() else { return };
        let report = StepReport {
            t: self.t,
            h,
            method: self.method,
            stiffness: est,
            stability_limit: self.stiffness.limit(),
            stiff,
            steps: self.stats.steps,
        };
        let Some(id) = policy.review(&report) else { return };
        match method(id) {
            Some(next) => self.switch_method(next),
            None => self.fail(invalid(
                "method",
                format!("{} asked to switch to `{id}`, which is not in the method list", self.method.name),
            )),
        }
    }

    /// Continue with method `next` from the current point: a new stepper and
    /// controller, the current `h` kept.
    fn switch_method(&mut self, next: &'static MethodInfo) {
        if next.id == self.method.id {
            return;
        }
        self.diagnostics.push(Diagnostic {
            level: Level::Info,
            code: "method-switch",
            message: format!("switched from {} to {} at t ≈ {}", self.method.name, next.name, num(self.t)),
            t: Some(self.t),
        });
        self.method = next;
        self.stepper = next.build(self.dim);
        self.ctrl = PiController::new(next.error_order(), next.step_control());
        self.stiffness = self.stiffness.restart(next.stability_limit());
        self.stepper.set_stiffness_estimate(true);
    }

    fn finish(mut self) -> Run {
        self.output.finish(&mut *self.problem, self.t, &self.y, &mut self.diagnostics);
        let names = self.problem.state_names().iter().chain(self.problem.helper_names());
        let extrema = self.extrema.map(|ex| ex.finish(names)).unwrap_or_default();
        let (t, states, helpers) = self.output.into_columns();
        Run {
            t,
            states,
            helpers,
            events: self.events.map(Events::into_hits).unwrap_or_default(),
            extrema,
            diagnostics: self.diagnostics,
            status: self.status.unwrap_or(Status::Finished),
            stats: self.stats,
        }
    }
}
