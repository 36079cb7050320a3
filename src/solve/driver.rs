//! The driver: the step loop with output, events, switches, peaks and
//! diagnostics. It owns the stepper as a `Box<dyn Stepper>` so that a policy
//! can swap the method mid-run.

use super::control::{initial_step, PiController, StepControl};
use super::locate::{bracketed_root, golden_max};
use super::methods::{method, methods, MethodInfo};
use super::stability::{boundary_radius, dominant_eigenvalue, jacobian};
use super::stepper::{inf_norm, min_of, Stats, StepFault, Stepper, Tolerance};
use super::{num, Diagnostic, EventHit, Extremum, Level, Run, Settings, SolveError, Status, StepReport, Switching};
use crate::problem::{Crossing, EventAction, Problem};

/// Samples per step for events, switches and peaks (θ = j/N).
const SAMPLES: usize = 8;
/// Consecutive steps over the stability limit before the stiffness warning
/// (Hairer's `dopri5` uses 15).
const STIFF_COUNT: u32 = 15;
/// Fraction of the real stability limit at which a step counts as limited by
/// stability. `dopri5` tests `h·|λ| > 3.25` for a limit of about 3.3 (0.98;
/// Hairer & Wanner, *Solving ODEs II*, Sec. IV.2; from memory). Measured with
/// Dormand–Prince 5(4) on y' = −1000 (y − cos t) − sin t, the steps settle at
/// h·|λ| ≈ 3.30 for rtol 1e-3 but at ≈ 2.72 (0.82 of the limit) for the
/// default rtol 1e-6, where the accuracy of the slow component in the stiff
/// regime holds them a little inside the limit; a stiff method still takes
/// steps hundreds of times longer there. 0.98 would miss that case, hence
/// 0.75. On the non-stiff bench problems it stays silent up to rtol 1e-2.
const STIFF_FRACTION: f64 = 0.75;
/// Non-stiff steps that reset the stiffness count (`dopri5`: 6).
const NONSTIFF_RESET: u32 = 6;
/// States larger than this count as a blow-up at once.
const HUGE: f64 = 1e150;
/// Hard ceilings on the caps, whatever the settings ask for, so that no
/// request can make a run endless or its output exhaust memory: steps,
/// output points, stored output values (points × (states + helpers)), and
/// recorded event crossings.
const CEILING_STEPS: u64 = 100_000_000;
const CEILING_OUTPUT: usize = 1_000_000;
const CEILING_VALUES: usize = 10_000_000;
const CEILING_EVENTS: usize = 1_000_000;

/// Solve `y' = f(t, y)` from `(t0, y0)` to `settings.to` with the method named
/// in `settings`. Returns `Err` only for invalid settings or inputs; a run that
/// fails on the way comes back as `Ok` with [`Status::Failed`] and the
/// trajectory up to the failure.
pub fn solve(problem: &mut dyn Problem, t0: f64, y0: &[f64], settings: &Settings) -> Result<Run, SolveError> {
    let (m, tol, notes, max_output) = validate(problem, t0, y0, settings)?;
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

fn invalid(field: &'static str, reason: impl Into<String>) -> SolveError {
    SolveError::InvalidSettings { field, reason: reason.into() }
}

fn validate(
    problem: &dyn Problem,
    t0: f64,
    y0: &[f64],
    s: &Settings,
) -> Result<(&'static MethodInfo, Tolerance, Vec<Diagnostic>, usize), SolveError> {
    let m = method(&s.method).ok_or_else(|| {
        let ids: Vec<&str> = methods().iter().map(|m| m.id).collect();
        invalid("method", format!("unknown method `{}`; the methods are {}", s.method, ids.join(", ")))
    })?;
    if !t0.is_finite() {
        return Err(invalid("t0", "the start time must be a finite number"));
    }
    if !s.to.is_finite() {
        return Err(invalid("to", "the end time must be a finite number"));
    }
    if y0.len() != problem.dim() {
        return Err(invalid("y0", format!("{} initial values given for {} states", y0.len(), problem.dim())));
    }
    if let Some(i) = y0.iter().position(|v| !v.is_finite()) {
        let name = problem.state_names().get(i).cloned().unwrap_or_default();
        return Err(invalid("y0", format!("the initial value of `{name}` is not a finite number")));
    }
    match s.step {
        Some(h) if !(h.is_finite() && h > 0.0) => return Err(invalid("step", "the step must be a positive finite number")),
        None if !m.adaptive => {
            return Err(invalid("step", format!("{} is a fixed-step method and needs a step size", m.name)));
        }
        _ => {}
    }
    let mut notes = Vec::new();
    let mut tol = s.tol;
    if !(tol.relative.is_finite() && tol.relative >= 0.0) {
        return Err(invalid("tolerance.relative", "the relative tolerance must be a finite number ≥ 0"));
    }
    if !(tol.absolute.is_finite() && tol.absolute >= 0.0) {
        return Err(invalid("tolerance.absolute", "the absolute tolerance must be a finite number ≥ 0"));
    }
    if tol.relative == 0.0 && tol.absolute == 0.0 {
        return Err(invalid("tolerance", "the relative and absolute tolerances cannot both be zero"));
    }
    if tol.relative > 0.0 && tol.relative < 1e-14 {
        notes.push(Diagnostic {
            level: Level::Info,
            code: "tolerance-floor",
            message: format!(
                "the relative tolerance {:e} asks for more digits than double precision holds: rounding alone leaves an error of about 1e-16 on every operation, and it adds up over the steps. The run used 1e-14, the tightest that still means something; set 1e-14 or looser to run as asked",
                tol.relative
            ),
            t: None,
        });
        tol.relative = 1e-14;
    }
    if s.max_steps < 1 {
        return Err(invalid("stepLimit", "the step limit must be at least 1"));
    }
    if s.max_steps > CEILING_STEPS {
        return Err(invalid("stepLimit", format!("the step limit can be at most {CEILING_STEPS}")));
    }
    if s.max_output < 2 {
        return Err(invalid("outputLimit", "at least 2 output points are needed"));
    }
    let columns = (problem.dim() + problem.helper_names().len()).max(1);
    let output_ceiling = (CEILING_VALUES / columns).clamp(2, CEILING_OUTPUT);
    if s.max_output > CEILING_OUTPUT {
        return Err(invalid("outputLimit", format!("at most {CEILING_OUTPUT} output points can be kept")));
    }
    if s.max_events > CEILING_EVENTS {
        return Err(invalid("eventLimit", format!("at most {CEILING_EVENTS} event crossings can be recorded")));
    }
    for (field, v) in [("startStep", s.first_step), ("largestStep", s.max_step)] {
        if let Some(h) = v {
            if !(h.is_finite() && h > 0.0) {
                return Err(invalid(field, "must be a positive finite number"));
            }
        }
    }
    if let Some(at) = &s.at {
        let limit = s.max_output.min(output_ceiling);
        if at.len() > limit {
            return Err(invalid("at", format!("{} output times asked for; the limit is {limit}", at.len())));
        }
        let (lo, hi) = (t0.min(s.to), t0.max(s.to));
        let dir = if s.to >= t0 { 1.0 } else { -1.0 };
        for (k, &x) in at.iter().enumerate() {
            if !x.is_finite() || x < lo || x > hi {
                return Err(invalid("at", format!("output time {} is outside the run from {} to {}", num(x), num(t0), num(s.to))));
            }
            if k > 0 && (x - at[k - 1]) * dir < 0.0 {
                return Err(invalid("at", "output times must be in the order of the run"));
            }
        }
    }
    Ok((m, tol, notes, s.max_output.min(output_ceiling)))
}

/// Running maximum and minimum of one quantity.
#[derive(Clone, Copy)]
struct Peak {
    max: f64,
    t_max: f64,
    min: f64,
    t_min: f64,
}

impl Peak {
    fn new(v: f64, t: f64) -> Self {
        Peak { max: v, t_max: t, min: v, t_min: t }
    }
    fn see(&mut self, v: f64, t: f64) {
        if v > self.max {
            self.max = v;
            self.t_max = t;
        }
        if v < self.min {
            self.min = v;
            self.t_min = t;
        }
    }
}

fn sign(v: f64) -> bool {
    v > 0.0
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
    n_helpers: usize,
    n_events: usize,
    n_switches: usize,
    dir: f64,
    t0: f64,
    t: f64,
    y: Vec<f64>,
    y0_norm: f64,
    stats: Stats,
    // output
    out_t: Vec<f64>,
    out_y: Vec<Vec<f64>>,
    out_h: Vec<Vec<f64>>,
    /// Output every `stride`-th step: a power of two (1, then doubled by each
    /// decimation), so that the test is a mask rather than a division.
    stride: u64,
    at_next: usize,
    events: Vec<EventHit>,
    peaks: Vec<Peak>,
    diagnostics: Vec<Diagnostic>,
    status: Option<Status>,
    // event and switch state at the current point
    g_now: Vec<f64>,
    g_sign: Vec<Option<bool>>,
    s_now: Vec<f64>,
    events_capped: bool,
    // stiffness test
    stiff_count: u32,
    nonstiff_count: u32,
    stiff_warned: bool,
    stability_limit: f64,
    // recent state magnitudes for the blow-up test
    norms: Vec<f64>,
    /// An event function dipped across zero and back between two samples:
    /// the next step is held to half this one.
    dip: bool,
    // scratch
    helpers_buf: Vec<f64>,
    /// Scratch of the peak search: sample times and rates.
    peak_times: Vec<f64>,
    peak_rates: Vec<f64>,
}

impl<'a> Driver<'a> {
    fn new(problem: &'a mut dyn Problem, t0: f64, y0: &[f64], settings: &'a Settings, m: &'static MethodInfo, tol: Tolerance) -> Self {
        let dim = y0.len();
        let n_helpers = problem.helper_names().len();
        let n_events = problem.events().len();
        let n_switches = problem.switch_count();
        let switching = m.switching.map(|f| f());
        let mut stepper = (m.build)(dim);
        stepper.set_stiffness_estimate(switching.is_some() || stability_limit(m) > 0.0);
        let mut d = Driver {
            ctrl: PiController::new(error_order(m), step_control(m)),
            stability_limit: stability_limit(m),
            problem,
            settings,
            tol,
            method: m,
            stepper,
            switching,
            dim,
            n_helpers,
            n_events,
            n_switches,
            dir: if settings.to >= t0 { 1.0 } else { -1.0 },
            t0,
            t: t0,
            y: y0.to_vec(),
            y0_norm: inf_norm(y0),
            stats: Stats::default(),
            out_t: Vec::new(),
            out_y: vec![Vec::new(); dim],
            out_h: vec![Vec::new(); n_helpers],
            stride: 1,
            at_next: 0,
            events: Vec::new(),
            peaks: Vec::new(),
            diagnostics: Vec::new(),
            status: None,
            g_now: vec![0.0; n_events],
            g_sign: vec![None; n_events],
            s_now: vec![0.0; n_switches],
            events_capped: false,
            stiff_count: 0,
            nonstiff_count: 0,
            stiff_warned: false,
            norms: Vec::new(),
            dip: false,
            helpers_buf: vec![0.0; n_helpers],
            peak_times: Vec::new(),
            peak_rates: Vec::new(),
        };
        d.start();
        d
    }

    fn helpers_at(&mut self, t: f64, y: &[f64]) -> Vec<f64> {
        let mut h = vec![0.0; self.n_helpers];
        if self.n_helpers > 0 {
            self.problem.helpers(t, y, &mut h);
        }
        h
    }

    fn record(&mut self, t: f64, y: &[f64]) {
        if self.n_helpers > 0 {
            self.problem.helpers(t, y, &mut self.helpers_buf);
        }
        self.out_t.push(t);
        for (col, v) in self.out_y.iter_mut().zip(y) {
            col.push(*v);
        }
        for (col, v) in self.out_h.iter_mut().zip(&self.helpers_buf) {
            col.push(*v);
        }
    }

    /// Keep every other output point (the first and the last kept).
    fn decimate(&mut self) {
        let n = self.out_t.len();
        let keep = |i: usize| i % 2 == 0 || i + 1 == n;
        let thin = |v: &mut Vec<f64>| {
            let mut i = 0;
            v.retain(|_| {
                let k = keep(i);
                i += 1;
                k
            });
        };
        thin(&mut self.out_t);
        self.out_y.iter_mut().for_each(thin);
        self.out_h.iter_mut().for_each(thin);
        self.stride *= 2;
        if self.stride == 2 {
            self.diagnostics.push(Diagnostic {
                level: Level::Info,
                code: "decimated",
                message: format!(
                    "the run took more steps than the {} output points kept; every {}th step is shown (the events, peaks and end values are exact)",
                    self.settings.max_output, self.stride
                ),
                t: None,
            });
        } else if let Some(d) = self.diagnostics.iter_mut().find(|d| d.code == "decimated") {
            d.message = format!(
                "the run took more steps than the {} output points kept; every {}th step is shown (the events, peaks and end values are exact)",
                self.settings.max_output, self.stride
            );
        }
    }

    fn start(&mut self) {
        // Room for the output up front, so that a short run does not grow
        // its columns push by push: every `at` point, or else up to 256
        // steps within a budget of 4096 stored values.
        let columns = self.dim + self.n_helpers + 1;
        let points = match &self.settings.at {
            Some(at) => at.len(),
            None => (4096 / columns).clamp(16, 256).min(self.settings.max_output),
        };
        self.out_t.reserve(points);
        self.out_y.iter_mut().chain(self.out_h.iter_mut()).for_each(|col| col.reserve(points));
        let (t, y) = (self.t, self.y.clone());
        match &self.settings.at {
            None => self.record(t, &y),
            Some(at) => {
                let mut k = 0;
                while k < at.len() && at[k] == t {
                    k += 1;
                }
                for _ in 0..k {
                    self.record(t, &y);
                }
                self.at_next = k;
            }
        }
        if self.settings.extrema {
            let h = self.helpers_at(t, &y);
            self.peaks = y.iter().chain(&h).map(|&v| Peak::new(v, t)).collect();
        }
        if self.n_events > 0 {
            self.problem.event_values(t, &y, &mut self.g_now);
            for (s, g) in self.g_sign.iter_mut().zip(&self.g_now) {
                *s = (*g != 0.0).then(|| sign(*g));
            }
        }
        if self.n_switches > 0 {
            self.problem.switch_values(t, &y, &mut self.s_now);
        }
        self.norms.push(self.y0_norm);
    }

    fn fail(&mut self, e: SolveError) {
        self.diagnostics.push(Diagnostic { level: Level::Error, code: e.code(), message: e.to_string(), t: failure_time(&e) });
        self.status = Some(Status::Failed(e));
    }

    fn h_min(&self) -> f64 {
        16.0 * f64::EPSILON * self.t.abs().max((self.settings.to - self.t0).abs() * 1e-12).max(f64::MIN_POSITIVE)
    }

    /// True when the solution has grown a millionfold, or a thousandfold with
    /// a tenfold growth over the last 20 steps.
    fn growing(&self) -> bool {
        let now = inf_norm(&self.y);
        let back = self.norms.len().saturating_sub(20);
        let then = self.norms.get(back).copied().unwrap_or(self.y0_norm);
        now > 1e6 * (1.0 + self.y0_norm) || (now > 1e3 * (1.0 + self.y0_norm) && now >= 10.0 * then.max(f64::MIN_POSITIVE))
    }

    fn collapse(&mut self, h: f64) {
        let e = if self.growing() {
            SolveError::BlowUp { t: self.t, magnitude: inf_norm(&self.y) }
        } else {
            SolveError::StepSizeTooSmall { t: self.t, h }
        };
        self.fail(e);
    }

    /// Find where the rates went non-finite near `(t, y)` with step `h`.
    fn explain_nonfinite(&mut self, h: f64) -> SolveError {
        let (t, y) = (self.t, self.y.clone());
        let mut f = vec![0.0; self.dim];
        self.problem.rhs(t, &y, &mut f);
        self.stats.rhs_evals += 1;
        let (tp, yp) = if f.iter().all(|v| v.is_finite()) {
            // Probe along an Euler step: the trouble lies inside the step.
            let yp: Vec<f64> = y.iter().zip(&f).map(|(a, b)| a + h * b).collect();
            let mut fp = vec![0.0; self.dim];
            self.problem.rhs(t + h, &yp, &mut fp);
            self.stats.rhs_evals += 1;
            if fp.iter().all(|v| v.is_finite()) || yp.iter().any(|v| !v.is_finite()) {
                (t, y)
            } else {
                (t + h, yp)
            }
        } else {
            (t, y)
        };
        let cause = self.problem.explain_nonfinite(tp, &yp);
        let states = self.problem.state_names().iter().cloned().zip(yp.iter().copied()).collect();
        SolveError::NonFinite { t: tp, h, cause, states }
    }

    fn run(&mut self) {
        let to = self.settings.to;
        if self.t == to {
            self.status = Some(Status::Finished);
            return;
        }
        let span = (to - self.t0).abs();
        let fixed = self.settings.step;
        let h_max = self.settings.max_step.unwrap_or(span).min(span);
        let mut h_abs = match (fixed, self.settings.first_step) {
            (Some(h), _) => h,
            (None, Some(h)) => h.min(h_max),
            (None, None) => {
                let (t, y) = (self.t, self.y.clone());
                let mut f0 = vec![0.0; self.dim];
                let h = initial_step(&mut *self.problem, t, &y, self.dir, self.method.order, &self.tol, h_max, &mut f0, &mut self.stats);
                self.stepper.seed_slope(&f0);
                h
            }
        };
        if !(h_abs > 0.0) {
            h_abs = h_max;
        }
        // The stability check of fixed steps runs four times per run (at the start
        // and at each further quarter of the steps).
        let check_every = fixed.map(|h| ((span / h).ceil().min(1e15) as u64).div_ceil(4).max(1));
        let mut y_new = vec![0.0; self.dim];
        let mut faults = 0u32;
        let mut fixed_count: u64 = 0;
        // Landing on a switch: the end time of the shortened step.
        let mut landing: Option<(f64, usize)> = None;
        let mut relands = 0;
        while self.status.is_none() {
            if self.stats.steps >= self.settings.max_steps {
                let e = SolveError::MaxSteps { t: self.t, steps: self.stats.steps };
                self.fail(e);
                break;
            }
            if let (Some(step), Some(every)) = (fixed, check_every) {
                if fixed_count % every == 0 {
                    self.check_fixed_stability(step);
                }
            }
            // Choose the end of this step.
            let t_next = if let Some((target, _)) = landing {
                target
            } else if let Some(step) = fixed {
                let tn = self.t0 + self.dir * step * (fixed_count + 1) as f64;
                if (tn - to) * self.dir >= -1e-12 * step {
                    to
                } else {
                    tn
                }
            } else {
                let tn = self.t + self.dir * min_of(h_abs, h_max);
                if (tn - to) * self.dir >= 0.0 {
                    to
                } else {
                    tn
                }
            };
            let h = t_next - self.t;
            if h == 0.0 {
                // The step is below the resolution of t.
                self.collapse(h);
                break;
            }
            let y = std::mem::take(&mut self.y);
            let res = self.stepper.attempt(&mut *self.problem, self.t, &y, h, &self.tol, &mut y_new, &mut self.stats);
            self.y = y;
            let att = match res {
                Err(fault) => {
                    self.stats.rejected += 1;
                    faults += 1;
                    landing = None;
                    if fixed.is_some() {
                        let e = match fault {
                            StepFault::NonFinite => self.explain_nonfinite(h),
                            _ => SolveError::StepFailed { t: self.t, h, fault },
                        };
                        self.fail(e);
                        break;
                    }
                    h_abs = h.abs() * 0.25;
                    if h_abs < self.h_min() || faults > 60 {
                        if self.growing() || inf_norm(&self.y) > HUGE {
                            self.collapse(h);
                        } else {
                            let e = match fault {
                                StepFault::NonFinite => self.explain_nonfinite(h),
                                _ => SolveError::StepSizeTooSmall { t: self.t, h },
                            };
                            self.fail(e);
                        }
                        break;
                    }
                    continue;
                }
                Ok(a) => a,
            };
            let err = if fixed.is_some() { None } else { att.error };
            if let Some(e) = err {
                if e > 1.0 {
                    self.stats.rejected += 1;
                    // A step that failed because it crossed a switch: aim the
                    // retry at the switch rather than shrinking blindly.
                    if self.n_switches > 0 && landing.is_none() && self.crosses_switch(t_next, &y_new) {
                        self.stepper.prepare_dense(&mut *self.problem, &mut self.stats);
                        if let Some(target) = self.first_switch(h, t_next, &y_new, false) {
                            landing = Some(target);
                            continue;
                        }
                    }
                    landing = None;
                    h_abs = h.abs() * self.ctrl.rejected(e);
                    if h_abs < self.h_min() {
                        self.collapse(h);
                        break;
                    }
                    continue;
                }
            }
            faults = 0;
            let needs_dense = self.n_switches > 0 || self.n_events > 0 || self.settings.extrema || self.settings.at.is_some();
            if needs_dense {
                self.stepper.prepare_dense(&mut *self.problem, &mut self.stats);
            }
            // Switches: end the step on the near side of the first crossing,
            // so that every stage sees one branch of the rates.
            if self.n_switches > 0 && relands < 4 {
                if let Some(target) = self.first_switch(h, t_next, &y_new, landing.is_some()) {
                    self.stats.rejected += 1;
                    if landing.is_some() {
                        relands += 1;
                    }
                    landing = Some(target);
                    continue;
                }
            }
            let landed = landing.take();
            relands = 0;
            self.stepper.accept();
            self.stats.steps += 1;
            if fixed.is_some() && landed.is_none() {
                fixed_count += 1;
            }
            let stop = self.after_step(h, t_next, &y_new);
            if let Some((event, ts, ys)) = stop {
                self.t = ts;
                self.y = ys;
                self.status = Some(Status::Stopped { event });
                break;
            }
            // Then hop the few ulps across the switch, so that the next step
            // starts on the far side.
            let hop = landed.and_then(|(_, k)| self.hop(k, h, t_next, &y_new));
            let landed = landed.is_some();
            match hop {
                Some((tb, yb)) => {
                    // The far side's values count from the switch on (a
                    // helper that jumps there has its new extreme there).
                    if self.settings.extrema {
                        self.see_point(tb, &yb);
                    }
                    self.t = tb;
                    self.y = yb;
                }
                None => {
                    self.t = t_next;
                    // The accepted state: y_new is overwritten by the next attempt.
                    std::mem::swap(&mut self.y, &mut y_new);
                }
            }
            let norm = inf_norm(&self.y);
            self.norms.push(norm);
            if self.norms.len() > 64 {
                self.norms.drain(..32);
            }
            if norm > HUGE {
                self.fail(SolveError::BlowUp { t: self.t, magnitude: norm });
                break;
            }
            if self.n_switches > 0 {
                let (t, y) = (self.t, self.y.clone());
                self.problem.switch_values(t, &y, &mut self.s_now);
            }
            if landed {
                self.stepper.restart();
                self.ctrl.reset();
            }
            if self.t == to {
                self.status = Some(Status::Finished);
                break;
            }
            if let Some(e) = err {
                if !landed {
                    h_abs = h.abs() * self.ctrl.accepted(e, h);
                }
                if std::mem::take(&mut self.dip) {
                    h_abs = h_abs.min(0.5 * h.abs());
                }
            }
            self.stiffness(h, att.stiffness);
        }
    }

    /// Hairer's stiffness test (Hairer & Wanner, *Solving ODEs II*, Sec. IV.2,
    /// "Automatic stiffness detection"; `dopri5`'s counts 15 and 6), then the
    /// switching policy.
    fn stiffness(&mut self, h: f64, est: Option<f64>) {
        let mut stiff = false;
        if let Some(hl) = est {
            if self.stability_limit > 0.0 && self.settings.step.is_none() {
                if hl > STIFF_FRACTION * self.stability_limit {
                    self.nonstiff_count = 0;
                    self.stiff_count += 1;
                    if self.stiff_count >= STIFF_COUNT {
                        stiff = true;
                        // Under a switching policy (`auto`) the policy acts on the verdict instead.
                        if !self.stiff_warned && self.switching.is_none() {
                            self.stiff_warned = true;
                            self.diagnostics.push(Diagnostic {
                                level: Level::Warning,
                                code: "stiff",
                                message: format!(
                                    "from t ≈ {} on, {} took steps sized by its stability limit, not by the tolerance (h·|λ| ≈ {} on {} recent steps). The system is stiff there: an explicit method needs a great many small steps on it, and the extra steps buy no accuracy. Choose an implicit method (Rosenbrock 4(3) or Radau IIA in the method list) or `auto`, which switches to one by itself",
                                    num(self.t),
                                    self.method.name,
                                    num(hl),
                                    STIFF_COUNT
                                ),
                                t: Some(self.t),
                            });
                        }
                    }
                } else {
                    self.nonstiff_count += 1;
                    if self.nonstiff_count >= NONSTIFF_RESET {
                        self.stiff_count = 0;
                    }
                }
            }
        }
        if let Some(policy) = self.switching.as_mut() {
            let report = StepReport {
                t: self.t,
                h,
                method: self.method,
                stiffness: est,
                stability_limit: self.stability_limit,
                stiff,
                steps: self.stats.steps,
            };
            if let Some(next) = policy.review(&report) {
                if next.id != self.method.id {
                    self.diagnostics.push(Diagnostic {
                        level: Level::Info,
                        code: "method-switch",
                        message: format!("switched from {} to {} at t ≈ {}", self.method.name, next.name, num(self.t)),
                        t: Some(self.t),
                    });
                    self.method = next;
                    self.stepper = (next.build)(self.dim);
                    self.ctrl = PiController::new(error_order(next), step_control(next));
                    self.stability_limit = stability_limit(next);
                    self.stepper.set_stiffness_estimate(true);
                    self.stiff_count = 0;
                    self.nonstiff_count = 0;
                }
            }
        }
    }

    /// For fixed steps: warn when `h·λ` for the Jacobian's dominant eigenvalue
    /// lies outside the method's stability region (once per run).
    fn check_fixed_stability(&mut self, step: f64) {
        if self.diagnostics.iter().any(|d| d.code == "unstable-step") {
            return;
        }
        let Some(tab) = self.method.tableau else { return };
        if self.dim == 0 {
            return;
        }
        let (t, y) = (self.t, self.y.clone());
        let jac = jacobian(&mut *self.problem, t, &y, &mut self.stats);
        let Some((re, im)) = dominant_eigenvalue(&jac, self.dim) else { return };
        if re >= 0.0 {
            // A growing mode grows in the true solution too.
            return;
        }
        let g = tab.stability_polynomial();
        let (zr, zi) = (step * re, step * im);
        if super::stability::amplification(&g, zr, zi) <= 1.0 + 1e-9 {
            return;
        }
        let modulus = (re * re + im * im).sqrt();
        let r = boundary_radius(&g, im.atan2(re));
        let largest = r / modulus;
        let mode = if im.abs() > 1e-9 * modulus {
            format!("an oscillation with decay rate {} and frequency {} (rad per unit of t)", num(-re), num(im.abs()))
        } else {
            format!("a mode that decays at rate {} per unit of t", num(-re))
        };
        let advice = if largest > 0.0 {
            format!("The largest stable step there is about h = {}.", num(largest))
        } else {
            format!("No step size is stable for {} on this mode; use RK4 or an adaptive method.", self.method.name)
        };
        self.diagnostics.push(Diagnostic {
            level: Level::Warning,
            code: "unstable-step",
            message: format!(
                "the step h = {} is too large for {} near t = {}: the model has {}, so h·λ ≈ {}{} lies outside the method's stability region and the computed solution can grow or oscillate while the true one settles. {}",
                num(step),
                self.method.name,
                num(t),
                mode,
                num(zr),
                if zi != 0.0 { format!(" ± {}i", num(zi.abs())) } else { String::new() },
                advice
            ),
            t: Some(t),
        });
    }

    fn dense_at(&self, tau: f64, h: f64, t_next: f64, y_new: &[f64], out: &mut [f64]) {
        if tau == t_next {
            out.copy_from_slice(y_new);
        } else {
            self.stepper.dense((tau - self.t) / h, out);
        }
    }

    /// The sample times of the step `(t, t_next]`.
    fn sample_times(&self, h: f64, t_next: f64) -> Vec<f64> {
        (1..=SAMPLES).map(|j| if j == SAMPLES { t_next } else { self.t + h * j as f64 / SAMPLES as f64 }).collect()
    }

    /// Whether some switch has another sign at the step's end than at its start.
    fn crosses_switch(&mut self, t_next: f64, y_new: &[f64]) -> bool {
        let mut s = vec![0.0; self.n_switches];
        self.problem.switch_values(t_next, y_new, &mut s);
        s.iter().zip(&self.s_now).any(|(a, b)| *a != 0.0 && *b != 0.0 && sign(*a) != sign(*b))
    }

    /// The near-side end of the first switch crossing in the step and the
    /// switch's index, unless the crossing lies at the very start of the step
    /// or at the very end of a step already aimed at a switch.
    fn first_switch(&mut self, h: f64, t_next: f64, y_new: &[f64], landing: bool) -> Option<(f64, usize)> {
        let ns = self.n_switches;
        let mut ys = vec![0.0; self.dim];
        let mut prev = self.s_now.clone();
        let mut t_prev = self.t;
        let mut s = vec![0.0; ns];
        let guard = 1e-9 * h.abs() + 8.0 * f64::EPSILON * self.t.abs().max(t_next.abs());
        for tau in self.sample_times(h, t_next) {
            self.dense_at(tau, h, t_next, y_new, &mut ys);
            self.problem.switch_values(tau, &ys, &mut s);
            let mut best: Option<(f64, usize)> = None;
            for k in 0..ns {
                if prev[k] != 0.0 && s[k] != 0.0 && sign(prev[k]) != sign(s[k]) && s[k].is_finite() && prev[k].is_finite() {
                    let (ta, _) = self.root(|d, tt, y, out| d.problem.switch_values(tt, y, out), k, ns, t_prev, tau, prev[k], s[k], h, t_next, y_new);
                    if best.is_none_or(|(b, _)| (ta - b) * self.dir < 0.0) {
                        best = Some((ta, k));
                    }
                }
            }
            if let Some((ta, k)) = best {
                let near_start = ((ta - self.t) * self.dir).abs() <= guard;
                let near_end = ((t_next - ta) * self.dir) <= guard;
                if near_start || (landing && near_end) || ta == t_next {
                    return None;
                }
                return Some((ta, k));
            }
            prev.copy_from_slice(&s);
            t_prev = tau;
        }
        None
    }

    /// After a step that ended on the near side of switch `k`: the first point
    /// past the crossing on the step's continuous extension (extrapolated by
    /// at most 1e-6 of the step), found by doubling the distance from the
    /// step's end and then bisecting. `None` when the end is already across
    /// or no crossing shows that close.
    fn hop(&mut self, k: usize, h: f64, t_next: f64, y_new: &[f64]) -> Option<(f64, Vec<f64>)> {
        let ns = self.n_switches;
        let mut s = vec![0.0; ns];
        let old = sign(self.s_now[k]);
        // Across: strictly on the other side. A switch value of exactly zero
        // is not across, whichever way it goes: `heaviside(0)` is 1, so a falling
        // switch that ends a step on zero still has the near branch there.
        let across = |v: f64| v != 0.0 && sign(v) != old;
        self.problem.switch_values(t_next, y_new, &mut s);
        if across(s[k]) || (t_next - self.settings.to) * self.dir >= 0.0 {
            return None;
        }
        let (mut ga, mut ta) = (s[k], t_next);
        let mut ys = vec![0.0; self.dim];
        let mut d = 4.0 * f64::EPSILON * t_next.abs().max(h.abs());
        while d <= 1e-6 * h.abs() {
            let tau = t_next + self.dir * d;
            if (tau - self.settings.to) * self.dir > 0.0 {
                return None;
            }
            self.stepper.dense((tau - self.t) / h, &mut ys);
            self.problem.switch_values(tau, &ys, &mut s);
            if s[k].is_finite() && across(s[k]) {
                let gb = s[k];
                // A zero counts on the near side (sign() is false for 0).
                let ga = if ga == 0.0 { if old { f64::MIN_POSITIVE } else { -f64::MIN_POSITIVE } } else { ga };
                let (_, mut tb) = self.root(|dr, tt, y, out| dr.problem.switch_values(tt, y, out), k, ns, ta, tau, ga, gb, h, f64::NAN, y_new);
                self.stepper.dense((tb - self.t) / h, &mut ys);
                self.problem.switch_values(tb, &ys, &mut s);
                if !across(s[k]) {
                    tb = tau;
                    self.stepper.dense((tb - self.t) / h, &mut ys);
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

    /// Root of component `k` of a vector function `fv` along the dense output
    /// in `[ta, tb]`; returns (old side, new side).
    #[allow(clippy::too_many_arguments)]
    fn root(
        &mut self,
        fv: impl Fn(&mut Self, f64, &[f64], &mut [f64]),
        k: usize,
        n: usize,
        ta: f64,
        tb: f64,
        ga: f64,
        gb: f64,
        h: f64,
        t_next: f64,
        y_new: &[f64],
    ) -> (f64, f64) {
        let mut ys = vec![0.0; self.dim];
        let mut out = vec![0.0; n];
        let mut g = |tau: f64| {
            self.dense_at(tau, h, t_next, y_new, &mut ys);
            fv(self, tau, &ys, &mut out);
            out[k]
        };
        bracketed_root(&mut g, ta, tb, ga, gb)
    }

    /// Events, `at` output, peaks and the step's output point. Returns the stop
    /// event, its time and state when one ends the run in this step.
    fn after_step(&mut self, h: f64, t_next: f64, y_new: &[f64]) -> Option<(usize, f64, Vec<f64>)> {
        let mut stop: Option<(usize, f64)> = None;
        if self.n_events > 0 {
            stop = self.events_in_step(h, t_next, y_new);
        }
        let t_end = stop.map(|(_, ts)| ts).unwrap_or(t_next);
        // The state where the step ends: at a stop event, from the dense output.
        let stop_y = stop.map(|_| {
            let mut v = vec![0.0; self.dim];
            self.dense_at(t_end, h, t_next, y_new, &mut v);
            v
        });
        let y_end = stop_y.as_deref().unwrap_or(y_new);
        // `at` output
        if let Some(at) = &self.settings.at {
            let mut ys = vec![0.0; self.dim];
            let mut k = self.at_next;
            let mut pts = Vec::new();
            while k < at.len() && (at[k] - t_end) * self.dir <= 0.0 {
                pts.push(at[k]);
                k += 1;
            }
            self.at_next = k;
            for tau in pts {
                self.dense_at(tau, h, t_next, y_new, &mut ys);
                let yc = ys.clone();
                self.record(tau, &yc);
            }
        } else {
            let step_index = self.stats.steps;
            if stop.is_some() || t_next == self.settings.to || step_index & (self.stride - 1) == 0 {
                self.record(t_end, y_end);
                if self.out_t.len() >= self.settings.max_output {
                    self.decimate();
                }
            }
        }
        if self.settings.extrema {
            self.peaks_in_step(h, t_end, t_next, y_new);
        }
        stop.zip(stop_y).map(|((e, ts), y)| (e, ts, y))
    }

    fn events_in_step(&mut self, h: f64, t_next: f64, y_new: &[f64]) -> Option<(usize, f64)> {
        let ne = self.n_events;
        let specs = self.problem.events().to_vec();
        let mut ys = vec![0.0; self.dim];
        // Samples: (t, g) with the start of the step first.
        let mut ts = vec![self.t];
        let mut gs = vec![self.g_now.clone()];
        for tau in self.sample_times(h, t_next) {
            self.dense_at(tau, h, t_next, y_new, &mut ys);
            let mut g = vec![0.0; ne];
            self.problem.event_values(tau, &ys, &mut g);
            ts.push(tau);
            gs.push(g);
        }
        let evf = |d: &mut Self, tt: f64, y: &[f64], out: &mut [f64]| d.problem.event_values(tt, y, out);
        let mut found: Vec<(f64, usize)> = Vec::new();
        for i in 0..ne {
            let mut last = self.g_sign[i];
            let mut last_j = 0;
            let mut dip_done = 0;
            for j in 1..ts.len() {
                let gj = gs[j][i];
                if !gj.is_finite() {
                    continue;
                }
                // A dip between samples that the samples do not show (two
                // crossings close together): the parabola through three
                // samples of one sign predicts a turning point near zero
                // within their span; then search for the turning point.
                if j + 1 < ts.len() && j > dip_done && gj != 0.0 {
                    let (ga, gc) = (gs[j - 1][i], gs[j + 1][i]);
                    if ga.is_finite() && gc.is_finite() && sign(ga) == sign(gj) && sign(gc) == sign(gj) && ga != 0.0 && gc != 0.0 {
                        // In s-space the three values are negative; a dip of |g| is a peak.
                        let s = if gj > 0.0 { -1.0 } else { 1.0 };
                        let (a, b, c) = (s * ga, s * gj, s * gc);
                        let curv = a - 2.0 * b + c;
                        let x_v = if curv < 0.0 { (a - c) / (2.0 * curv) } else { f64::INFINITY };
                        let p_v = b - (c - a) * (c - a) / (8.0 * curv);
                        if x_v.abs() <= 1.0 && (p_v > 0.0 || p_v > 0.25 * b) {
                            let (ta, tc) = (ts[j - 1], ts[j + 1]);
                            let mut yv = vec![0.0; self.dim];
                            let mut out = vec![0.0; ne];
                            let (tm, vm) = golden_max(
                                |tau| {
                                    self.dense_at(tau, h, t_next, y_new, &mut yv);
                                    self.problem.event_values(tau, &yv, &mut out);
                                    s * out[i]
                                },
                                ta.min(tc),
                                ta.max(tc),
                            );
                            dip_done = j + 1;
                            if vm > 0.0 {
                                // Two crossings: across to the turning point and back.
                                let gm = s * vm;
                                for (x0, g0, x1, g1) in [(ta, ga, tm, gm), (tm, gm, tc, gc)] {
                                    let (_, tb) = self.root(evf, i, ne, x0, x1, g0, g1, h, t_next, y_new);
                                    if fires(specs[i].crossing, g1 > 0.0) && tb != self.t0 {
                                        found.push((tb, i));
                                    }
                                }
                                // Resolve the next steps more finely.
                                self.dip = true;
                            }
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
                        let (_, tb) = self.root(evf, i, ne, ta, ts[j], ga, gj, h, t_next, y_new);
                        if fires(specs[i].crossing, now) && tb != self.t0 {
                            found.push((tb, i));
                        }
                    }
                    _ => {}
                }
                last = Some(now);
                last_j = j;
            }
            self.g_sign[i] = last;
        }
        found.sort_by(|a, b| ((a.0 - b.0) * self.dir).total_cmp(&0.0));
        found.dedup();
        let mut stop = None;
        let mut yv = vec![0.0; self.dim];
        for (te, i) in found {
            if let Some((_, ts)) = stop {
                if (te - ts) * self.dir > 0.0 {
                    break;
                }
            }
            let is_stop = specs[i].action == EventAction::Stop;
            if self.events.len() >= self.settings.max_events && !is_stop {
                if !self.events_capped {
                    self.events_capped = true;
                    self.diagnostics.push(Diagnostic {
                        level: Level::Warning,
                        code: "max-events",
                        message: format!("more than {} event crossings; later ones are not recorded", self.settings.max_events),
                        t: Some(te),
                    });
                }
                continue;
            }
            self.dense_at(te, h, t_next, y_new, &mut yv);
            let helpers = self.helpers_at(te, &yv.clone());
            self.events.push(EventHit { index: i, name: specs[i].name.clone(), t: te, states: yv.clone(), helpers });
            if is_stop && stop.is_none() {
                stop = Some((i, te));
            }
        }
        if stop.is_none() {
            self.problem.event_values(t_next, y_new, &mut self.g_now);
        }
        stop
    }

    /// Peaks and troughs in `(t, t_end]`: of the states at the roots of the
    /// dense output's slope, and of the helpers at the roots of their rates
    /// along the dense output ([`Problem::helper_rates`]), or by
    /// golden-section search between samples when the model has no helper
    /// rates.
    fn peaks_in_step(&mut self, h: f64, t_end: f64, t_next: f64, y_new: &[f64]) {
        let (n, nh) = (self.dim, self.n_helpers);
        let w = n + nh;
        let mut times = std::mem::take(&mut self.peak_times);
        times.clear();
        times.push(self.t);
        for j in 1..SAMPLES {
            let tau = self.t + h * j as f64 / SAMPLES as f64;
            if (tau - t_end) * self.dir < 0.0 {
                times.push(tau);
            }
        }
        times.push(t_end);
        // Row k: the states' slopes at times[k], then (with helper rates) the helpers' rates.
        let mut rates = std::mem::take(&mut self.peak_rates);
        rates.clear();
        rates.resize(times.len() * w, 0.0);
        let mut ys = vec![0.0; n];
        let mut has_rates = nh > 0;
        for (k, &tau) in times.iter().enumerate() {
            let row = &mut rates[k * w..(k + 1) * w];
            self.stepper.dense_slope((tau - self.t) / h, h, &mut row[..n]);
            if has_rates {
                self.dense_at(tau, h, t_next, y_new, &mut ys);
                let (dy, hr) = row.split_at_mut(n);
                has_rates = self.problem.helper_rates(tau, &ys, dy, hr);
            }
        }
        // End value of every quantity.
        self.dense_at(t_end, h, t_next, y_new, &mut ys);
        self.see_point(t_end, &ys);
        // The rates of states and (when the model has them) helpers on the dense output.
        let slope_fn = |d: &mut Self, tt: f64, y: &[f64], out: &mut [f64]| {
            d.stepper.dense_slope((tt - d.t) / h, h, &mut out[..n]);
            if out.len() > n {
                let (dy, hr) = out.split_at_mut(n);
                d.problem.helper_rates(tt, y, dy, hr);
            }
        };
        let located = if has_rates { w } else { n };
        let mut hv = vec![0.0; nh];
        for i in 0..located {
            for j in 1..times.len() {
                let (a, b) = (rates[(j - 1) * w + i], rates[j * w + i]);
                if a.is_finite() && b.is_finite() && a != 0.0 && b != 0.0 && sign(a) != sign(b) {
                    let (ta, tb) = self.root(slope_fn, i, if i < n { n } else { w }, times[j - 1], times[j], a, b, h, t_next, y_new);
                    let tm = 0.5 * (ta + tb);
                    self.dense_at(tm, h, t_next, y_new, &mut ys);
                    let v = if i < n {
                        ys[i]
                    } else {
                        self.problem.helpers(tm, &ys, &mut hv);
                        hv[i - n]
                    };
                    self.peaks[i].see(v, tm);
                }
            }
        }
        if nh > 0 && !has_rates {
            self.helper_peaks_by_values(&times, h, t_next, y_new);
        }
        self.peak_times = times;
        self.peak_rates = rates;
    }

    /// Count the state `y` at `t`, and its helpers there, toward the peaks
    /// and troughs.
    fn see_point(&mut self, t: f64, y: &[f64]) {
        for (p, v) in self.peaks.iter_mut().zip(y) {
            p.see(*v, t);
        }
        if self.n_helpers > 0 {
            self.problem.helpers(t, y, &mut self.helpers_buf);
            for (p, v) in self.peaks[self.dim..].iter_mut().zip(&self.helpers_buf) {
                p.see(*v, t);
            }
        }
    }

    /// Helper peaks without helper rates: golden-section search around each
    /// sample that is larger (smaller) than its neighbours.
    fn helper_peaks_by_values(&mut self, times: &[f64], h: f64, t_next: f64, y_new: &[f64]) {
        let (n, nh) = (self.dim, self.n_helpers);
        let mut ys = vec![0.0; n];
        let mut vals = vec![0.0; times.len() * nh];
        for (k, &tau) in times.iter().enumerate() {
            self.dense_at(tau, h, t_next, y_new, &mut ys);
            self.problem.helpers(tau, &ys, &mut vals[k * nh..(k + 1) * nh]);
        }
        let mut hv = vec![0.0; nh];
        for m in 0..nh {
            for j in 1..times.len().saturating_sub(1) {
                let (a, b, c) = (vals[(j - 1) * nh + m], vals[j * nh + m], vals[(j + 1) * nh + m]);
                for s in [1.0, -1.0] {
                    if s * b > s * a && s * b >= s * c {
                        let (ta, tc) = (times[j - 1], times[j + 1]);
                        let (tm, v) = golden_max(
                            |tau| {
                                self.dense_at(tau, h, t_next, y_new, &mut ys);
                                self.problem.helpers(tau, &ys, &mut hv);
                                s * hv[m]
                            },
                            ta.min(tc),
                            ta.max(tc),
                        );
                        self.peaks[n + m].see(s * v, tm);
                    }
                }
            }
        }
    }

    fn finish(mut self) -> Run {
        if let Some(at) = &self.settings.at {
            let _ = at;
        } else if self.out_t.last() != Some(&self.t) {
            let (t, y) = (self.t, self.y.clone());
            self.record(t, &y);
            if self.out_t.len() > self.settings.max_output {
                self.decimate();
            }
        }
        let names = self.problem.state_names().iter().chain(self.problem.helper_names());
        let extrema = self
            .peaks
            .iter()
            .zip(names)
            .map(|(p, name)| Extremum { name: name.clone(), max: p.max, t_max: p.t_max, min: p.min, t_min: p.t_min })
            .collect();
        Run {
            t: self.out_t,
            states: self.out_y,
            helpers: self.out_h,
            events: self.events,
            extrema,
            diagnostics: self.diagnostics,
            status: self.status.unwrap_or(Status::Finished),
            stats: self.stats,
        }
    }
}

fn fires(c: Crossing, rising: bool) -> bool {
    match c {
        Crossing::Rising => rising,
        Crossing::Falling => !rising,
        Crossing::Either => true,
    }
}

fn failure_time(e: &SolveError) -> Option<f64> {
    match e {
        SolveError::InvalidSettings { .. } => None,
        SolveError::NonFinite { t, .. }
        | SolveError::BlowUp { t, .. }
        | SolveError::StepSizeTooSmall { t, .. }
        | SolveError::MaxSteps { t, .. }
        | SolveError::StepFailed { t, .. } => Some(*t),
    }
}

/// Order `k` of a method's error estimate, for the controller.
fn error_order(m: &MethodInfo) -> u32 {
    match m.tableau {
        Some(t) if t.error_order > 0 => t.error_order,
        _ => m.embedded_order.map(|o| o + 1).unwrap_or(m.order),
    }
}

/// The controller constants of a method: its tableau's, or the general ones.
fn step_control(m: &MethodInfo) -> StepControl {
    m.tableau.map(|t| t.control).unwrap_or(StepControl::GENERAL)
}

/// Edge of the stability region on the negative real axis (0 when unknown),
/// computed once per method.
fn stability_limit(m: &MethodInfo) -> f64 {
    static LIMITS: std::sync::OnceLock<Vec<(&'static str, f64)>> = std::sync::OnceLock::new();
    let limits = LIMITS.get_or_init(|| {
        methods()
            .iter()
            .map(|m| (m.id, m.tableau.map(|t| boundary_radius(&t.stability_polynomial(), std::f64::consts::PI)).unwrap_or(0.0)))
            .collect()
    });
    limits.iter().find(|(id, _)| *id == m.id).map(|(_, l)| *l).unwrap_or(0.0)
}
