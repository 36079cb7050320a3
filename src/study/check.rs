//! The accuracy check of one run: re-solve it more accurately, compare every
//! summary quantity, and say in plain words how many digits of each can be
//! trusted.
//!
//! - An adaptive run is re-solved with rtol and atol divided by 100. Its
//!   global error then falls by well over ten (a method of order `p` under
//!   tolerance proportionality gains a factor `100^(p/(p+1))`), so the
//!   difference between the two runs estimates the first run's error.
//! - A fixed-step run is re-solved with `h/2` and `h/4`; the three values give
//!   the observed order and the Richardson limit, and the distance from that
//!   limit is the error estimate ([`super::convergence::Ladder`]).

use super::convergence::Ladder;
use super::digits::{error_text, plain, trusted_digits, value_text, with_digits};
use super::pitfalls::{self, Context};
use super::report::{Pitfall, Severity};
pub use super::report::{label, list, CrossCheck, Key, Kind, Method, Options, Quantity, Report, Stability};
use crate::problem::Problem;
use crate::solve::{self, Run, Settings, SolveError, Status};

/// The summary quantities of a run, by key. Extrema at the very start or end
/// of the run are left out: they are the initial or final values, not peaks.
pub fn summary(problem: &dyn Problem, run: &Run) -> Vec<(Key, f64)> {
    let mut out = Vec::new();
    let Some(&t_end) = run.t.last() else { return out };
    let t_start = run.t[0];
    let names: Vec<String> = problem.state_names().iter().chain(problem.helper_names()).cloned().collect();
    for (name, series) in names.iter().zip(run.states.iter().chain(&run.helpers)) {
        if let Some(&v) = series.last() {
            out.push((Key { kind: Kind::Final, name: name.clone(), occurrence: 0 }, v));
        }
    }
    let mut seen: Vec<usize> = Vec::new();
    for e in &run.events {
        let occurrence = seen.iter().filter(|&&i| i == e.index).count();
        seen.push(e.index);
        out.push((Key { kind: Kind::EventTime, name: e.name.clone(), occurrence }, e.t));
    }
    let span = (t_end - t_start).abs();
    let inside = |t: f64| (t - t_start).abs() > 1e-9 * span && (t - t_end).abs() > 1e-9 * span;
    for x in &run.extrema {
        if inside(x.t_max) {
            out.push((Key { kind: Kind::Peak, name: x.name.clone(), occurrence: 0 }, x.max));
            out.push((Key { kind: Kind::PeakTime, name: x.name.clone(), occurrence: 0 }, x.t_max));
        }
        if inside(x.t_min) {
            out.push((Key { kind: Kind::Trough, name: x.name.clone(), occurrence: 0 }, x.min));
            out.push((Key { kind: Kind::TroughTime, name: x.name.clone(), occurrence: 0 }, x.t_min));
        }
    }
    out
}

/// The smallest rtol the check tightens to (the driver floors rtol at 1e-14).
const RTOL_FLOOR: f64 = 1e-13;

/// Factor over the tolerance beyond which a disagreement is flagged: global
/// errors of a well-posed problem usually stay within 10 to 100 times the
/// local tolerance (common practice, no source).
const DISAGREE_FACTOR: f64 = 100.0;

/// How a quantity's sentence begins: "event `h < 1` at t = ", "`h` at the end = ".
fn lead(k: &Key, independent: &str) -> String {
    let what = label(k);
    if k.kind == Kind::EventTime {
        format!("{what} at {independent} = ")
    } else {
        format!("{what} = ")
    }
}

/// The sentence for one quantity: "event `h < 1` at t = 412.38, good to
/// about 4 digits (± 0.03)".
pub fn sentence(k: &Key, independent: &str, value: f64, error: Option<f64>, negligible: Option<f64>) -> String {
    let lead = lead(k, independent);
    match error {
        None => format!("{lead}{}: its accuracy could not be checked", with_digits(value, 6)),
        Some(e) if negligible.is_some() => format!(
            "{lead}{}: zero to within the run's accuracy (± {}; it reaches {} over the run)",
            with_digits(value, 1),
            error_text(e),
            with_digits(negligible.unwrap_or(0.0), 3)
        ),
        Some(e) => {
            let d = trusted_digits(value, e);
            let v = value_text(value, e);
            if d == 0 {
                format!("{lead}{v}, not even its first digit can be trusted (± {})", error_text(e))
            } else if d >= 12 {
                format!("{lead}{v}, good to all the digits shown")
            } else {
                format!("{lead}{v}, good to about {d} digit{} (± {})", if d == 1 { "" } else { "s" }, error_text(e))
            }
        }
    }
}

fn status_word(s: &Status) -> &'static str {
    match s {
        Status::Finished => "finished",
        Status::Stopped { .. } => "stopped",
        Status::Failed(_) => "failed",
    }
}

/// The tolerance-implied size of a quantity's error, `rtol·scale + atol`,
/// where a time's scale is the run's length.
fn implied(tol: &solve::Tolerance, k: &Key, value: f64, span: f64) -> f64 {
    if k.kind.is_time() {
        tol.relative * span.max(value.abs()) + tol.absolute
    } else {
        tol.relative * value.abs() + tol.absolute
    }
}

fn study_settings(s: &Settings) -> Settings {
    Settings { at: None, ..s.clone() }
}

/// Check the accuracy of the run of `problem` from `(t0, y0)` with `settings`.
/// Solves it (with every accepted step as output), re-solves it more
/// accurately, and looks for the pitfalls of [`pitfalls`].
pub fn check(
    problem: &mut dyn Problem,
    t0: f64,
    y0: &[f64],
    settings: &Settings,
    independent: &str,
    opts: &Options,
) -> Result<Report, SolveError> {
    let info = solve::method(&settings.method).ok_or_else(|| SolveError::InvalidSettings {
        field: "method",
        reason: format!("there is no method `{}`", settings.method),
    })?;
    let base_settings = study_settings(settings);
    let run = solve::solve(problem, t0, y0, &base_settings)?;
    let mut work = run.stats.rhs_evals;
    let fixed = !info.adaptive || settings.step.is_some();
    let base = summary(problem, &run);
    let span = (settings.to - t0).abs();
    let mut quantities = Vec::new();
    let mut alarm_reasons: Vec<String> = Vec::new();
    let how;
    let mut checks: Vec<Run> = Vec::new();
    if fixed {
        let h = settings.step.unwrap_or(0.0);
        how = format!("re-solved with the step halved (h = {}) and quartered (h = {})", plain(h / 2.0), plain(h / 4.0));
        for div in [2.0, 4.0] {
            let r = solve::solve(problem, t0, y0, &Settings { step: Some(h / div), max_steps: settings.max_steps.saturating_mul(4), ..base_settings.clone() })?;
            work += r.stats.rhs_evals;
            checks.push(r);
        }
    } else {
        // Tolerances that ask for no digit are held to ones that do before
        // tightening (the `tolerance-dwarfs-values` pitfall names them).
        let start = pitfalls::sane(settings.tol, pitfalls::value_scale(&run, y0));
        let tight = |f: f64| solve::Tolerance { relative: (start.relative / f).max(RTOL_FLOOR), absolute: start.absolute / f };
        let tol = tight(100.0);
        let mut text = if start == settings.tol {
            format!("re-solved with the tolerances 100 times tighter (relative tolerance {}, absolute tolerance {})", plain(tol.relative), plain(tol.absolute))
        } else {
            format!(
                "re-solved at relative tolerance {}, absolute tolerance {}: 100 times tighter than relative tolerance {}, absolute tolerance {}, which ask for digits where the run's (relative tolerance {}, absolute tolerance {}) do not",
                plain(tol.relative),
                plain(tol.absolute),
                plain(start.relative),
                plain(start.absolute),
                plain(settings.tol.relative),
                plain(settings.tol.absolute)
            )
        };
        let r = solve::solve(problem, t0, y0, &Settings { tol, max_steps: settings.max_steps.saturating_mul(4), ..base_settings.clone() })?;
        work += r.stats.rhs_evals;
        // When the tighter run barely moved any quantity (far less than the
        // tolerance allows), its steps may have been limited by something else
        // than the tolerance; a second, 10 000 times tighter run settles it.
        let first = summary(problem, &r);
        let still = base.iter().any(|(k, v)| {
            first.iter().find(|(c, _)| c == k).is_some_and(|(_, c)| (v - c).abs() < 0.01 * implied(&start, k, *v, span))
        });
        let far = tight(1e4);
        if still && far.relative < tol.relative {
            let r2 = solve::solve(problem, t0, y0, &Settings { tol: far, max_steps: settings.max_steps.saturating_mul(16), ..base_settings.clone() })?;
            work += r2.stats.rhs_evals;
            text = format!("{text}, and again 10 000 times tighter (relative {})", plain(far.relative));
            checks.push(r2);
        } else {
            checks.push(r);
        }
        how = text;
    }
    let check_sums: Vec<Vec<(Key, f64)>> = checks.iter().map(|r| summary(problem, r)).collect();
    let find = |sum: &[(Key, f64)], k: &Key| sum.iter().find(|(kk, _)| kk == k).map(|(_, v)| *v);
    for (k, v) in &base {
        let others: Vec<Option<f64>> = check_sums.iter().map(|s| find(s, k)).collect();
        let (check, error) = if others.iter().any(|o| o.is_none()) {
            (None, None)
        } else if fixed {
            let vals: Vec<f64> = std::iter::once(*v).chain(others.iter().flatten().copied()).collect();
            let h = settings.step.unwrap_or(1.0);
            let l = Ladder::new(vec![h, h / 2.0, h / 4.0], vals, info.order);
            (Some(l.extrapolated), Some(l.errors[0]))
        } else {
            let c = others[0].unwrap_or(f64::NAN);
            (Some(c), Some((v - c).abs()))
        };
        let error = error.filter(|e| e.is_finite());
        let disagrees = match error {
            Some(e) if !fixed => e > DISAGREE_FACTOR * implied(&settings.tol, k, *v, span),
            Some(e) => trusted_digits(*v, e) < 2,
            None => false,
        };
        if disagrees {
            alarm_reasons.push(label(k));
        }
        let digits = match error {
            Some(e) if e == 0.0 && *v == 0.0 => super::digits::MAX_DIGITS,
            Some(e) => trusted_digits(*v, e),
            None => 0,
        };
        let size = if k.kind.is_time() { 0.0 } else { magnitude(problem, &run, &k.name) };
        let negligible = !k.kind.is_time()
            && error.is_some_and(|e| e > 0.0)
            && size > 0.0
            && (v.abs() <= 1e-6 * size || (!fixed && v.abs() <= 1e3 * settings.tol.absolute && size > 1e3 * settings.tol.absolute));
        quantities.push(Quantity {
            kind: k.kind,
            name: k.name.clone(),
            occurrence: k.occurrence,
            value: *v,
            check,
            error,
            digits,
            shown: error.map_or_else(|| with_digits(*v, 6), |e| value_text(*v, e)),
            error_shown: error.map_or_else(|| "unknown".into(), error_text),
            disagrees,
            negligible,
            sentence: sentence(k, independent, *v, error, negligible.then_some(size)),
        });
    }
    let cross = if opts.cross_method && !matches!(run.status, Status::Failed(_)) {
        let (c, w) = cross_check(problem, t0, y0, settings, &base)?;
        work += w;
        Some(c)
    } else {
        None
    };
    // Two methods at the run's settings that do not agree on a value even to
    // one digit leave none of its digits standing, whatever the tighter run says.
    let unsettled: Vec<String> = cross.iter().flat_map(|c| &c.agreement).filter(|a| a.1 == 0).map(|a| a.0.clone()).collect();
    for ((k, v), q) in base.iter().zip(&mut quantities) {
        if q.digits > 0 && unsettled.contains(&label(k)) {
            q.digits = 0;
            q.sentence = format!(
                "{}{}, not even its first digit can be trusted: an explicit and an implicit method at the run's settings disagree on it",
                lead(k, independent),
                with_digits(*v, 3)
            );
        }
    }
    let mut cx = Context {
        problem,
        t0,
        y0,
        settings,
        info,
        independent,
        opts,
        run: &run,
        base: &base,
        check: checks.first().zip(check_sums.first().map(Vec::as_slice)),
        quantities: &quantities,
        cross: cross.as_ref(),
    };
    let found = pitfalls::detect(&mut cx);
    work += found.work;
    let mut pitfalls = found.pitfalls;
    let stability = found.stability;
    let alarm = !alarm_reasons.is_empty() || !unsettled.is_empty() || pitfalls.iter().any(|p| p.level == Severity::Alarm);
    pitfalls.sort_by_key(|p| p.level);
    let covered: Vec<&str> = pitfalls.iter().flat_map(|p| p.covers.iter().copied()).collect();
    let notes = run
        .diagnostics
        .iter()
        .filter(|d| !covered.contains(&d.code))
        .map(|d| (format!("{:?}", d.level).to_lowercase(), d.message.clone()))
        .collect();
    let verdict = headline(&quantities, &alarm_reasons, &unsettled, &pitfalls, &run.status);
    Ok(Report {
        independent: independent.to_string(),
        method: Method { id: info.id.into(), name: info.name.into(), order: info.order, adaptive: !fixed, implicit: info.implicit },
        how,
        verdict,
        alarm,
        quantities,
        cross,
        pitfalls,
        notes,
        stability,
        status: status_word(&run.status).into(),
        work,
    })
}

/// The largest magnitude the state or helper `name` reaches over the run.
fn magnitude(problem: &dyn Problem, run: &Run, name: &str) -> f64 {
    let names = problem.state_names().iter().chain(problem.helper_names());
    names
        .zip(run.states.iter().chain(&run.helpers))
        .find(|(n, _)| *n == name)
        .map_or(0.0, |(_, s)| s.iter().filter(|v| v.is_finite()).fold(0.0, |m, v| m.max(v.abs())))
}

/// The headline verdict over all quantities.
fn headline(qs: &[Quantity], disagree: &[String], unsettled: &[String], pitfalls: &[Pitfall], status: &Status) -> String {
    if let Status::Failed(_) = status {
        let why = pitfalls.iter().find(|p| p.level == Severity::Alarm).map_or(String::new(), |p| format!(" {}.", p.title));
        return format!("The run did not reach its end: the results below cover only the part before the failure.{why}");
    }
    if !disagree.is_empty() {
        return format!(
            "Do not trust these results as they stand: the more accurate check disagrees with the run by far more than the run's accuracy settings allow, for {}.",
            list(disagree)
        );
    }
    if let Some(p) = pitfalls.iter().find(|p| p.level == Severity::Alarm) {
        return format!("Do not trust these results as they stand: {}.", p.title.to_lowercase());
    }
    if !unsettled.is_empty() {
        return format!(
            "Do not trust these results as they stand: an explicit and an implicit method at the run's settings do not agree even to one digit on {}.",
            list(unsettled)
        );
    }
    let checked: Vec<&Quantity> = qs.iter().filter(|q| q.error.is_some() && !q.negligible).collect();
    let Some(weak) = checked.iter().min_by_key(|q| q.digits) else {
        return "No result could be checked.".into();
    };
    let all = if checked.len() == qs.len() { "All" } else { "The other" };
    if checked.len() == 1 {
        return format!("The result is good to about {} digits.", weak.digits);
    }
    format!(
        "{all} {} results are good to at least {} digit{}; the least certain is {}.",
        checked.len(),
        weak.digits,
        if weak.digits == 1 { "" } else { "s" },
        weak.sentence.split(" = ").next().unwrap_or("")
    )
}

/// The explicit method of the cross check for a tolerance.
fn explicit_for(rtol: f64) -> &'static str {
    if rtol < 1e-8 {
        "dormand-prince-8"
    } else {
        "dormand-prince-5"
    }
}

/// The implicit method of the cross check: the first implicit adaptive method in the registry.
fn implicit_method() -> Option<&'static solve::MethodInfo> {
    solve::methods().iter().find(|m| m.implicit && m.adaptive)
}

/// Solve with an explicit and an implicit adaptive method at the run's
/// tolerance (rtol 1e-6 for a fixed-step run) and count the digits they agree to.
fn cross_check(
    problem: &mut dyn Problem,
    t0: f64,
    y0: &[f64],
    settings: &Settings,
    base: &[(Key, f64)],
) -> Result<(CrossCheck, u64), SolveError> {
    let fixed = settings.step.is_some() || solve::method(&settings.method).is_some_and(|m| !m.adaptive);
    let tol = if fixed { solve::Tolerance::default() } else { settings.tol };
    let ex_id = explicit_for(tol.relative);
    let common = Settings { step: None, at: None, tol, max_steps: settings.max_steps.min(200_000), ..settings.clone() };
    let ex = solve::solve(problem, t0, y0, &Settings { method: ex_id.into(), ..common.clone() })?;
    let mut work = ex.stats.rhs_evals;
    let Some(im_info) = implicit_method() else {
        let c = CrossCheck {
            explicit: ex_id.into(),
            implicit: String::new(),
            rtol: tol.relative,
            explicit_steps: Some(ex.stats.steps),
            implicit_steps: None,
            agreement: vec![],
            least: None,
            sentence: "No implicit method is available for the cross check.".into(),
        };
        return Ok((c, work));
    };
    let im = solve::solve(problem, t0, y0, &Settings { method: im_info.id.into(), ..common })?;
    work += im.stats.rhs_evals;
    let ok = |r: &Run| !matches!(r.status, Status::Failed(_));
    let (se, si) = (summary(problem, &ex), summary(problem, &im));
    let mut agreement = Vec::new();
    if ok(&ex) && ok(&im) {
        // Times of peaks and troughs are left out: when a run has several
        // equal peaks (an undamped oscillation), two methods may each find
        // theirs on a different cycle, which says nothing about accuracy.
        for (k, _) in base.iter().filter(|(k, _)| !matches!(k.kind, Kind::PeakTime | Kind::TroughTime)) {
            let a = se.iter().find(|(x, _)| x == k).map(|p| p.1);
            let b = si.iter().find(|(x, _)| x == k).map(|p| p.1);
            if let (Some(a), Some(b)) = (a, b) {
                agreement.push((label(k), super::digits::agreement_digits(a, b)));
            }
        }
    }
    let least = agreement.iter().map(|a| a.1).min();
    let name = |id: &str| solve::method(id).map_or(id.to_string(), |m| m.name.to_string());
    let sentence = match (ok(&ex), ok(&im), least) {
        (false, _, _) => format!(
            "The explicit method {} could not finish at a relative tolerance of {} ({}); the implicit method {} {}.",
            name(ex_id),
            with_digits(tol.relative, 1),
            match &ex.status { Status::Failed(e) => e.to_string(), _ => String::new() },
            name(im_info.id),
            if ok(&im) { format!("did, in {} steps", im.stats.steps) } else { "failed too".into() }
        ),
        (_, false, _) => format!("The implicit method {} could not finish; only the explicit one did.", name(im_info.id)),
        (_, _, Some(0)) => format!(
            "An explicit method ({}, {} steps) and an implicit one ({}, {} steps) at a relative tolerance of {} do not agree even to one digit on {}: treat those results as unsettled and tighten the tolerances.",
            name(ex_id),
            ex.stats.steps,
            name(im_info.id),
            im.stats.steps,
            with_digits(tol.relative, 1),
            list(&agreement.iter().filter(|a| a.1 == 0).map(|a| a.0.clone()).collect::<Vec<_>>())
        ),
        (_, _, Some(d)) => format!(
            "An explicit method ({}, {} steps) and an implicit one ({}, {} steps) at a relative tolerance of {} agree to at least {} digit{} on every value and event time.",
            name(ex_id),
            ex.stats.steps,
            name(im_info.id),
            im.stats.steps,
            with_digits(tol.relative, 1),
            d,
            if d == 1 { "" } else { "s" }
        ),
        _ => "The two methods have no result in common to compare.".into(),
    };
    let c = CrossCheck {
        explicit: ex_id.into(),
        implicit: im_info.id.into(),
        rtol: tol.relative,
        explicit_steps: ok(&ex).then_some(ex.stats.steps),
        implicit_steps: ok(&im).then_some(im.stats.steps),
        agreement,
        least,
        sentence,
    };
    Ok((c, work))
}
