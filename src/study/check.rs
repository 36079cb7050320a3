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

use serde::Serialize;

use super::convergence::Ladder;
use super::digits::{error_text, plain, trusted_digits, value_text, with_digits};
use super::pitfalls::{self, Pitfall};
use crate::problem::Problem;
use crate::solve::{self, Run, Settings, SolveError, Status};

/// Which summary quantity a [`Quantity`] is.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize)]
#[serde(rename_all = "camelCase")]
pub enum Kind {
    /// A state or helper at the end of the run.
    Final,
    /// The time of an event crossing.
    EventTime,
    /// The largest value of a state or helper inside the run.
    Peak,
    /// When the peak is reached.
    PeakTime,
    /// The smallest value of a state or helper inside the run.
    Trough,
    /// When the trough is reached.
    TroughTime,
}

impl Kind {
    /// Whether the quantity is a time.
    pub fn is_time(self) -> bool {
        matches!(self, Kind::EventTime | Kind::PeakTime | Kind::TroughTime)
    }
}

/// One quantity of a run's summary, as a key that matches it across runs.
#[derive(Clone, Debug, PartialEq)]
pub struct Key {
    /// What it is.
    pub kind: Kind,
    /// The state, helper or event name.
    pub name: String,
    /// For an event: which crossing (0 = first).
    pub occurrence: usize,
}

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

/// One checked quantity of the report.
#[derive(Clone, Debug, PartialEq, Serialize)]
#[serde(rename_all = "camelCase")]
pub struct Quantity {
    /// What it is.
    pub kind: Kind,
    /// The state, helper or event name.
    pub name: String,
    /// For an event: which crossing (0 = first).
    pub occurrence: usize,
    /// The run's value.
    pub value: f64,
    /// The more accurate value of the check (the tight run, or the Richardson
    /// limit of a fixed-step ladder); `None` when the check has no such quantity.
    pub check: Option<f64>,
    /// Estimated error of the run's value; `None` when it could not be estimated.
    pub error: Option<f64>,
    /// Significant digits of `value` that can be trusted.
    pub digits: u32,
    /// The value printed to its trusted digits (plus a guard digit).
    pub shown: String,
    /// The error printed with one digit, rounded up.
    pub error_shown: String,
    /// Whether the check disagrees with the run by more than its tolerance implies.
    pub disagrees: bool,
    /// Whether the value is zero to within the run's accuracy (tiny against
    /// the size the quantity reaches over the run); its digit count means little.
    pub negligible: bool,
    /// The plain-words verdict on this quantity.
    pub sentence: String,
}

/// How the check was done.
#[derive(Clone, Debug, PartialEq, Serialize)]
#[serde(rename_all = "camelCase")]
pub struct Method {
    /// Method id of the run.
    pub id: String,
    /// Its name.
    pub name: String,
    /// Its order.
    pub order: u32,
    /// Whether it is adaptive.
    pub adaptive: bool,
    /// Whether it is implicit.
    pub implicit: bool,
}

/// Agreement between an explicit and an implicit method on the same problem.
#[derive(Clone, Debug, PartialEq, Serialize)]
#[serde(rename_all = "camelCase")]
pub struct CrossCheck {
    /// The explicit method's id.
    pub explicit: String,
    /// The implicit method's id.
    pub implicit: String,
    /// The relative tolerance both ran at.
    pub rtol: f64,
    /// Steps the explicit method took (`None` when its run failed).
    pub explicit_steps: Option<u64>,
    /// Steps the implicit method took (`None` when its run failed).
    pub implicit_steps: Option<u64>,
    /// Digits of agreement for each quantity both runs have, in summary order
    /// (`(label, digits)`).
    pub agreement: Vec<(String, u32)>,
    /// The fewest digits of agreement over all quantities.
    pub least: Option<u32>,
    /// The verdict in words.
    pub sentence: String,
}

/// The stability picture of a fixed-step run: where its `h·λ` lie against
/// the method's region.
#[derive(Clone, Debug, PartialEq, Serialize)]
#[serde(rename_all = "camelCase")]
pub struct Stability {
    /// The method id whose region is drawn.
    pub method: String,
    /// The step.
    pub h: f64,
    /// `h·λ` for the eigenvalues at the sampled points, `(re, im)`.
    pub points: Vec<(f64, f64)>,
    /// The largest stable step over those eigenvalues (`None`: any step is).
    pub largest_stable_step: Option<f64>,
    /// The largest growth factor `|R(hλ)|` per step over the decaying modes.
    pub worst_growth: f64,
}

/// Everything the accuracy check found.
#[derive(Clone, Debug, PartialEq, Serialize)]
#[serde(rename_all = "camelCase")]
pub struct Report {
    /// The independent variable's name.
    pub independent: String,
    /// The run's method.
    pub method: Method,
    /// How the check was done, in words.
    pub how: String,
    /// The headline verdict.
    pub verdict: String,
    /// Whether something is badly wrong (a prominent warning is due).
    pub alarm: bool,
    /// Each summary quantity, checked.
    pub quantities: Vec<Quantity>,
    /// The explicit-versus-implicit check, when it was run.
    pub cross: Option<CrossCheck>,
    /// Pitfalls found, most serious first.
    pub pitfalls: Vec<Pitfall>,
    /// The run's own diagnostics that no pitfall covers, as `(level, message)`.
    pub notes: Vec<(String, String)>,
    /// The stability picture for a fixed-step run.
    pub stability: Option<Stability>,
    /// How the run ended: `finished`, `stopped` or `failed`.
    pub status: String,
    /// Right-hand-side evaluations spent by the check (all its runs).
    pub work: u64,
}

/// Options of the check.
#[derive(Clone, Debug, PartialEq)]
pub struct Options {
    /// Significant digits the page shows for results (default 4). Results that
    /// cannot be trusted to that many digits raise the "tolerance too loose" pitfall.
    pub shown_digits: u32,
    /// Run the explicit-versus-implicit cross check (default true).
    pub cross_method: bool,
}

impl Default for Options {
    fn default() -> Self {
        Options { shown_digits: 4, cross_method: true }
    }
}

/// The smallest rtol the check tightens to (the driver floors rtol at 1e-14).
const RTOL_FLOOR: f64 = 1e-13;

/// Factor over the tolerance beyond which a disagreement is flagged: global
/// errors of a well-posed problem usually stay within 10 to 100 times the
/// local tolerance (common practice, no source).
const DISAGREE_FACTOR: f64 = 100.0;

/// A name for a quantity in a sentence.
pub fn label(k: &Key) -> String {
    let nth = |k: &Key| if k.occurrence == 0 { String::new() } else { format!(" (crossing {})", k.occurrence + 1) };
    match k.kind {
        Kind::Final => format!("`{}` at the end", k.name),
        Kind::EventTime => format!("event `{}`{}", k.name, nth(k)),
        Kind::Peak => format!("peak of `{}`", k.name),
        Kind::PeakTime => format!("time of the peak of `{}`", k.name),
        Kind::Trough => format!("low point of `{}`", k.name),
        Kind::TroughTime => format!("time of the low point of `{}`", k.name),
    }
}

/// The sentence for one quantity: "event `h < 1` at t = 412.38, good to
/// about 4 digits (± 0.03)".
pub fn sentence(k: &Key, independent: &str, value: f64, error: Option<f64>, negligible: Option<f64>) -> String {
    let what = label(k);
    let lead = if k.kind == Kind::EventTime { format!("{what} at {independent} = ") } else { format!("{what} = ") };
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
        let tight = |f: f64| solve::Tolerance { relative: (settings.tol.relative / f).max(RTOL_FLOOR), absolute: settings.tol.absolute / f };
        let tol = tight(100.0);
        let mut text = format!("re-solved with the tolerances 100 times tighter (relative {}, absolute {})", plain(tol.relative), plain(tol.absolute));
        let r = solve::solve(problem, t0, y0, &Settings { tol, max_steps: settings.max_steps.saturating_mul(4), ..base_settings.clone() })?;
        work += r.stats.rhs_evals;
        // When the tighter run barely moved any quantity (far less than the
        // tolerance allows), its steps may have been limited by something else
        // than the tolerance; a second, 10 000 times tighter run settles it.
        let first = summary(problem, &r);
        let still = base.iter().any(|(k, v)| {
            first.iter().find(|(c, _)| c == k).is_some_and(|(_, c)| (v - c).abs() < 0.01 * implied(&settings.tol, k, *v, span))
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
    // Events that one run has and the other has not.
    let mut pitfalls = Vec::new();
    if let Some(first) = check_sums.first() {
        let extra: Vec<&Key> =
            first.iter().map(|(k, _)| k).filter(|k| k.kind == Kind::EventTime && !base.iter().any(|(b, _)| b == *k)).collect();
        let lost: Vec<&Key> =
            base.iter().map(|(k, _)| k).filter(|k| k.kind == Kind::EventTime && !first.iter().any(|(c, _)| c == *k)).collect();
        if !extra.is_empty() || !lost.is_empty() {
            pitfalls.push(pitfalls::event_mismatch(&extra, &lost, independent));
        }
    }
    if status_word(&run.status) != checks.first().map_or("finished", |c| status_word(&c.status)) {
        pitfalls.push(pitfalls::status_mismatch(&run.status, &checks[0].status));
    }
    let cross = if opts.cross_method && !matches!(run.status, Status::Failed(_)) {
        let (c, w) = cross_check(problem, t0, y0, settings, &base)?;
        work += w;
        Some(c)
    } else {
        None
    };
    let found = pitfalls::detect(problem, t0, y0, settings, info, &run, &quantities, cross.as_ref(), opts, independent);
    work += found.work;
    pitfalls.extend(found.pitfalls);
    let stability = found.stability;
    let alarm = !alarm_reasons.is_empty() || pitfalls.iter().any(|p| p.level == "alarm");
    pitfalls.sort_by_key(|p| match p.level.as_str() {
        "alarm" => 0,
        "warning" => 1,
        _ => 2,
    });
    let covered: Vec<&str> = pitfalls.iter().flat_map(|p| p.covers.iter().copied()).collect();
    let notes = run
        .diagnostics
        .iter()
        .filter(|d| !covered.contains(&d.code))
        .map(|d| (format!("{:?}", d.level).to_lowercase(), d.message.clone()))
        .collect();
    let verdict = headline(&quantities, &alarm_reasons, &pitfalls, &run.status);
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
fn headline(qs: &[Quantity], disagree: &[String], pitfalls: &[Pitfall], status: &Status) -> String {
    if let Status::Failed(_) = status {
        let why = pitfalls.iter().find(|p| p.level == "alarm").map_or(String::new(), |p| format!(" {}.", p.title));
        return format!("The run did not reach its end: the results below cover only the part before the failure.{why}");
    }
    if !disagree.is_empty() {
        return format!(
            "Do not trust these results as they stand: the more accurate check disagrees with the run by far more than the run's accuracy settings allow, for {}.",
            list(disagree)
        );
    }
    if let Some(p) = pitfalls.iter().find(|p| p.level == "alarm") {
        return format!("Do not trust these results as they stand: {}.", p.title.to_lowercase());
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

/// `a`, `a and b`, `a, b and c`.
pub fn list(items: &[String]) -> String {
    match items.len() {
        0 => String::new(),
        1 => items[0].clone(),
        n => format!("{} and {}", items[..n - 1].join(", "), items[n - 1]),
    }
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
