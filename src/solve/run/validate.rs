//! The settings and inputs of a run, checked before it starts.

use crate::problem::Problem;
use crate::solve::methods::{method, methods, MethodInfo};
use crate::solve::stepper::Tolerance;
use crate::solve::{num, Diagnostic, Level, Settings, SolveError};

/// Hard ceilings on the caps, whatever the settings ask for, so that no
/// request can make a run endless or its output exhaust memory: steps,
/// output points, stored output values (points × (states + helpers)), and
/// recorded event crossings.
pub(super) const CEILING_STEPS: u64 = 100_000_000;
/// Most output points a run keeps, whatever the settings ask for (see [`CEILING_STEPS`]).
pub const CEILING_OUTPUT: usize = 1_000_000;
/// See [`CEILING_STEPS`].
const CEILING_VALUES: usize = 10_000_000;
/// See [`CEILING_STEPS`].
const CEILING_EVENTS: usize = 1_000_000;

/// An [`SolveError::InvalidSettings`] for `field`.
pub fn invalid(field: &'static str, reason: impl Into<String>) -> SolveError {
    SolveError::InvalidSettings { field, reason: reason.into() }
}

/// Check the settings and inputs of a run: the method, its tolerances (a
/// relative tolerance below 1e-14 raised to it, with a note), and the caps.
/// Fields are named as the JS API names them (`tolerance.relative`,
/// `stepLimit`, …). Returns the method, the
/// tolerances to run with, the notes, and the output cap lowered to keep the
/// stored values within [`CEILING_VALUES`].
pub(super) fn validate(
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
