//! The fixed-step convergence study: run a method at `h, h/2, h/4, h/8`,
//! compare the observed order with the theoretical one, extrapolate, and say
//! which step a target accuracy needs.

use serde::Serialize;

use super::check::{label, summary, Kind};
use super::convergence::{fitted_order, Ladder};
use super::digits::{error_text, plain, with_digits};
use crate::problem::Problem;
use crate::solve::{self, Run, Settings, SolveError, Status, Tolerance};

/// One quantity under one method across the step ladder.
#[derive(Clone, Debug, PartialEq, Serialize)]
#[serde(rename_all = "camelCase")]
pub struct Line {
    /// Method id.
    pub method: String,
    /// Method name.
    pub method_name: String,
    /// Theoretical order.
    pub order: u32,
    /// Which quantity.
    pub kind: Kind,
    /// The quantity's name (state or event).
    pub name: String,
    /// The quantity in words.
    pub label: String,
    /// Steps, largest first.
    pub h: Vec<f64>,
    /// The quantity at each step.
    pub values: Vec<f64>,
    /// Error at each step: against the reference run when there is one,
    /// otherwise against the Richardson limit.
    pub errors: Vec<f64>,
    /// Observed orders from each consecutive triple of values, coarse to fine.
    pub observed: Vec<Option<f64>>,
    /// Slope of the least-squares line through `log(errors)` against `log(h)`.
    pub fitted: Option<f64>,
    /// The Richardson-extrapolated value from the two finest steps.
    pub extrapolated: f64,
    /// Its error estimate.
    pub extrapolated_error: f64,
    /// Its actual error against the reference, when there is one.
    pub extrapolated_true_error: Option<f64>,
    /// The step that should reach the target accuracy, when one was asked for.
    pub step_for_target: Option<f64>,
    /// Whether the observed order is far from theory.
    pub off_theory: bool,
    /// The finding in words.
    pub sentence: String,
}

/// A whole convergence study.
#[derive(Clone, Debug, PartialEq, Serialize)]
#[serde(rename_all = "camelCase")]
pub struct Sweep {
    /// The independent variable's name.
    pub independent: String,
    /// One line per method and quantity.
    pub lines: Vec<Line>,
    /// How the errors were measured.
    pub reference: String,
    /// The target error asked for.
    pub target: Option<f64>,
    /// The largest step that meets the target for every quantity, per method `(id, h)`.
    pub steps_for_target: Vec<(String, f64)>,
    /// General findings in words (why an order is off, runs that failed).
    pub notes: Vec<String>,
    /// Right-hand-side evaluations spent.
    pub work: u64,
}

/// Halvings of the study: `h, h/2, h/4, h/8`.
pub const LEVELS: usize = 4;

/// Run the convergence study of `methods` (fixed-step, or adaptive ones run at a
/// fixed step) from the step `settings.step` down by halves, on the final
/// values of the states and the event times. `target` is an absolute error the
/// user wants; the study says which step reaches it.
pub fn sweep(
    problem: &mut dyn Problem,
    t0: f64,
    y0: &[f64],
    settings: &Settings,
    methods: &[String],
    target: Option<f64>,
    independent: &str,
) -> Result<Sweep, SolveError> {
    let h0 = settings.step.ok_or(SolveError::InvalidSettings { field: "step", reason: "a convergence study needs a step h".into() })?;
    let base = Settings { at: None, extrema: false, ..settings.clone() };
    let mut work = 0;
    let mut notes = Vec::new();
    // A tight adaptive reference.
    let reference = solve::solve(
        problem,
        t0,
        y0,
        &Settings { method: "dormand-prince-8".into(), step: None, tol: Tolerance { relative: 1e-12, absolute: 1e-14 }, ..base.clone() },
    )?;
    work += reference.stats.rhs_evals;
    let ref_ok = !matches!(reference.status, Status::Failed(_));
    let ref_sum = if ref_ok { summary(problem, &reference) } else { Vec::new() };
    let reference_text = if ref_ok {
        "errors against a Dormand–Prince 8(5,3) run at relative tolerance 1e-12".to_string()
    } else {
        "errors against the Richardson limit (the tight reference run failed)".to_string()
    };
    let names: Vec<String> = problem.state_names().to_vec();
    let mut lines = Vec::new();
    let mut steps_for_target = Vec::new();
    for id in methods {
        let info = solve::method(id).ok_or_else(|| SolveError::InvalidSettings { field: "method", reason: format!("there is no method `{id}`") })?;
        let mut runs: Vec<Run> = Vec::with_capacity(LEVELS);
        let hs: Vec<f64> = (0..LEVELS).map(|k| h0 / 2f64.powi(k as i32)).collect();
        for &h in &hs {
            let r = solve::solve(problem, t0, y0, &Settings { method: id.clone(), step: Some(h), max_steps: base.max_steps.max(16 * ((base.to - t0).abs() / h) as u64), ..base.clone() })?;
            work += r.stats.rhs_evals;
            if let Status::Failed(e) = &r.status {
                notes.push(format!("{} with h = {} failed: {e}", info.name, plain(h)));
            }
            runs.push(r);
        }
        // Only the steps whose runs finished take part.
        let good: Vec<usize> = (0..LEVELS).filter(|&i| !matches!(runs[i].status, Status::Failed(_))).collect();
        if good.len() < 3 || good[0] + good.len() != LEVELS {
            notes.push(format!(
                "{}: too few of the steps h, h/2, h/4, h/8 finished for an order to be observed; start from a smaller h.",
                info.name
            ));
            continue;
        }
        let hs: Vec<f64> = good.iter().map(|&i| hs[i]).collect();
        let sums: Vec<_> = good.iter().map(|&i| summary(problem, &runs[i])).collect();
        let mut worst_step: Option<f64> = None;
        for (k, _) in sums[0].iter().filter(|(k, _)| k.kind == Kind::EventTime || (k.kind == Kind::Final && names.contains(&k.name))) {
            let vals: Option<Vec<f64>> = sums.iter().map(|s| s.iter().find(|(x, _)| x == k).map(|p| p.1)).collect();
            let Some(vals) = vals else { continue };
            let l = Ladder::new(hs.clone(), vals.clone(), info.order);
            let exact = ref_sum.iter().find(|(x, _)| x == k).map(|p| p.1);
            let errors: Vec<f64> = match exact {
                Some(x) => vals.iter().map(|v| (v - x).abs()).collect(),
                None => l.errors.clone(),
            };
            let at_rounding = errors.last().is_some_and(|e| *e <= 1e3 * f64::EPSILON * vals[vals.len() - 1].abs().max(1e-300));
            let off = l.off_theory() && !at_rounding;
            let step = target.and_then(|t| l.step_for(t));
            if let Some(s) = step {
                worst_step = Some(worst_step.map_or(s, |w: f64| w.min(s)));
            }
            let what = label(k);
            let seen = l.observed.map_or("could not be observed (the differences do not shrink steadily)".to_string(), |q| format!("is {}", with_digits(q, 2)));
            let mut sentence = format!(
                "{what} with {}: the observed order {seen}, theory says {}; the Richardson limit is {} (± {}).",
                info.name,
                info.order,
                with_digits(l.extrapolated, 10),
                error_text(l.extrapolated_error)
            );
            if at_rounding {
                sentence.push_str(" The finest steps are already at rounding level, so the order there says nothing.");
            } else if off {
                sentence.push_str(&format!(" That is far from theory: {}", off_theory_cause(problem, &l)));
            }
            if let (Some(t), Some(s)) = (target, step) {
                sentence.push_str(&format!(" An error of {} needs h ≈ {}.", plain(t), with_digits(s, 2)));
            }
            lines.push(Line {
                method: info.id.into(),
                method_name: info.name.into(),
                order: info.order,
                kind: k.kind,
                name: k.name.clone(),
                label: what,
                fitted: fitted_order(&hs, &errors),
                h: hs.clone(),
                values: vals,
                errors,
                observed: l.observed_all.clone(),
                extrapolated: l.extrapolated,
                extrapolated_error: l.extrapolated_error,
                extrapolated_true_error: exact.map(|x| (l.extrapolated - x).abs()),
                step_for_target: step,
                off_theory: off,
                sentence,
            });
        }
        if let Some(w) = worst_step {
            steps_for_target.push((info.id.to_string(), w));
        }
    }
    Ok(Sweep { independent: independent.into(), lines, reference: reference_text, target, steps_for_target, notes, work })
}

/// Why an observed order may be off, in words, most likely cause first.
fn off_theory_cause(problem: &mut dyn Problem, l: &Ladder) -> String {
    let rising = l.observed_all.iter().flatten().collect::<Vec<_>>();
    let approaching = rising.len() >= 2 && (rising[rising.len() - 1] - l.order as f64).abs() < (rising[0] - l.order as f64).abs();
    if problem.switch_count() > 0 {
        "the rates have a kink or jump (step, sign, abs, min/max, clamp or floor), and a fixed step that straddles it loses order. Refine further, or use an adaptive method, which stops at each switch.".into()
    } else if approaching {
        "the orders move toward theory as h shrinks, so the largest steps are outside the range where the error behaves like C·hᵖ. Trust only the finer steps.".into()
    } else {
        "usually a discontinuity or a singularity of the rates along the solution (a square root at zero, a division near zero), or steps still too large for the asymptotic range.".into()
    }
}
