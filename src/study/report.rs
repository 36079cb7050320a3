//! What an accuracy check reports, in the words the check and the pitfalls
//! share: the summary quantities of a run and their names in sentences, the
//! checked quantities, the cross check, the stability picture, the pitfalls
//! and the report that holds them all.
//!
//! [`super::check`] fills these in and [`super::pitfalls`] finds the
//! pitfalls; both import this file and neither imports the other's types.

use serde::Serialize;

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


/// How serious a pitfall is, most serious first (so that sorting by it puts
/// alarms first).
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord, Serialize)]
#[serde(rename_all = "camelCase")]
pub enum Severity {
    /// The results cannot be trusted as they stand.
    Alarm,
    /// The results may be wrong, or the run could be done better; read the message.
    Warning,
    /// For information: the run handled it.
    Note,
}

/// One pitfall found in a run.
#[derive(Clone, Debug, PartialEq, Serialize)]
#[serde(rename_all = "camelCase")]
pub struct Pitfall {
    /// Stable kebab-case id: `not-unique`, `leaves-domain`, `blow-up`,
    /// `unstable-step`, `stiff`, `loose-tolerance`, `grazed`,
    /// `event-mismatch`, `status-mismatch`.
    pub code: &'static str,
    /// How serious it is.
    pub level: Severity,
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

/// `a`, `a and b`, `a, b and c`.
pub fn list(items: &[String]) -> String {
    match items.len() {
        0 => String::new(),
        1 => items[0].clone(),
        n => format!("{} and {}", items[..n - 1].join(", "), items[n - 1]),
    }
}
