//! The method comparison behind the page's comparison view: one quantity of a
//! sheet solved by several fixed-step methods at h, h/2, h/4, … beside an
//! adaptive reference, with each run's end value, its difference from the
//! reference, and the observed order fitted on a log-log plot of error
//! against h.
//!
//! What is compared depends on how the reference run ends. A run that
//! finishes is compared by the quantity at the end. A run that a `stop when`
//! ends is compared by its event times (the stop time and every other
//! event's), since the stop condition pins the quantity there: its
//! differences would be rounding noise. Errors at rounding level, or under
//! what the reference itself resolves, are said so in words and fit no order.
//!
//! Everything goes through [`super::solve`], so the comparison sees exactly
//! what a user of the JS API sees.

use serde::{Deserialize, Serialize};

use super::{solve, ApiError, RunReport, RunRequest};

/// A request setting out of range, as the API reports it.
pub(super) fn invalid(field: &'static str, reason: impl Into<String>) -> ApiError {
    ApiError::Settings(crate::solve::invalid(field, reason))
}

/// What to compare.
#[derive(Clone, Debug, Deserialize)]
#[serde(rename_all = "camelCase", default)]
pub struct CompareRequest {
    /// The quantity (state or helper) to overlay and tabulate; the first state when absent.
    pub quantity: Option<String>,
    /// Fixed-step method ids (default Euler, Heun, RK4).
    pub methods: Vec<String>,
    /// The largest step; the others are h/2, h/4, … Default: a 40th of the span.
    pub step: Option<f64>,
    /// How many step sizes (default 3: h, h/2, h/4; 2 to 8).
    pub levels: usize,
    /// Tolerance of the adaptive reference (rtol; atol is 1e-3 of it). Default 1e-11.
    pub reference_rtol: f64,
}

impl Default for CompareRequest {
    fn default() -> Self {
        CompareRequest {
            quantity: None,
            methods: vec!["euler".into(), "heun".into(), "rk4".into()],
            step: None,
            levels: 3,
            reference_rtol: 1e-11,
        }
    }
}

/// One run of the comparison.
#[derive(Clone, Debug, Serialize)]
#[serde(rename_all = "camelCase")]
pub struct CompareRun {
    /// Method id.
    pub method: String,
    /// Step size; `None` for the adaptive reference.
    pub step: Option<f64>,
    /// Output times.
    pub t: Vec<f64>,
    /// The quantity at `t`.
    pub y: Vec<f64>,
    /// The run's last time.
    pub end_t: f64,
    /// The quantity at the end.
    pub end: f64,
    /// `end` minus the reference's end value, or for a comparison of event
    /// times the stop time minus the reference's (0 for the reference).
    pub difference: f64,
    /// The run's events in time order (the stop included).
    pub events: Vec<CompareEvent>,
    /// The compared error: `|difference|` for the end value, the largest
    /// difference from the reference's event times for a comparison of
    /// event times (0 for the reference).
    pub error: f64,
    /// Events of the reference this run lacks plus events it has that the
    /// reference lacks (matched by condition and by occurrence); always 0
    /// when the end value is compared.
    pub mismatched: usize,
    /// Right-hand-side evaluations.
    pub rhs_evals: u64,
    /// The run's status (`finished`, `stopped`, `failed`).
    pub status: String,
}

/// One event of a compared run.
#[derive(Clone, Debug, Serialize)]
#[serde(rename_all = "camelCase")]
pub struct CompareEvent {
    /// The condition as written in the sheet.
    pub name: String,
    /// When it happened.
    pub t: f64,
}

/// A method's observed order: the least-squares slope of log|error| against log h.
#[derive(Clone, Debug, Serialize)]
#[serde(rename_all = "camelCase")]
pub struct OrderFit {
    /// Method id.
    pub method: String,
    /// The step sizes used in the fit.
    pub steps: Vec<f64>,
    /// The compared error ([`CompareRun::error`]) at each step.
    pub errors: Vec<f64>,
    /// The fitted slope, over the errors that the comparison resolves (above
    /// rounding and above the reference's own accuracy, from runs that have
    /// the reference's events); `None` with fewer than two.
    pub slope: Option<f64>,
    /// Why there is no slope: `rounding` (every error at rounding level),
    /// `reference` (under what the reference resolves), `events` (runs that
    /// miss or add events), `few` (fewer than two usable errors).
    pub no_slope: Option<&'static str>,
}

/// What the comparison measured.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum Measure {
    /// The compared quantity at the end of the run.
    End,
    /// The event times of a run that a `stop when` ends: the stop time and
    /// every other event's.
    EventTimes,
}

/// The whole comparison.
#[derive(Clone, Debug, Serialize)]
#[serde(rename_all = "camelCase")]
pub struct CompareReport {
    /// The compared quantity.
    pub quantity: String,
    /// The independent variable's name.
    pub independent: String,
    /// The adaptive reference run.
    pub reference: CompareRun,
    /// The fixed-step runs, method by method, largest h first.
    pub runs: Vec<CompareRun>,
    /// One fit per method.
    pub fits: Vec<OrderFit>,
    /// What the errors measure.
    pub measure: Measure,
    /// The same in words, for a table heading or an axis: `T at the end`,
    /// `the stop time (h < 0.05)`.
    pub measured: String,
    /// `rounding` when every run agrees with the reference to rounding,
    /// `reference` when every run agrees with it to within its own accuracy;
    /// absent otherwise.
    pub agreement: Option<&'static str>,
    /// What was compared and how to read it, in a sentence or two.
    pub note: String,
}

/// Relative size under which a difference is rounding: a thousand units in
/// the last place of the values compared (each of the runs here takes up to
/// a few hundred steps, each rounding once or more; common practice, no
/// source).
const ROUNDING: f64 = 1000.0 * f64::EPSILON;
/// A difference under this many times the reference's relative tolerance is
/// within the reference's own error, and is not fitted.
const REFERENCE_RESOLVES: f64 = 10.0;

/// The least-squares slope of `ln y` against `ln x` over the pairs where both
/// are positive and finite; `None` with fewer than two such pairs.
pub fn log_log_slope(x: &[f64], y: &[f64]) -> Option<f64> {
    crate::study::convergence::fitted_order(x, y)
}

fn pick(report: &RunReport, quantity: &str, method: &str, step: Option<f64>) -> CompareRun {
    let y = report.values.0.iter().find(|(k, _)| k == quantity).map(|(_, v)| v.clone()).unwrap_or_default();
    let end_t = report.t.last().copied().unwrap_or(f64::NAN);
    let end = y.last().copied().unwrap_or(f64::NAN);
    CompareRun {
        method: method.to_string(),
        step,
        t: report.t.clone(),
        y,
        end_t,
        end,
        difference: 0.0,
        events: report.events.iter().map(|e| CompareEvent { name: e.name.clone(), t: e.t }).collect(),
        error: 0.0,
        mismatched: 0,
        rhs_evals: report.stats.rhs_evals,
        status: report.status.to_string(),
    }
}

/// Run the comparison of `sheet` under the base settings `base` (its end,
/// output and step cap are used). `progress(done, total)` is called after
/// each run.
pub fn compare(
    sheet: &str,
    base: &RunRequest,
    req: &CompareRequest,
    progress: &mut dyn FnMut(usize, usize),
) -> Result<CompareReport, ApiError> {
    let levels = req.levels.clamp(2, 8);
    let total = 1 + req.methods.len() * levels;
    let reference_req = RunRequest {
        method: Some("dormand-prince-5".into()),
        step: None,
        tolerance: super::ToleranceRequest { relative: Some(req.reference_rtol), absolute: Some(req.reference_rtol * 1e-3) },
        at: None,
        ..base.clone()
    };
    let reference_report = solve(sheet, &reference_req)?;
    progress(1, total);
    let quantity = match &req.quantity {
        Some(q) if reference_report.values.0.iter().any(|(k, _)| k == q) => q.clone(),
        Some(q) => return Err(invalid("quantity", format!("the sheet has no state or helper named `{q}`"))),
        None => reference_report.states.first().cloned().unwrap_or_default(),
    };
    let reference = pick(&reference_report, &quantity, "dormand-prince-5", None);
    let t0 = reference_report.t.first().copied().unwrap_or(0.0);
    let span = (base.to.unwrap_or(reference.end_t) - t0).abs();
    let h0 = match req.step {
        Some(h) if h.is_finite() && h > 0.0 => h,
        Some(_) => return Err(invalid("step", "the comparison's step must be a positive number")),
        None => span / 40.0,
    };
    if !(h0 > 0.0) {
        return Err(invalid("to", "the run has no length to compare over"));
    }
    let measure = if reference_report.status == "stopped" { Measure::EventTimes } else { Measure::End };
    let scale = Scale::of(measure, &reference, t0, req.reference_rtol);
    let mut runs = Vec::new();
    let mut fits = Vec::new();
    let mut done = 1;
    for method in &req.methods {
        let mut steps = Vec::new();
        let mut errors = Vec::new();
        let mut usable = Vec::new();
        for k in 0..levels {
            let h = h0 / f64::from(1u32 << k);
            let r = RunRequest { method: Some(method.clone()), step: Some(h), at: None, ..base.clone() };
            let report = solve(sheet, &r)?;
            let mut run = pick(&report, &quantity, method, Some(h));
            measure_run(&mut run, &reference, measure);
            steps.push(h);
            errors.push(run.error);
            usable.push(run.mismatched == 0);
            runs.push(run);
            done += 1;
            progress(done, total);
        }
        fits.push(fit(method, steps, errors, &usable, &scale));
    }
    let agreement = ["rounding", "reference"].into_iter().find(|&level| {
        fits.iter().all(|f| f.errors.iter().all(|&e| e <= scale.floor(level)))
    });
    let measured = measured_words(measure, &quantity, &reference);
    let note = note(measure, &measured, agreement, &fits);
    Ok(CompareReport {
        quantity,
        independent: reference_report.independent.clone(),
        reference,
        runs,
        fits,
        measure,
        measured,
        agreement,
        note,
    })
}

/// The sizes against which a comparison's errors are judged.
struct Scale {
    /// Errors at or under this are rounding.
    rounding: f64,
    /// Errors at or under this are within the reference's own error.
    reference: f64,
}

impl Scale {
    fn of(measure: Measure, reference: &CompareRun, t0: f64, reference_rtol: f64) -> Self {
        // The size of what is compared: the quantity over the whole run, or
        // the times.
        let size = match measure {
            Measure::End => reference.y.iter().filter(|v| v.is_finite()).fold(0.0f64, |m, v| m.max(v.abs())),
            Measure::EventTimes => reference.end_t.abs().max(t0.abs()),
        }
        .max(f64::MIN_POSITIVE);
        let rounding = ROUNDING * size;
        Scale { rounding, reference: (REFERENCE_RESOLVES * reference_rtol * size).max(rounding) }
    }

    fn floor(&self, level: &str) -> f64 {
        if level == "rounding" {
            self.rounding
        } else {
            self.reference
        }
    }
}

/// Fill in `run`'s difference, error and mismatched events against `reference`.
fn measure_run(run: &mut CompareRun, reference: &CompareRun, measure: Measure) {
    match measure {
        Measure::End => {
            run.difference = run.end - reference.end;
            run.error = run.difference.abs();
        }
        Measure::EventTimes => {
            run.difference = run.end_t - reference.end_t;
            // Match the k-th crossing of each condition with the reference's k-th.
            let nth = |events: &[CompareEvent], i: usize| events[..i].iter().filter(|e| e.name == events[i].name).count();
            let mut error = 0.0f64;
            let mut matched = 0;
            for (i, e) in reference.events.iter().enumerate() {
                let k = nth(&reference.events, i);
                let mine = (0..run.events.len()).find(|&j| run.events[j].name == e.name && nth(&run.events, j) == k);
                if let Some(j) = mine {
                    error = error.max((run.events[j].t - e.t).abs());
                    matched += 1;
                }
            }
            run.error = error;
            run.mismatched = (reference.events.len() - matched) + (run.events.len() - matched);
        }
    }
}

/// The order fit of one method over the errors the comparison resolves.
fn fit(method: &str, steps: Vec<f64>, errors: Vec<f64>, usable: &[bool], scale: &Scale) -> OrderFit {
    let keep: Vec<usize> = (0..steps.len()).filter(|&i| usable[i] && errors[i] > scale.reference && errors[i].is_finite()).collect();
    let slope = if keep.len() >= 2 {
        log_log_slope(&keep.iter().map(|&i| steps[i]).collect::<Vec<_>>(), &keep.iter().map(|&i| errors[i]).collect::<Vec<_>>())
    } else {
        None
    };
    let no_slope = match slope {
        Some(_) => None,
        None if errors.iter().all(|&e| e <= scale.rounding) => Some("rounding"),
        None if errors.iter().all(|&e| e <= scale.reference) => Some("reference"),
        None if usable.iter().any(|u| !u) => Some("events"),
        None => Some("few"),
    };
    OrderFit { method: method.to_string(), steps, errors, slope, no_slope }
}

/// What was measured, in words.
fn measured_words(measure: Measure, quantity: &str, reference: &CompareRun) -> String {
    match measure {
        Measure::End => format!("{quantity} at the end"),
        Measure::EventTimes => {
            let stop = reference.events.last().map(|e| e.name.as_str()).unwrap_or("stop");
            if reference.events.len() > 1 {
                format!("the stop time ({stop}) and every event time")
            } else {
                format!("the stop time ({stop})")
            }
        }
    }
}

/// The view's sentence on what was compared and what the fits say.
fn note(measure: Measure, measured: &str, agreement: Option<&str>, fits: &[OrderFit]) -> String {
    let what = match measure {
        Measure::End => format!("Compared: {measured}, each run against the adaptive reference."),
        Measure::EventTimes => format!(
            "The run ends on its stop condition, which pins the compared quantity there; compared instead: {measured}, each run against the adaptive reference (the error of a run is its largest difference in an event time)."
        ),
    };
    let verdict = match agreement {
        Some("rounding") => " All methods agree with the reference to rounding at every step tried: there is no error to measure, so no order is fitted.".to_string(),
        Some(_) => " All methods agree with the reference to within its own accuracy at every step tried: the differences cannot be told from the reference's error, so no order is fitted.".to_string(),
        None => {
            let name = |f: &OrderFit| crate::solve::method(&f.method).map_or(f.method.clone(), |m| m.name.to_string());
            let quiet: Vec<String> = fits.iter().filter(|f| matches!(f.no_slope, Some("rounding") | Some("reference"))).map(name).collect();
            let missed: Vec<String> = fits.iter().filter(|f| f.no_slope == Some("events")).map(name).collect();
            let mut s = String::new();
            if !quiet.is_empty() {
                s += &format!(" No order is fitted for {}: the errors are too small to measure.", quiet.join(", "));
            }
            if !missed.is_empty() {
                s += &format!(" No order is fitted for {}: runs miss or add events.", missed.join(", "));
            }
            s
        }
    };
    what + &verdict
}

#[cfg(test)]
mod tests {
    use super::*;

    const COOLING: &str = "T' = -0.0021*(T - 22)\nT(0) = 180\n";

    #[test]
    fn slope_of_exact_power_laws() {
        // y = 3 h^2 exactly: slope 2.
        let h = [0.1, 0.05, 0.025];
        let e: Vec<f64> = h.iter().map(|h| 3.0 * h * h).collect();
        assert!((log_log_slope(&h, &e).unwrap() - 2.0).abs() < 1e-12);
        // Zero and NaN errors are left out; one usable pair is not enough.
        assert_eq!(log_log_slope(&h, &[0.0, f64::NAN, 1.0]), None);
    }

    #[test]
    fn comparison_tabulates_every_method_and_step_against_the_reference() {
        let base = RunRequest { to: Some(1200.0), ..Default::default() };
        let mut calls = Vec::new();
        let rep = compare(COOLING, &base, &CompareRequest::default(), &mut |d, n| calls.push((d, n))).unwrap();
        assert_eq!(rep.independent, "t");
        assert_eq!(rep.quantity, "T");
        assert_eq!(rep.runs.len(), 9);
        assert_eq!(calls.last(), Some(&(10, 10)));
        assert_eq!(rep.fits.len(), 3);
        // Analytic: T(1200) = 22 + 158·exp(-0.0021·1200).
        let exact = 22.0 + 158.0 * (-0.0021f64 * 1200.0).exp();
        assert!((rep.reference.end - exact).abs() < 1e-6, "{} vs {exact}", rep.reference.end);
        for r in &rep.runs {
            assert!((r.end_t - 1200.0).abs() < 1e-9);
            assert!((r.difference - (r.end - rep.reference.end)).abs() == 0.0);
        }
        assert_eq!(rep.runs[0].step, Some(30.0));
        assert_eq!(rep.runs[2].step, Some(7.5));
    }

    #[test]
    fn observed_orders_are_those_of_the_methods() {
        // Common practice, no source: the global error of a p-th order method
        // falls like h^p, so Euler, Heun and RK4 show slopes 1, 2 and 4.
        let base = RunRequest { to: Some(1200.0), ..Default::default() };
        let req = CompareRequest { levels: 4, ..Default::default() };
        let rep = compare(COOLING, &base, &req, &mut |_, _| {}).unwrap();
        for (fit, order) in rep.fits.iter().zip([1.0, 2.0, 4.0]) {
            let slope = fit.slope.unwrap();
            assert!((slope - order).abs() < 0.2, "{}: slope {slope}", fit.method);
        }
    }

    #[test]
    fn a_two_state_sheet_compares_the_chosen_quantity() {
        // Undamped oscillator x'' = -x from x = 1: x(t) = cos t (analytic).
        let sheet = "x'' = -x\nx(0) = 1\nx'(0) = 0\n";
        let base = RunRequest { to: Some(3.0), ..Default::default() };
        let req = CompareRequest { quantity: Some("x'".into()), ..Default::default() };
        let rep = compare(sheet, &base, &req, &mut |_, _| {}).unwrap();
        assert_eq!(rep.quantity, "x'");
        assert!((rep.reference.end + 3f64.sin()).abs() < 1e-8);
        let rk4_fine = rep.runs.iter().filter(|r| r.method == "rk4").last().unwrap();
        assert!(rk4_fine.difference.abs() < 1e-6);
    }

    #[test]
    fn an_unknown_quantity_is_a_settings_error() {
        let base = RunRequest { to: Some(10.0), ..Default::default() };
        let req = CompareRequest { quantity: Some("nope".into()), ..Default::default() };
        assert!(matches!(compare(COOLING, &base, &req, &mut |_, _| {}), Err(ApiError::Settings(_))));
    }
}
