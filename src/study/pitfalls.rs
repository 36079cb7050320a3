//! Pitfalls: the ways a run can look fine and be wrong, each detected with
//! the number behind it and explained for an engineer.
//!
//! Where the run's own diagnostics already name a problem (`unstable-step`,
//! `stiff`, `blow-up`, `non-finite`), the pitfall keeps that message and adds
//! what the study knows beyond it; the report then leaves the diagnostic out
//! of its notes ([`Pitfall::covers`]).

use serde::Serialize;

use super::check::{label, list, Key, Quantity, Stability};
use super::digits::{error_text, plain, with_digits};
use super::probe;
use super::stability::{StabilityFunction, C64};
use crate::problem::Problem;
use crate::solve::{MethodInfo, Run, Settings, SolveError, Status};

/// One pitfall found in a run.
#[derive(Clone, Debug, PartialEq, Serialize)]
#[serde(rename_all = "camelCase")]
pub struct Pitfall {
    /// Stable kebab-case id: `not-unique`, `leaves-domain`, `blow-up`,
    /// `unstable-step`, `stiff`, `loose-tolerance`, `grazed`,
    /// `event-mismatch`, `status-mismatch`.
    pub code: &'static str,
    /// `alarm` (the results cannot be trusted), `warning` or `note`.
    pub level: String,
    /// A short title.
    pub title: String,
    /// What was found, with the number behind it, and what to do.
    pub message: String,
    /// The number behind it, when there is one.
    pub number: Option<f64>,
    /// Where in the run, when it applies to a time.
    pub t: Option<f64>,
    /// Codes of the run's diagnostics this pitfall explains.
    #[serde(skip)]
    pub covers: Vec<&'static str>,
}

fn pit(code: &'static str, level: &str, title: &str, message: String, number: Option<f64>, t: Option<f64>) -> Pitfall {
    Pitfall { code, level: level.into(), title: title.into(), message, number, t, covers: Vec::new() }
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

/// Events that fired in one run and not in the other.
pub fn event_mismatch(extra: &[&Key], lost: &[&Key], independent: &str) -> Pitfall {
    let names = |ks: &[&Key]| list(&ks.iter().map(|k| label(k)).collect::<Vec<_>>());
    let mut parts = Vec::new();
    if !lost.is_empty() {
        parts.push(format!("{} fired in the run but not in the more accurate check", names(lost)));
    }
    if !extra.is_empty() {
        parts.push(format!("{} fired in the more accurate check but not in the run", names(extra)));
    }
    pit(
        "event-mismatch",
        "alarm",
        "Events differ between the run and the check",
        format!(
            "{}. Whether the event happens depends on the accuracy of the run: the condition is met only barely, or the run is too coarse. Tighten the tolerance (or shrink h) until the events agree, and look at how close the condition comes along {independent}.",
            parts.join("; ")
        ),
        Some((extra.len() + lost.len()) as f64),
        None,
    )
}

/// The run and the check ended differently.
pub fn status_mismatch(run: &Status, check: &Status) -> Pitfall {
    let word = |s: &Status| match s {
        Status::Finished => "reached its end".to_string(),
        Status::Stopped { .. } => "was ended by a `stop when`".to_string(),
        Status::Failed(e) => format!("failed ({e})"),
    };
    pit(
        "status-mismatch",
        "alarm",
        "The run and the check ended differently",
        format!("The run {}, but the more accurate check {}. The run's outcome is an artefact of its accuracy settings.", word(run), word(check)),
        None,
        None,
    )
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

/// Look for every pitfall in `run` (and the cross check, when there is one).
#[allow(clippy::too_many_arguments)]
pub fn detect(
    problem: &mut dyn Problem,
    t0: f64,
    y0: &[f64],
    settings: &Settings,
    info: &MethodInfo,
    run: &Run,
    quantities: &[Quantity],
    cross: Option<&super::check::CrossCheck>,
    opts: &super::check::Options,
    independent: &str,
) -> Found {
    let mut out = Vec::new();
    let names: Vec<String> = problem.state_names().to_vec();
    let span = (settings.to - t0).abs();
    let diag = |code: &str| run.diagnostics.iter().find(|d| d.code == code);

    // Non-uniqueness: a rate not Lipschitz at the initial value.
    if let Some(nl) = probe::lipschitz_at(problem, t0, y0) {
        let y = &names[nl.state];
        let mut f = vec![0.0; y0.len()];
        problem.rhs(t0, y0, &mut f);
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
        out.push(pit(
            "not-unique",
            "warning",
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
        ));
    }

    // A solution leaving its formula's domain.
    if let Status::Failed(SolveError::NonFinite { t, cause, states, .. }) = &run.status {
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
            "alarm",
            "The solution left the range where its formula has a value",
            format!("The run stopped at {independent} = {}: {what}.{advice}", with_digits(*t, 6)),
            Some(*t),
            Some(*t),
        );
        p.covers = vec!["non-finite"];
        out.push(p);
    }

    // Finite-time blow-up.
    let blew = matches!(run.status, Status::Failed(SolveError::BlowUp { .. }))
        || matches!(run.status, Status::Failed(SolveError::StepSizeTooSmall { .. }) | Status::Failed(SolveError::MaxSteps { .. }));
    if blew && run.t.len() >= 3 {
        let n = run.t.len();
        let (a, b) = (state_at(run, n - 2), state_at(run, n - 1));
        let fit = probe::blow_up(problem, (run.t[n - 2], &a), (run.t[n - 1], &b));
        let grew = b.iter().zip(y0).any(|(v, v0)| v.abs() > 1e3 * v0.abs().max(1.0));
        if let Some(fit) = fit.filter(|f| grew && (f.t_star - run.t[n - 1]).abs() <= 0.05 * span.max(f64::MIN_POSITIVE)) {
            let driver = diag("blow-up").map(|d| format!("{} ", capital(&d.message))).unwrap_or_default();
            let mut p = pit(
                "blow-up",
                "alarm",
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
            out.push(p);
        }
    }

    // Stability of a fixed step.
    let fixed = !info.adaptive || settings.step.is_some();
    let mut stability = None;
    if let (true, Some(h), Some(sf)) = (fixed, settings.step, function_for(info)) {
        let mut points = Vec::new();
        let mut worst = (0.0f64, None::<(f64, C64)>);
        let mut largest: Option<f64> = None;
        for k in sample_indices(run.t.len(), 30) {
            let y = state_at(run, k);
            let Some(spec) = probe::spectrum(problem, run.t[k], &y) else { continue };
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
        if worst.0 > 1.0 + 1e-9 {
            let (t, l) = worst.1.unwrap_or((t0, C64::new(0.0, 0.0)));
            let steps = span / h;
            let amp = worst.0.powf(steps.min(1e6));
            let growth = format!(
                "each step multiplies that mode by {} instead of damping it{}",
                with_digits(worst.0, 3),
                if amp.is_finite() && amp > 10.0 { format!(", {} over the run", with_digits(amp, 2)) } else { String::new() }
            );
            let head = match diag("unstable-step") {
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
                        "Over all the modes seen along the run the largest stable step is h = {}: take h ≤ {}, or an implicit method (backward-euler, trapezoid), or `auto`. ",
                        with_digits(x, 3),
                        short(0.9 * x, 2)
                    ),
                    _ => "No step size is stable on this mode with this method; take RK4 or an implicit method. ".to_string(),
                }
            );
            let mut p = pit(
                "unstable-step",
                if amp > 1e3 || !amp.is_finite() { "alarm" } else { "warning" },
                "The step is too large for stability",
                format!("{head}{extra}"),
                largest,
                Some(t),
            );
            p.covers = vec!["unstable-step"];
            out.push(p);
        }
        stability = Some(Stability {
            method: info.id.to_string(),
            h,
            points: points.iter().map(|z| (z.re, z.im)).collect(),
            largest_stable_step: largest,
            worst_growth: worst.0,
        });
    }

    // Stiffness.
    let switched = diag("method-switch");
    let ratio_steps = cross.and_then(|c| match (c.explicit_steps, c.implicit_steps) {
        (Some(e), Some(i)) if i > 0 => Some(e as f64 / i as f64),
        (None, Some(_)) => Some(f64::INFINITY),
        _ => None,
    });
    let stiff_by_steps = ratio_steps.is_some_and(|r| r >= 5.0) && cross.and_then(|c| c.explicit_steps).map_or(true, |s| s >= 200);
    if diag("stiff").is_some() || switched.is_some() || stiff_by_steps {
        let mut fastest = 0.0f64;
        for k in sample_indices(run.t.len(), 20) {
            if let Some(spec) = probe::spectrum(problem, run.t[k], &state_at(run, k)) {
                for l in spec {
                    fastest = fastest.max(-l.re);
                }
            }
        }
        let mut msg = Vec::new();
        if let Some(d) = diag("stiff") {
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
        if let (Some(c), Some(r)) = (cross, ratio_steps) {
            msg.push(if r.is_finite() {
                format!("In the cross check the explicit method took {} times as many steps as the implicit one.", with_digits(r, 2))
            } else {
                "In the cross check the explicit method could not finish and the implicit one did.".to_string()
            });
            let _ = c;
        }
        let handled = info.implicit || switched.is_some();
        msg.push(if handled {
            match switched {
                Some(d) => format!("This run handled it: it {}.", d.message),
                None => format!("This run used {}, an implicit method, which is the right choice.", info.name),
            }
        } else {
            "Use `auto` or an implicit method for this model.".to_string()
        });
        let mut p = pit("stiff", if handled { "note" } else { "warning" }, "The model is stiff", msg.join(" "), (fastest > 0.0).then_some(fastest * span), None);
        p.covers = vec!["stiff"];
        out.push(p);
    }

    // Tolerance too loose for the digits shown.
    let atol = settings.tol.absolute;
    let weak: Vec<&Quantity> = quantities
        .iter()
        .filter(|q| q.error.is_some() && !q.negligible && q.digits + 1 < opts.shown_digits)
        .filter(|q| q.kind.is_time() || fixed || q.value.abs() > 1e3 * atol)
        .collect();
    let failed = matches!(run.status, Status::Failed(_));
    let unstable = out.iter().any(|p| p.code == "unstable-step");
    if let Some(w) = weak.iter().min_by_key(|q| q.digits).filter(|_| !failed && !unstable) {
        let fix = if fixed {
            let h = settings.step.unwrap_or(0.0);
            let e = w.error.unwrap_or(0.0);
            let target = 0.5 * w.value.abs() * 10f64.powi(-(opts.shown_digits as i32));
            let hn = h * (target / e).powf(1.0 / info.order.max(1) as f64);
            format!("Shrink the step to about h = {} (from {}), or read only {} digits.", with_digits(hn, 2), plain(h), w.digits)
        } else {
            format!(
                "Tighten the relative tolerance to {} (it is {}), or read only {} digits.",
                with_digits(10f64.powi(-(opts.shown_digits as i32 + 2)), 1),
                plain(settings.tol.relative),
                w.digits
            )
        };
        out.push(pit(
            "loose-tolerance",
            "warning",
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
        ));
    }

    // Events only grazed.
    let events = problem.events().to_vec();
    if !events.is_empty() && run.t.len() >= 3 {
        let n = run.t.len();
        let mut g = vec![vec![0.0; n]; events.len()];
        let mut buf = vec![0.0; events.len()];
        for k in 0..n {
            problem.event_values(run.t[k], &state_at(run, k), &mut buf);
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
                    "warning",
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
    }
    Found { pitfalls: out, stability, work: 0 }
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
