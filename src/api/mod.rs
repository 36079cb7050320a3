//! The JS API's request and report, in plain serde types.
//!
//! The web layer only converts these to and from JS values; everything here
//! runs natively, so the API's behaviour is tested with `cargo test`.

pub mod compare;
pub mod field;

use serde::ser::SerializeMap;
use serde::{Deserialize, Serialize, Serializer};

use crate::problem::Problem;
use crate::sheet::{self, Model, ModelError};
use crate::solve::{self, Level, Run, Settings, SolveError, Status, Tolerance};

pub mod study;

/// Settings of one run, as the JS API takes them (`solve(sheet, settings)`).
/// Absent fields take the solver's defaults ([`Settings::default`]). A name
/// that is not one of these is refused with [`UnknownSetting`], which names
/// the setting meant (see [`SETTING_NAMES`] and [`FORMER_NAMES`]).
#[derive(Clone, Debug, Default, Serialize, PartialEq)]
#[serde(rename_all = "camelCase")]
pub struct RunRequest {
    /// End of the run. Required; may be before the sheet's start (backward run).
    pub to: Option<f64>,
    /// Method id (see `methods()`); `auto` when absent.
    pub method: Option<String>,
    /// Step size `h` for fixed-step methods.
    pub step: Option<f64>,
    /// Tolerances of the adaptive methods: `tolerance: { relative, absolute }`.
    pub tolerance: ToleranceRequest,
    /// Output times; without them every accepted step is reported. More
    /// than [`solve::CEILING_OUTPUT`] are refused as the request is read,
    /// before any of them is converted.
    pub at: Option<Vec<f64>>,
    /// Step limit (default 1e6).
    pub step_limit: Option<f64>,
    /// Most output points kept without `at` (default 200 000).
    pub output_limit: Option<f64>,
    /// Most event crossings recorded (default 10 000).
    pub event_limit: Option<f64>,
    /// First step of an adaptive method (default automatic).
    pub start_step: Option<f64>,
    /// Largest step of an adaptive method (default the run's length).
    pub largest_step: Option<f64>,
    /// Parameter values that replace the sheet's, by name (sliders, sweeps).
    pub params: Option<std::collections::BTreeMap<String, f64>>,
    /// Locate the peak and trough of every state and helper (default
    /// `true`). `false` leaves `extrema` empty and skips their search, which
    /// is much of a run's cost for a cheap model (a sweep that needs only
    /// end values or event times).
    pub extrema: Option<bool>,
}

/// Read a list of output times, refusing more than the solver could ever
/// keep from the length the list announces, before reading any of them (a
/// list that announces none is cut off at the first time too many).
fn bounded_times<'de, D: serde::Deserializer<'de>>(d: D) -> Result<Option<Vec<f64>>, D::Error> {
    use serde::de::{Error, SeqAccess, Visitor};
    struct Times;
    impl<'de> Visitor<'de> for Times {
        type Value = Vec<f64>;
        fn expecting(&self, f: &mut std::fmt::Formatter) -> std::fmt::Result {
            write!(f, "a list of at most {} output times", solve::CEILING_OUTPUT)
        }
        fn visit_seq<A: SeqAccess<'de>>(self, mut seq: A) -> Result<Vec<f64>, A::Error> {
            let limit = solve::CEILING_OUTPUT;
            let too_many = |n: String| A::Error::custom(format!("{n} output times asked for in `at`; at most {limit} can be kept"));
            if let Some(n) = seq.size_hint().filter(|&n| n > limit) {
                return Err(too_many(n.to_string()));
            }
            let mut out = Vec::with_capacity(seq.size_hint().unwrap_or(0));
            while let Some(x) = seq.next_element()? {
                if out.len() == limit {
                    return Err(too_many(format!("more than {limit}")));
                }
                out.push(x);
            }
            Ok(out)
        }
    }
    struct Maybe;
    impl<'de> Visitor<'de> for Maybe {
        type Value = Option<Vec<f64>>;
        fn expecting(&self, f: &mut std::fmt::Formatter) -> std::fmt::Result {
            write!(f, "a list of output times, or nothing")
        }
        fn visit_none<E: Error>(self) -> Result<Self::Value, E> {
            Ok(None)
        }
        fn visit_unit<E: Error>(self) -> Result<Self::Value, E> {
            Ok(None)
        }
        fn visit_some<D2: serde::Deserializer<'de>>(self, d: D2) -> Result<Self::Value, D2::Error> {
            d.deserialize_seq(Times).map(Some)
        }
    }
    d.deserialize_option(Maybe)
}

/// The `tolerance` of a [`RunRequest`].
#[derive(Clone, Copy, Debug, Default, Serialize, PartialEq)]
pub struct ToleranceRequest {
    /// Relative tolerance (default 1e-6).
    pub relative: Option<f64>,
    /// Absolute tolerance (default 1e-9).
    pub absolute: Option<f64>,
}

/// Every setting [`RunRequest`] takes, as the JS API spells it (a dot for a
/// field of `tolerance`).
pub const SETTING_NAMES: [&str; 13] = [
    "to",
    "method",
    "step",
    "tolerance.relative",
    "tolerance.absolute",
    "at",
    "stepLimit",
    "outputLimit",
    "eventLimit",
    "startStep",
    "largestStep",
    "params",
    "extrema",
];

/// The setting names of format version 1 (files, links and the JS API
/// before it) with the names that replaced them. Version-1 files and links
/// are read with these; `solve` refuses them, naming the new name.
pub const FORMER_NAMES: [(&str, &str); 7] = [
    ("rtol", "tolerance.relative"),
    ("atol", "tolerance.absolute"),
    ("firstStep", "startStep"),
    ("maxStep", "largestStep"),
    ("maxSteps", "stepLimit"),
    ("maxOutput", "outputLimit"),
    ("maxEvents", "eventLimit"),
];

/// The method ids of format version 1 with the ids that replaced them.
pub const FORMER_METHOD_IDS: [(&str, &str); 6] = [
    ("bs32", "bogacki-shampine-3"),
    ("dp54", "dormand-prince-5"),
    ("dp853", "dormand-prince-8"),
    ("beuler", "backward-euler"),
    ("rodas4", "rosenbrock-4"),
    ("radau5", "radau-iia-5"),
];

/// A setting name that `solve` does not take, with the one most likely meant.
#[derive(Clone, Debug, PartialEq)]
pub struct UnknownSetting {
    /// The name as given, with its path (`tolerance.relativ`).
    pub name: String,
    /// What it is taken for.
    pub meant: Meant,
}

/// What an unknown setting name was most likely meant to be.
#[derive(Clone, Debug, PartialEq)]
pub enum Meant {
    /// A name of format version 1, replaced by this one.
    Renamed(&'static str),
    /// Close to this valid name: a typo.
    Close(&'static str),
    /// Not close to any valid name.
    Nothing,
}

impl UnknownSetting {
    /// The error for the name `key` inside `tolerance` (`inner`) or at the top.
    fn new(key: &str, inner: bool) -> UnknownSetting {
        let name = if inner { format!("tolerance.{key}") } else { key.to_string() };
        let former = |k: &str| FORMER_NAMES.iter().find(|f| f.0 == k).map(|f| f.1);
        let meant = if let Some(new) = former(key) {
            Meant::Renamed(new)
        } else {
            // Typos are matched against the valid names and the former ones;
            // the tolerance fields also without their `tolerance.`.
            let mut candidates: Vec<(&str, &'static str)> = FORMER_NAMES.to_vec();
            candidates.extend([("relative", "tolerance.relative"), ("absolute", "tolerance.absolute")]);
            if !inner {
                candidates.extend(SETTING_NAMES.iter().map(|n| (*n, *n)));
                candidates.push(("tolerance", "tolerance"));
            }
            let meant = |name: &str| candidates.iter().find(|k| k.0 == name).map(|k| k.1);
            let close = meant(key).or_else(|| sheet::suggest(key, candidates.iter().map(|c| c.0)).and_then(|c| meant(&c)));
            close.map_or(Meant::Nothing, Meant::Close)
        };
        UnknownSetting { name, meant }
    }
}

impl std::fmt::Display for UnknownSetting {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        let name = &self.name;
        match self.meant {
            Meant::Renamed(new) => {
                write!(f, "the setting `{name}` has a new name: `{new}`")?;
                match new.strip_prefix("tolerance.") {
                    Some(leaf) => write!(f, " (write `tolerance: {{ {leaf}: … }}`)"),
                    None => Ok(()),
                }
            }
            Meant::Close(valid) => write!(f, "unknown setting `{name}`; did you mean `{valid}`?"),
            Meant::Nothing => write!(f, "unknown setting `{name}`; the settings are {}", SETTING_NAMES.join(", ")),
        }
    }
}

impl std::error::Error for UnknownSetting {}

/// A method id of format version 1 given to `solve`.
#[derive(Clone, Debug, PartialEq)]
pub struct RenamedMethod {
    /// The id as given, e.g. `dp54`.
    pub old: String,
    /// Its id now, e.g. `dormand-prince-5`.
    pub new: &'static str,
}

impl std::fmt::Display for RenamedMethod {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        write!(f, "the method id `{}` has a new name: `{}`", self.old, self.new)
    }
}

impl std::error::Error for RenamedMethod {}

// The request is read key by key so that a name it does not take is an
// error that says which name was meant (a derived `deny_unknown_fields` only
// lists them all, and the JS reader it runs on never sees unknown keys).
impl<'de> Deserialize<'de> for RunRequest {
    fn deserialize<D: serde::Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        struct Keys;
        impl<'de> serde::de::Visitor<'de> for Keys {
            type Value = RunRequest;
            fn expecting(&self, f: &mut std::fmt::Formatter) -> std::fmt::Result {
                f.write_str("an object of run settings")
            }
            fn visit_map<A: serde::de::MapAccess<'de>>(self, mut map: A) -> Result<RunRequest, A::Error> {
                let mut r = RunRequest::default();
                while let Some(key) = map.next_key::<String>()? {
                    match key.as_str() {
                        "to" => r.to = map.next_value()?,
                        "method" => r.method = map.next_value()?,
                        "step" => r.step = map.next_value()?,
                        "tolerance" => r.tolerance = map.next_value::<Option<ToleranceRequest>>()?.unwrap_or_default(),
                        "at" => r.at = map.next_value::<Times>()?.0,
                        "stepLimit" => r.step_limit = map.next_value()?,
                        "outputLimit" => r.output_limit = map.next_value()?,
                        "eventLimit" => r.event_limit = map.next_value()?,
                        "startStep" => r.start_step = map.next_value()?,
                        "largestStep" => r.largest_step = map.next_value()?,
                        "params" => r.params = map.next_value()?,
                        "extrema" => r.extrema = map.next_value()?,
                        other => return Err(serde::de::Error::custom(UnknownSetting::new(other, false))),
                    }
                }
                if let Some(old) = r.method.as_deref() {
                    if let Some(&(_, new)) = FORMER_METHOD_IDS.iter().find(|(k, _)| *k == old) {
                        return Err(serde::de::Error::custom(RenamedMethod { old: old.to_string(), new }));
                    }
                }
                Ok(r)
            }
        }
        d.deserialize_any(Keys)
    }
}

impl<'de> Deserialize<'de> for ToleranceRequest {
    fn deserialize<D: serde::Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        struct Keys;
        impl<'de> serde::de::Visitor<'de> for Keys {
            type Value = ToleranceRequest;
            fn expecting(&self, f: &mut std::fmt::Formatter) -> std::fmt::Result {
                f.write_str("the tolerances as `{ relative, absolute }`")
            }
            fn visit_map<A: serde::de::MapAccess<'de>>(self, mut map: A) -> Result<ToleranceRequest, A::Error> {
                let mut t = ToleranceRequest::default();
                while let Some(key) = map.next_key::<String>()? {
                    match key.as_str() {
                        "relative" => t.relative = map.next_value()?,
                        "absolute" => t.absolute = map.next_value()?,
                        other => return Err(serde::de::Error::custom(UnknownSetting::new(other, true))),
                    }
                }
                Ok(t)
            }
        }
        d.deserialize_any(Keys)
    }
}

/// Output times read through [`bounded_times`].
struct Times(Option<Vec<f64>>);

impl<'de> Deserialize<'de> for Times {
    fn deserialize<D: serde::Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        bounded_times(d).map(Times)
    }
}

/// Values keyed by name, in model order (a JS object).
#[derive(Clone, Debug, Default, PartialEq)]
pub struct Named<V>(pub Vec<(String, V)>);

impl<V: Serialize> Serialize for Named<V> {
    fn serialize<S: Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        let mut m = s.serialize_map(Some(self.0.len()))?;
        for (k, v) in &self.0 {
            m.serialize_entry(k, v)?;
        }
        m.end()
    }
}

/// One event crossing.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct EventReport {
    /// The condition text as written in the sheet.
    pub name: String,
    /// When it happened.
    pub t: f64,
    /// Every state and helper there, by name.
    pub values: Named<f64>,
}

/// The peak and trough of one state or helper.
#[derive(Clone, Debug, PartialEq, Serialize)]
#[serde(rename_all = "camelCase")]
pub struct ExtremumReport {
    /// State or helper name.
    pub name: String,
    /// Largest value; `None` (null) when it overflowed to +∞ (a diagnostic
    /// `overflow` says where).
    pub max: Option<f64>,
    /// When it was reached (for an overflow: when it first overflowed).
    pub t_max: f64,
    /// Smallest value; `None` (null) when it overflowed to −∞.
    pub min: Option<f64>,
    /// When it was reached.
    pub t_min: f64,
}

/// A plain-language note about the run.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct DiagnosticReport {
    /// `info`, `warning` or `error`.
    pub level: Level,
    /// Stable kebab-case id.
    pub code: &'static str,
    /// What happened and what to do.
    pub message: String,
    /// Where in the run, when it applies to a time.
    pub t: Option<f64>,
}

/// One run's result as the JS API returns it.
#[derive(Clone, Debug, Serialize)]
#[serde(rename_all = "camelCase")]
pub struct RunReport {
    /// The independent variable's name (`t` unless the sheet declares another).
    pub independent: String,
    /// The method that ran.
    pub method: String,
    /// State names, in order.
    pub states: Vec<String>,
    /// Helper names, in order.
    pub helpers: Vec<String>,
    /// Output times.
    pub t: Vec<f64>,
    /// Every state and helper at `t`, by name.
    pub values: Named<Vec<f64>>,
    /// Event crossings in time order.
    pub events: Vec<EventReport>,
    /// Peak and trough of every state and helper.
    pub extrema: Vec<ExtremumReport>,
    /// Notes, warnings and errors, in the order they arose.
    pub diagnostics: Vec<DiagnosticReport>,
    /// `finished`, `stopped` or `failed`.
    pub status: &'static str,
    /// How far a run that did not finish got: the time of its stop event,
    /// or where it failed (which may lie past the last output time); `None`
    /// when it finished (it reached its end).
    pub reached: Option<f64>,
    /// Why the run failed, when it did (also the last diagnostic).
    pub error: Option<String>,
    /// Work counters.
    pub stats: solve::Stats,
}

/// Why a request could not be run.
#[derive(Clone, Debug, PartialEq)]
pub enum ApiError {
    /// The sheet cannot be read: the error has its line and column.
    Sheet(ModelError),
    /// A setting is invalid.
    Settings(SolveError),
}

impl std::fmt::Display for ApiError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            ApiError::Sheet(e) => write!(f, "{}", e.message()),
            ApiError::Settings(e) => write!(f, "{e}"),
        }
    }
}

impl std::error::Error for ApiError {}

fn count(v: Option<f64>, default: u64) -> u64 {
    match v {
        Some(x) if x.is_finite() && x >= 0.0 => x.min(u64::MAX as f64) as u64,
        Some(_) => 0, // rejected by the solver's own range checks
        None => default,
    }
}

/// Solver settings from a request; the solver checks their ranges.
pub fn settings(req: &RunRequest) -> Settings {
    let d = Settings::default();
    Settings {
        method: req.method.clone().unwrap_or_else(|| "auto".to_string()),
        to: req.to.unwrap_or(f64::NAN),
        step: req.step,
        tol: Tolerance {
            relative: req.tolerance.relative.unwrap_or(d.tol.relative),
            absolute: req.tolerance.absolute.unwrap_or(d.tol.absolute),
        },
        at: req.at.clone(),
        max_steps: count(req.step_limit, d.max_steps),
        max_output: count(req.output_limit, d.max_output as u64) as usize,
        max_events: count(req.event_limit, d.max_events as u64) as usize,
        first_step: req.start_step,
        max_step: req.largest_step,
        extrema: req.extrema.unwrap_or(d.extrema),
        ..d
    }
}

/// Compile `sheet` and apply the request's parameter overrides.
pub fn model(sheet_text: &str, req: &RunRequest) -> Result<Model, ApiError> {
    let m = sheet::compile(sheet_text).map_err(ApiError::Sheet)?;
    if req.params.is_none() {
        return Ok(m);
    }
    overridden(&m, req)
}

/// `m` with the request's parameter overrides (`m` itself when there are none).
fn overridden(m: &Model, req: &RunRequest) -> Result<Model, ApiError> {
    let Some(params) = &req.params else { return Ok(m.clone()) };
    let invalid = |reason: String| ApiError::Settings(SolveError::InvalidSettings { field: "params", reason });
    if let Some((name, _)) = params.iter().find(|(_, v)| !v.is_finite()) {
        return Err(invalid(format!("the value given for `{name}` is not a finite number")));
    }
    let values: Vec<(&str, f64)> = params.iter().map(|(n, &v)| (n.as_str(), v)).collect();
    m.with_params(&values).map_err(|name| invalid(format!("the sheet has no parameter named `{name}`")))
}

/// Solve `sheet` with `req`.
///
/// The compiled sheets of the last few calls are kept ([`KEPT`]): a call
/// with the same sheet text skips parsing and lowering, and one with the same
/// text and parameter values also reuses the emitted module. A kept model
/// gives the same results, bit for bit, as a freshly compiled one.
pub fn solve(sheet_text: &str, req: &RunRequest) -> Result<RunReport, ApiError> {
    let overrides: Vec<(String, u64)> =
        req.params.iter().flatten().map(|(n, v)| (n.clone(), v.to_bits())).collect();
    let emitting = crate::emit::model::available();
    let ready = CACHE.with(|c| c.borrow_mut().take_ready(sheet_text, &overrides, emitting));
    let mut p = match ready {
        Some(p) => p,
        None => {
            let kept = CACHE.with(|c| c.borrow_mut().base(sheet_text, |m| overridden(m, req)));
            let m = match kept {
                Some(m) => m?,
                None => {
                    let base = sheet::compile(sheet_text).map_err(ApiError::Sheet)?;
                    let m = overridden(&base, req);
                    CACHE.with(|c| c.borrow_mut().keep_base(sheet_text, base));
                    m?
                }
            };
            crate::emit::EmittedModel::new(m)
        }
    };
    let result = run_emitted(&mut p, req);
    CACHE.with(|c| c.borrow_mut().keep_ready(sheet_text, overrides, emitting, p));
    result
}

/// How many compiled sheets [`solve`] keeps, of each kind.
pub const KEPT: usize = 8;

/// The compiled sheets of the last calls of [`solve`], most recent first:
/// base models by sheet text, and ready (emitted) models by text, parameter
/// values and whether they were made emitting.
#[derive(Default)]
struct Cache {
    base: Vec<(String, Model)>,
    ready: Vec<(ReadyKey, crate::emit::EmittedModel<Model>)>,
}

/// A ready model's key: the sheet text, the parameter values (as bits) and
/// whether it was made emitting.
type ReadyKey = (String, Vec<(String, u64)>, bool);

impl Cache {
    /// `make` of the base model kept for `text` (moved to the front), if any.
    fn base<R>(&mut self, text: &str, make: impl FnOnce(&Model) -> R) -> Option<R> {
        let k = self.base.iter().position(|(t, _)| t == text)?;
        let e = self.base.remove(k);
        let made = make(&e.1);
        self.base.insert(0, e);
        Some(made)
    }

    fn keep_base(&mut self, text: &str, m: Model) {
        self.base.insert(0, (text.to_string(), m));
        self.base.truncate(KEPT);
    }

    fn take_ready(&mut self, text: &str, overrides: &[(String, u64)], emitting: bool) -> Option<crate::emit::EmittedModel<Model>> {
        let k = self.ready.iter().position(|((t, o, e), _)| t == text && o == overrides && *e == emitting)?;
        Some(self.ready.remove(k).1)
    }

    fn keep_ready(&mut self, text: &str, overrides: Vec<(String, u64)>, emitting: bool, m: crate::emit::EmittedModel<Model>) {
        self.ready.insert(0, ((text.to_string(), overrides, emitting), m));
        self.ready.truncate(KEPT);
    }
}

thread_local! {
    static CACHE: std::cell::RefCell<Cache> = std::cell::RefCell::new(Cache::default());
}

fn check_counts(req: &RunRequest) -> Result<(), ApiError> {
    for (field, v) in [("stepLimit", req.step_limit), ("outputLimit", req.output_limit), ("eventLimit", req.event_limit)] {
        if v.is_some_and(|x| !(x.is_finite() && x >= 0.0)) {
            return Err(ApiError::Settings(SolveError::InvalidSettings { field, reason: "must be a number ≥ 0".to_string() }));
        }
    }
    Ok(())
}

/// Solve an already compiled model with `req`.
pub fn run_model(m: &mut Model, req: &RunRequest) -> Result<RunReport, ApiError> {
    // In the page the formulas run as an emitted wasm module; elsewhere, or
    // when the page may not compile one, on the interpreter.
    run_emitted(&mut crate::emit::EmittedModel::new(&mut *m), req)
}

fn run_emitted<M: std::borrow::BorrowMut<Model>>(p: &mut crate::emit::EmittedModel<M>, req: &RunRequest) -> Result<RunReport, ApiError> {
    check_counts(req)?;
    let s = settings(req);
    let (t0, y0) = (p.model().t0(), p.model().initial_state().to_vec());
    let run = solve::solve(p, t0, &y0, &s).map_err(ApiError::Settings)?;
    Ok(report(p.model(), &s.method, run))
}

/// The JS shape of a run of `m`.
pub fn report(m: &Model, method: &str, run: Run) -> RunReport {
    let states = m.state_names().to_vec();
    let helpers = m.helper_names().to_vec();
    let names: Vec<String> = states.iter().chain(&helpers).cloned().collect();
    let named = |v: Vec<f64>, w: Vec<f64>| Named(names.iter().cloned().zip(v.into_iter().chain(w)).collect());
    let values = Named(names.iter().cloned().zip(run.states.into_iter().chain(run.helpers)).collect());
    let stop_t = run.events.last().map(|e| e.t);
    let events = run.events.into_iter().map(|e| EventReport { name: e.name, t: e.t, values: named(e.states, e.helpers) }).collect();
    let mut diagnostics: Vec<DiagnosticReport> = run
        .diagnostics
        .into_iter()
        .map(|d| DiagnosticReport { level: d.level, code: d.code, message: d.message, t: d.t })
        .collect();
    let extrema = run
        .extrema
        .into_iter()
        .map(|x| {
            for (v, t) in [(x.max, x.t_max), (x.min, x.t_min)].into_iter().filter(|(v, _)| v.is_infinite()) {
                diagnostics.push(overflowed(&x.name, v, t, m.independent()));
            }
            let finite = |v: f64| v.is_finite().then_some(v);
            ExtremumReport { name: x.name, max: finite(x.max), t_max: x.t_max, min: finite(x.min), t_min: x.t_min }
        })
        .collect();
    let status = run.status.word();
    let (error, reached) = match &run.status {
        Status::Finished => (None, None),
        Status::Stopped { .. } => (None, stop_t),
        Status::Failed(e) => (Some(e.to_string()), e.time()),
    };
    RunReport {
        independent: m.independent().to_string(),
        method: method.to_string(),
        states,
        helpers,
        t: run.t,
        values,
        events,
        extrema,
        diagnostics,
        status,
        reached,
        error,
        stats: run.stats,
    }
}

/// The note for a state or helper that grew past the largest double.
fn overflowed(name: &str, v: f64, t: f64, independent: &str) -> DiagnosticReport {
    let (past, inf, which) = if v > 0.0 {
        ("grows past the largest number a double can hold (about 1.8e308)", "+∞", "highest")
    } else {
        ("falls below the most negative number a double can hold (about −1.8e308)", "−∞", "lowest")
    };
    DiagnosticReport {
        level: Level::Warning,
        code: "overflow",
        message: format!(
            "`{name}` {past} from {independent} = {} on: its values there are {inf}, so it has no {which} value to show. Rescale it (other units, or its logarithm), or end the run before",
            solve::num(t)
        ),
        t: Some(t),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Every number and word of a report, for a bitwise comparison (`{:?}`
    /// prints each f64 exactly, NaN and signed zeros included).
    fn exact(r: &RunReport) -> String {
        format!("{r:?}")
    }

    #[test]
    fn kept_models_give_the_results_of_fresh_ones_bit_for_bit() {
        // A sheet with helpers, a switch, an event and a parameter, on an
        // explicit and a stiff method (whose Jacobian tapes a kept model has
        // built already); our own scenario.
        let sheet = "k = 0.8\nq = k*sqrt(abs(h))\nh' = -q + 0.1*heaviside(t - 2)\nh(0) = 3\nmark when h < 1\n";
        for method in ["dormand-prince-5", "auto", "radau-iia-5"] {
            let req = RunRequest { to: Some(10.0), method: Some(method.into()), ..Default::default() };
            let fresh = run_model(&mut model(sheet, &req).unwrap(), &req).unwrap();
            for _ in 0..3 {
                assert_eq!(exact(&solve(sheet, &req).unwrap()), exact(&fresh), "{method}");
            }
            // New parameter values: a kept base model, recompiled with them.
            for k in [0.5, 0.8, 1.25] {
                let p = RunRequest { params: Some([("k".to_string(), k)].into()), ..req.clone() };
                let fresh = run_model(&mut model(sheet, &p).unwrap(), &p).unwrap();
                assert_eq!(exact(&solve(sheet, &p).unwrap()), exact(&fresh), "{method} k = {k}");
            }
        }
        // More sheets than are kept, then the first again.
        for n in 0..KEPT + 2 {
            let s = format!("y' = -{}*y\ny(0) = 1\n", n + 1);
            let req = RunRequest { to: Some(1.0), ..Default::default() };
            assert_eq!(exact(&solve(&s, &req).unwrap()), exact(&run_model(&mut model(&s, &req).unwrap(), &req).unwrap()));
        }
    }

    #[test]
    fn a_run_without_extrema_takes_the_same_steps_and_reports_none() {
        let sheet = "k = 0.8\nq = k*sqrt(abs(h))\nh' = -q + 0.1*heaviside(t - 2)\nh(0) = 3\nmark when h < 1\n";
        for method in ["dormand-prince-5", "dormand-prince-8", "auto"] {
            let req = RunRequest { to: Some(10.0), method: Some(method.into()), ..Default::default() };
            let with = solve(sheet, &req).unwrap();
            let without = solve(sheet, &RunRequest { extrema: Some(false), ..req.clone() }).unwrap();
            assert_eq!(with.extrema.len(), 2);
            assert!(without.extrema.is_empty());
            assert_eq!(format!("{:?}", (&with.t, &with.values, &with.events)), format!("{:?}", (&without.t, &without.values, &without.events)), "{method}");
            assert_eq!(with.stats.steps, without.stats.steps);
        }
    }

    #[test]
    fn errors_are_the_same_through_kept_models() {
        let sheet = "k = 1\ny' = -k*y\ny(0) = 1\n";
        let req = RunRequest { to: Some(1.0), ..Default::default() };
        solve(sheet, &req).unwrap();
        let unknown = RunRequest { params: Some([("c".to_string(), 1.0)].into()), ..req.clone() };
        assert!(matches!(solve(sheet, &unknown), Err(ApiError::Settings(SolveError::InvalidSettings { field: "params", .. }))));
        let bad = RunRequest { step_limit: Some(-1.0), ..req.clone() };
        assert!(matches!(solve(sheet, &bad), Err(ApiError::Settings(SolveError::InvalidSettings { field: "stepLimit", .. }))));
        assert!(matches!(solve("y' = \n", &req), Err(ApiError::Sheet(_))));
        assert_eq!(exact(&solve(sheet, &req).unwrap()), exact(&run_model(&mut model(sheet, &req).unwrap(), &req).unwrap()));
    }
}
