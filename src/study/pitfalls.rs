//! Pitfalls: the ways a run can look fine and be wrong, each detected with
//! the number behind it and explained for an engineer.
//!
//! Where the run's own diagnostics already name a problem (`unstable-step`,
//! `stiff`, `blow-up`, `non-finite`), the pitfall keeps that message and adds
//! what the study knows beyond it; the report then leaves the diagnostic out
//! of its notes ([`Pitfall::covers`]).

//!
//! Each pitfall is one function of the [`Context`] that returns what it
//! found; [`detect`] runs them in the order the report lists them.

use super::digits::{error_text, plain, with_digits};
use super::probe;
pub use super::report::{Pitfall, Severity};
use super::report::{label, list, CrossCheck, Key, Options, Quantity, Stability};
use super::stability::{StabilityFunction, C64};
use crate::problem::Problem;
use crate::solve::{Diagnostic, MethodInfo, Run, Settings, SolveError, Status, Tolerance};

fn pit(code: &'static str, level: Severity, title: &str, message: String, number: Option<f64>, t: Option<f64>) -> Pitfall {
    Pitfall { code, level, title: title.into(), message, number, t, covers: Vec::new() }
}

/// Everything a pitfall looks at: the problem, the run and its settings, the
/// more accurate check and the cross check.
pub struct Context<'a> {
    /// The problem (probed for its Jacobian, spectrum and events).
    pub problem: &'a mut dyn Problem,
    /// The start of the run.
    pub t0: f64,
    /// The initial state.
    pub y0: &'a [f64],
    /// The run's settings.
    pub settings: &'a Settings,
    /// The run's method.
    pub info: &'a MethodInfo,
    /// The independent variable's name.
    pub independent: &'a str,
    /// Options of the check.
    pub opts: &'a Options,
    /// The run, with every accepted step as output.
    pub run: &'a Run,
    /// The run's summary quantities.
    pub base: &'a [(Key, f64)],
    /// The first more accurate check run, with its summary quantities.
    pub check: Option<(&'a Run, &'a [(Key, f64)])>,
    /// The checked quantities.
    pub quantities: &'a [Quantity],
    /// The explicit-versus-implicit cross check, when it ran.
    pub cross: Option<&'a CrossCheck>,
}

impl Context<'_> {
    /// The length of the run.
    fn span(&self) -> f64 {
        (self.settings.to - self.t0).abs()
    }

    /// Whether the run took fixed steps.
    fn fixed(&self) -> bool {
        !self.info.adaptive || self.settings.step.is_some()
    }

    /// The run's own diagnostic with `code`, when it has one.
    fn diag(&self, code: &str) -> Option<&Diagnostic> {
        self.run.diagnostics.iter().find(|d| d.code == code)
    }

    /// The state names.
    fn names(&self) -> Vec<String> {
        self.problem.state_names().to_vec()
    }
}

/// What [`detect`] found.
pub struct Found {
    /// The pitfalls.
    pub pitfalls: Vec<Pitfall>,
    /// The stability picture of a fixed-step run.
    pub stability: Option<Stability>,
    /// Right-hand-side evaluations spent.
    pub work: u64,
}

/// The stability function of a registry method, when its coefficients are known.
pub fn function_for(info: &MethodInfo) -> Option<StabilityFunction> {
    Some(info.stability_function())
}

/// The state at output point `k` of `run`.
fn state_at(run: &Run, k: usize) -> Vec<f64> {
    run.states.iter().map(|s| s[k]).collect()
}

/// Indices of up to `n` output points spread evenly over the run.
fn sample_indices(len: usize, n: usize) -> Vec<usize> {
    if len == 0 {
        return vec![];
    }
    let n = n.min(len).max(1);
    let mut v: Vec<usize> = (0..n).map(|i| if n == 1 { 0 } else { i * (len - 1) / (n - 1) }).collect();
    v.dedup();
    v
}

/// Look for every pitfall in the run of `cx` (and its check and cross check).
pub fn detect(cx: &mut Context) -> Found {
    let mut out = Vec::new();
    out.extend(tolerance_dwarfs_values(cx));
    out.extend(event_mismatch(cx));
    out.extend(status_mismatch(cx));
    out.extend(not_unique(cx));
    out.extend(leaves_domain(cx));
    out.extend(blow_up(cx));
    let (unstable, stability) = unstable_step(cx);
    out.extend(unstable);
    out.extend(stiff(cx));
    let failed = matches!(cx.run.status, Status::Failed(_));
    if !failed && !out.iter().any(|p| p.code == "unstable-step" || p.code == "tolerance-dwarfs-values") {
        out.extend(loose_tolerance(cx));
    }
    out.extend(grazed(cx));
    Found { pitfalls: out, stability, work: 0 }
}

/// The loosest tolerances that still ask for a correct digit: rtol, and atol
/// as a fraction of the largest value the states reach. Looser ones raise
/// [`tolerance_dwarfs_values`], and the check starts from the defaults in
/// their place (common practice, no source: a tolerance of a tenth of the
/// value asks for about one digit).
pub const SANE_FRACTION: f64 = 0.1;

/// The largest magnitude any state reaches over `run` or at its start `y0`
/// (0 when every state stays 0).
pub fn value_scale(run: &Run, y0: &[f64]) -> f64 {
    run.states.iter().flatten().chain(y0).filter(|v| v.is_finite()).fold(0.0, |m, v| m.max(v.abs()))
}

/// `tol` with each tolerance that asks for no digit (rtol above
/// [`SANE_FRACTION`], atol above that fraction of `scale`, the values' size)
/// replaced by its default.
pub fn sane(tol: Tolerance, scale: f64) -> Tolerance {
    let d = Tolerance::default();
    Tolerance {
        relative: if tol.relative > SANE_FRACTION { d.relative } else { tol.relative },
        absolute: if scale > 0.0 && tol.absolute > SANE_FRACTION * scale { d.absolute } else { tol.absolute },
    }
}

/// A tolerance as it would be typed: `1e9`, `1e-9`, `0.05`.
fn typed(x: f64) -> String {
    if (1e-3..1e4).contains(&x.abs()) {
        plain(x)
    } else {
        format!("{x:e}")
    }
}

/// Tolerances so loose against the solution's values that they ask for no
/// correct digit: a typo such as atol `1e9` for `1e-9`. The solver then takes
/// the largest steps it may, and whatever it returns passes its own test.
pub fn tolerance_dwarfs_values(cx: &mut Context) -> Option<Pitfall> {
    if cx.fixed() {
        return None;
    }
    let tol = cx.settings.tol;
    let scale = value_scale(cx.run, cx.y0);
    let held = sane(tol, scale);
    if held == tol {
        return None;
    }
    let (r, a) = (held.relative != tol.relative, held.absolute != tol.absolute);
    let what = match (r, a) {
        (true, true) => format!("relative tolerance {} and absolute tolerance {} allow", typed(tol.relative), typed(tol.absolute)),
        (true, false) => format!("relative tolerance {} allows", typed(tol.relative)),
        _ => format!("absolute tolerance {} allows", typed(tol.absolute)),
    };
    let allowed = tol.relative * scale + tol.absolute;
    // The least trusted final value, to show what the settings did.
    let example = cx
        .quantities
        .iter()
        .filter(|q| q.kind == super::report::Kind::Final && q.check.is_some())
        .min_by_key(|q| q.digits)
        .map_or(String::new(), |q| {
            format!(
                "; here `{}` at the end is {} in the run against {} in the check",
                q.name,
                with_digits(q.value, 5),
                with_digits(q.check.unwrap_or(f64::NAN), 5)
            )
        });
    let mut fix = Vec::new();
    if r {
        fix.push(format!("relative tolerance to {} (the default) or tighter", typed(held.relative)));
    }
    if a {
        // A power of ten above 1 is most likely a lost minus sign.
        let e = tol.absolute.log10();
        fix.push(if e >= 1.0 && e.fract() == 0.0 {
            format!("absolute tolerance to {}: {} looks like {} with its minus sign lost", typed(1.0 / tol.absolute), typed(tol.absolute), typed(1.0 / tol.absolute))
        } else {
            format!("absolute tolerance well below the smallest value that matters (the default is {})", typed(held.absolute))
        });
    }
    Some(pit(
        "tolerance-dwarfs-values",
        Severity::Alarm,
        "The tolerances dwarf the solution's values",
        format!(
            "The run's {what} an error of {} in each step, while its values stay within {}: the settings ask for no correct digit, so the solver takes the largest steps it may and its results can be anything{example}. Set {}. The check below started from the default tolerances in their place (relative tolerance {}, absolute tolerance {}), whatever the run's.",
            with_digits(allowed, 2),
            with_digits(scale, 3),
            fix.join(", and "),
            typed(held.relative),
            typed(held.absolute),
        ),
        (scale > 0.0).then(|| allowed / scale),
        None,
    ))
}

/// Events that fired in the run and not in the more accurate check, or the
/// other way round.
pub fn event_mismatch(cx: &mut Context) -> Option<Pitfall> {
    let (_, first) = cx.check?;
    let is_event = |k: &&Key| k.kind == super::report::Kind::EventTime;
    let extra: Vec<&Key> = first.iter().map(|(k, _)| k).filter(is_event).filter(|k| !cx.base.iter().any(|(b, _)| b == *k)).collect();
    let lost: Vec<&Key> = cx.base.iter().map(|(k, _)| k).filter(is_event).filter(|k| !first.iter().any(|(c, _)| c == *k)).collect();
    if extra.is_empty() && lost.is_empty() {
        return None;
    }
    let names = |ks: &[&Key]| list(&ks.iter().map(|k| label(k)).collect::<Vec<_>>());
    let mut parts = Vec::new();
    if !lost.is_empty() {
        parts.push(format!("{} fired in the run but not in the more accurate check", names(&lost)));
    }
    if !extra.is_empty() {
        parts.push(format!("{} fired in the more accurate check but not in the run", names(&extra)));
    }
    Some(pit(
        "event-mismatch",
        Severity::Alarm,
        "Events differ between the run and the check",
        format!(
            "{}. Whether the event happens depends on the accuracy of the run: the condition is met only barely, or the run is too coarse. Tighten the tolerance (or shrink h) until the events agree, and look at how close the condition comes along {}.",
            parts.join("; "),
            cx.independent
        ),
        Some((extra.len() + lost.len()) as f64),
        None,
    ))
}

/// The run and the more accurate check ended differently.
pub fn status_mismatch(cx: &mut Context) -> Option<Pitfall> {
    let (check, _) = cx.check?;
    let kind = |s: &Status| std::mem::discriminant(s);
    if kind(&cx.run.status) == kind(&check.status) {
        return None;
    }
    let word = |s: &Status| match s {
        Status::Finished => "reached its end".to_string(),
        Status::Stopped { .. } => "was ended by a `stop when`".to_string(),
        Status::Failed(e) => format!("failed ({e})"),
    };
    Some(pit(
        "status-mismatch",
        Severity::Alarm,
        "The run and the check ended differently",
        format!(
            "The run {}, but the more accurate check {}. The run's outcome is an artefact of its accuracy settings.",
            word(&cx.run.status),
            word(&check.status)
        ),
        None,
        None,
    ))
}

/// Non-uniqueness: a rate not Lipschitz at the initial value.
pub fn not_unique(cx: &mut Context) -> Option<Pitfall> {
    let (t0, y0, independent) = (cx.t0, cx.y0, cx.independent);
    let nl = probe::lipschitz_at(cx.problem, t0, y0)?;
    let names = cx.names();
    let y = &names[nl.state];
    let mut f = vec![0.0; y0.len()];
    cx.problem.rhs(t0, y0, &mut f);
    let rest = if f[nl.rate] == 0.0 {
        format!(
            "The rate is 0 there, so `{y}` staying at {} for ever is one solution, and the run returns it; but other solutions leave {} at any time they like. If the system is meant to move off this value, start from a slightly different `{y}`, or add the cause that starts it.",
            with_digits(y0[nl.state], 6),
            with_digits(y0[nl.state], 6)
        )
    } else {
        "Solutions through this start need not be unique: the run shows one of them, and tiny changes of the start can give visibly different answers.".to_string()
    };
    let q = nl.quotients.last().copied().unwrap_or(f64::INFINITY);
    Some(pit(
        "not-unique",
        Severity::Warning,
        "The solution may not be unique",
        format!(
            "At the start ({independent} = {}, `{y}` = {}), the rate of `{}` changes infinitely fast with `{y}`: its slope ∂f/∂{y} {} as the probe shrinks ({} for a change of {} in `{y}`). {rest}",
            with_digits(t0, 6),
            with_digits(y0[nl.state], 6),
            names.get(nl.rate).map_or("?", |s| s.as_str()),
            if nl.exact_infinite { "is infinite there and grows" } else { "grows without bound" },
            with_digits(q, 2),
            with_digits(super::probe::LIPSCHITZ_OFFSETS[2] * y0[nl.state].abs().max(1.0), 1),
        ),
        Some(q),
        Some(t0),
    ))
}

/// A solution leaving its formula's domain.
pub fn leaves_domain(cx: &mut Context) -> Option<Pitfall> {
    let (run, y0, names) = (cx.run, cx.y0, cx.names());
    let Status::Failed(SolveError::NonFinite { t, cause, states, .. }) = &run.status else { return None };
    let last = run.t.len().saturating_sub(1);
    // The state that ran down: smallest now against its largest size over the run.
    let guard = (0..names.len())
        .filter_map(|i| {
            let s = &run.states[i];
            let big = s.iter().fold(0.0f64, |m, v| m.max(v.abs()));
            let now = states.get(i).map_or(s.get(last).copied().unwrap_or(0.0), |p| p.1);
            (big > 0.0 && y0[i].abs() > 0.0).then_some((i, now.abs() / big))
        })
        .min_by(|a, b| a.1.total_cmp(&b.1))
        .filter(|g| g.1 < 0.05);
    let what = cause.as_ref().map_or("a rate became NaN or infinite".to_string(), |c| format!("{} in `{}`", c.what, c.name));
    let advice = match guard {
        Some((i, _)) => {
            let n = &names[i];
            format!(
                " `{n}` has run down to {} by then: the formula has no value once `{n}` goes below zero, although the real system simply stops there (a tank that is empty stays empty). Write the formula with `max({n}, 0)` in place of `{n}`, or end the run before it with `stop when {n} < {}`.",
                with_digits(states.get(i).map_or(0.0, |p| p.1), 3),
                with_digits(0.01 * y0[i].abs(), 1)
            )
        }
        None => " Check the formula's valid range: a square root or logarithm of a negative value, or a division by zero.".to_string(),
    };
    let mut p = pit(
        "leaves-domain",
        Severity::Alarm,
        "The solution left the range where its formula has a value",
        format!("The run stopped at {} = {}: {what}.{advice}", cx.independent, with_digits(*t, 6)),
        Some(*t),
        Some(*t),
    );
    p.covers = vec!["non-finite"];
    Some(p)
}

/// Finite-time blow-up.
pub fn blow_up(cx: &mut Context) -> Option<Pitfall> {
    let run = cx.run;
    let blew = matches!(run.status, Status::Failed(SolveError::BlowUp { .. }))
        || matches!(run.status, Status::Failed(SolveError::StepSizeTooSmall { .. }) | Status::Failed(SolveError::MaxSteps { .. }));
    if !blew || run.t.len() < 3 {
        return None;
    }
    let (independent, span, names) = (cx.independent, cx.span(), cx.names());
    let n = run.t.len();
    let (a, b) = (state_at(run, n - 2), state_at(run, n - 1));
    let fit = probe::blow_up(cx.problem, (run.t[n - 2], &a), (run.t[n - 1], &b));
    let grew = b.iter().zip(cx.y0).any(|(v, v0)| v.abs() > 1e3 * v0.abs().max(1.0));
    let fit = fit.filter(|f| grew && (f.t_star - run.t[n - 1]).abs() <= 0.05 * span.max(f64::MIN_POSITIVE))?;
    let driver = cx.diag("blow-up").map(|d| format!("{} ", capital(&d.message))).unwrap_or_default();
    let mut p = pit(
        "blow-up",
        Severity::Alarm,
        "The solution blows up in finite time",
        format!(
            "{driver}`{}` grows like 1/({} − {independent})^{}: the fit to the last steps puts the blow-up at {independent} ≈ {}. No method can carry the solution past that time; the model itself says the value is infinite there. Real systems saturate or fail first: check the signs and the terms that feed `{}` back into its own rate.",
            names[fit.state],
            short(fit.t_star, 5),
            short(fit.exponent, 2),
            short(fit.t_star, 5),
            names[fit.state]
        ),
        Some(fit.t_star),
        Some(fit.t_star),
    );
    p.covers = vec!["blow-up", "step-too-small", "max-steps"];
    Some(p)
}

/// Stability of a fixed step: the pitfall when a decaying mode grows, and
/// the stability picture of every fixed-step run.
pub fn unstable_step(cx: &mut Context) -> (Option<Pitfall>, Option<Stability>) {
    let (Some(h), Some(sf)) = (cx.settings.step.filter(|_| cx.fixed()), function_for(cx.info)) else { return (None, None) };
    let (run, span, info) = (cx.run, cx.span(), cx.info);
    let mut points = Vec::new();
    let mut worst = (0.0f64, None::<(f64, C64)>);
    let mut largest: Option<f64> = None;
    for k in sample_indices(run.t.len(), 30) {
        let y = state_at(run, k);
        let Some(spec) = probe::spectrum(cx.problem, run.t[k], &y) else { continue };
        for l in spec {
            let z = l * h;
            if !points.iter().any(|p: &C64| (p - z).norm() <= 1e-3 * z.norm().max(1e-9)) && points.len() < 200 {
                points.push(z);
            }
            if l.re <= 0.0 {
                let g = sf.growth(z);
                if g > worst.0 {
                    worst = (g, Some((run.t[k], l)));
                }
                if let Some(hs) = sf.largest_stable_step(l) {
                    largest = Some(largest.map_or(hs, |x: f64| x.min(hs)));
                }
            }
        }
    }
    let stability = Some(Stability {
        method: info.id.to_string(),
        h,
        points: points.iter().map(|z| (z.re, z.im)).collect(),
        largest_stable_step: largest,
        worst_growth: worst.0,
    });
    if worst.0 <= 1.0 + 1e-9 {
        return (None, stability);
    }
    let (t, l) = worst.1.unwrap_or((cx.t0, C64::new(0.0, 0.0)));
    let steps = span / h;
    let amp = worst.0.powf(steps.min(1e6));
    let growth = format!(
        "each step multiplies that mode by {} instead of damping it{}",
        with_digits(worst.0, 3),
        if amp.is_finite() && amp > 10.0 { format!(", {} over the run", with_digits(amp, 2)) } else { String::new() }
    );
    let head = match cx.diag("unstable-step") {
        Some(d) => format!("{} Here {growth}. ", capital(&d.message)),
        None => format!(
            "The step h = {} is too large for {}: the fastest decaying mode along the run has λ ≈ {}, so h·λ ≈ {} lies outside the method's stability region, and {growth}. ",
            plain(h),
            info.name,
            complex_text(l),
            complex_text(l * h)
        ),
    };
    let extra = format!(
        "{}The picture shows each h·λ against the region.",
        match largest {
            Some(x) if x > 0.0 => format!(
                "Over all the modes seen along the run the largest stable step is h = {}: take h ≤ {}, or an implicit method (beuler, trapezoid), or `auto`. ",
                with_digits(x, 3),
                short(0.9 * x, 2)
            ),
            _ => "No step size is stable on this mode with this method; take RK4 or an implicit method. ".to_string(),
        }
    );
    let mut p = pit(
        "unstable-step",
        if amp > 1e3 || !amp.is_finite() { Severity::Alarm } else { Severity::Warning },
        "The step is too large for stability",
        format!("{head}{extra}"),
        largest,
        Some(t),
    );
    p.covers = vec!["unstable-step"];
    (Some(p), stability)
}

/// Stiffness, from the run's own diagnostics or from the cross check's step counts.
pub fn stiff(cx: &mut Context) -> Option<Pitfall> {
    let (run, span, cross, info) = (cx.run, cx.span(), cx.cross, cx.info);
    let switched = cx.diag("method-switch").cloned();
    let said = cx.diag("stiff").cloned();
    let ratio_steps = cross.and_then(|c| match (c.explicit_steps, c.implicit_steps) {
        (Some(e), Some(i)) if i > 0 => Some(e as f64 / i as f64),
        (None, Some(_)) => Some(f64::INFINITY),
        _ => None,
    });
    let stiff_by_steps = ratio_steps.is_some_and(|r| r >= 5.0) && cross.and_then(|c| c.explicit_steps).map_or(true, |s| s >= 200);
    if said.is_none() && switched.is_none() && !stiff_by_steps {
        return None;
    }
    let mut fastest = 0.0f64;
    for k in sample_indices(run.t.len(), 20) {
        if let Some(spec) = probe::spectrum(cx.problem, run.t[k], &state_at(run, k)) {
            for l in spec {
                fastest = fastest.max(-l.re);
            }
        }
    }
    let mut msg = Vec::new();
    if let Some(d) = &said {
        msg.push(capital(&d.message) + ".");
    }
    if fastest > 0.0 {
        msg.push(format!(
            "The fastest rate in the model decays in about {} (λ ≈ {}), while the run spans {}: a ratio of {}. An explicit method must keep h·|λ| below about 3 for stability alone, so it needs at least {} steps however smooth the answer is.",
            with_digits(1.0 / fastest, 2),
            with_digits(-fastest, 3),
            with_digits(span, 3),
            with_digits(fastest * span, 2),
            with_digits((fastest * span / 3.0).ceil(), 2)
        ));
    }
    if let (Some(_), Some(r)) = (cross, ratio_steps) {
        msg.push(if r.is_finite() {
            format!("In the cross check the explicit method took {} times as many steps as the implicit one.", with_digits(r, 2))
        } else {
            "In the cross check the explicit method could not finish and the implicit one did.".to_string()
        });
    }
    let handled = info.implicit || switched.is_some();
    msg.push(if handled {
        match &switched {
            Some(d) => format!("This run handled it: it {}.", d.message),
            None => format!("This run used {}, an implicit method, which is the right choice.", info.name),
        }
    } else {
        "Use `auto` or an implicit method for this model.".to_string()
    });
    let level = if handled { Severity::Note } else { Severity::Warning };
    let mut p = pit("stiff", level, "The model is stiff", msg.join(" "), (fastest > 0.0).then_some(fastest * span), None);
    p.covers = vec!["stiff"];
    Some(p)
}

/// Tolerance too loose for the digits shown.
pub fn loose_tolerance(cx: &mut Context) -> Option<Pitfall> {
    let (settings, opts, fixed) = (cx.settings, cx.opts, cx.fixed());
    let atol = settings.tol.absolute;
    let weak: Vec<&Quantity> = cx
        .quantities
        .iter()
        .filter(|q| q.error.is_some() && !q.negligible && q.digits + 1 < opts.shown_digits)
        .filter(|q| q.kind.is_time() || fixed || q.value.abs() > 1e3 * atol)
        .collect();
    let w = weak.iter().min_by_key(|q| q.digits)?;
    let fix = if fixed {
        let h = settings.step.unwrap_or(0.0);
        let e = w.error.unwrap_or(0.0);
        let target = 0.5 * w.value.abs() * 10f64.powi(-(opts.shown_digits as i32));
        let hn = h * (target / e).powf(1.0 / cx.info.order.max(1) as f64);
        format!("Shrink the step to about h = {} (from {}), or read only {} digits.", with_digits(hn, 2), plain(h), w.digits)
    } else {
        format!(
            "Tighten the relative tolerance to {} (it is {}), or read only {} digits.",
            with_digits(10f64.powi(-(opts.shown_digits as i32 + 2)), 1),
            plain(settings.tol.relative),
            w.digits
        )
    };
    Some(pit(
        "loose-tolerance",
        Severity::Warning,
        "The accuracy settings are too loose for the digits shown",
        format!(
            "Results are shown to {} digits, but {} of them {} fewer: {}. {fix}",
            opts.shown_digits,
            weak.len(),
            if weak.len() == 1 { "has" } else { "have" },
            w.sentence
        ),
        Some(w.digits as f64),
        None,
    ))
}

/// Events only grazed: the condition comes close to its threshold without
/// clearly crossing it (at most one per event).
pub fn grazed(cx: &mut Context) -> Vec<Pitfall> {
    let mut out = Vec::new();
    let (run, span, independent) = (cx.run, cx.span(), cx.independent);
    let events = cx.problem.events().to_vec();
    if events.is_empty() || run.t.len() < 3 {
        return out;
    }
    let n = run.t.len();
    let mut g = vec![vec![0.0; n]; events.len()];
    let mut buf = vec![0.0; events.len()];
    for k in 0..n {
        cx.problem.event_values(run.t[k], &state_at(run, k), &mut buf);
        for (i, v) in buf.iter().enumerate() {
            g[i][k] = *v;
        }
    }
    let (ta, tb) = (run.t[0], run.t[n - 1]);
    for (i, ev) in events.iter().enumerate() {
        for gr in probe::grazes(&run.t, &g[i], ev.crossing, 1e-3) {
            if (gr.t - ta).abs() < 1e-6 * span || (gr.t - tb).abs() < 1e-6 * span {
                continue;
            }
            let fired = run.events.iter().any(|e| e.index == i && (e.t - gr.t).abs() < 0.02 * span);
            let how = if fired {
                format!("fired at {independent} ≈ {}, but the condition is passed only by {}", with_digits(gr.t, 5), error_text(gr.gap.abs()))
            } else {
                format!("came within {} of firing at {independent} ≈ {} without firing", error_text(gr.gap.abs()), with_digits(gr.t, 5))
            };
            out.push(pit(
                "grazed",
                Severity::Warning,
                "An event is only grazed",
                format!(
                    "`{}` {how} (the two sides of the condition differ by up to {} over the run). The solution touches the threshold rather than crossing it, so a tiny change of a parameter, of the start or of the tolerance decides whether the event happens. Treat its firing, or not firing, as uncertain.",
                    ev.name,
                    with_digits(gr.scale, 2)
                ),
                Some(gr.gap),
                Some(gr.t),
            ));
            break;
        }
    }
    out
}

/// `x` to `n` significant digits with trailing zeros dropped.
fn short(x: f64, n: u32) -> String {
    plain(with_digits(x, n).parse().unwrap_or(x))
}

/// `a + bi` for a message.
fn complex_text(z: C64) -> String {
    if z.im.abs() <= 1e-9 * z.norm() {
        with_digits(z.re, 3)
    } else {
        format!("{} {} {}i", with_digits(z.re, 3), if z.im < 0.0 { "−" } else { "+" }, with_digits(z.im.abs(), 3))
    }
}

/// The message with its first letter capitalised.
fn capital(s: &str) -> String {
    let mut c = s.chars();
    match c.next() {
        Some(f) => f.to_uppercase().collect::<String>() + c.as_str(),
        None => String::new(),
    }
}
