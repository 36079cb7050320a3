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
    /// Output times; without them every accepted step is reported.
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
pub const SETTING_NAMES: [&str; 12] = [
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
                        "at" => r.at = map.next_value()?,
                        "stepLimit" => r.step_limit = map.next_value()?,
                        "outputLimit" => r.output_limit = map.next_value()?,
                        "eventLimit" => r.event_limit = map.next_value()?,
                        "startStep" => r.start_step = map.next_value()?,
                        "largestStep" => r.largest_step = map.next_value()?,
                        "params" => r.params = map.next_value()?,
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
    /// Largest value.
    pub max: f64,
    /// When it was reached.
    pub t_max: f64,
    /// Smallest value.
    pub min: f64,
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
        ..d
    }
}

/// Compile `sheet` and apply the request's parameter overrides.
pub fn model(sheet_text: &str, req: &RunRequest) -> Result<Model, ApiError> {
    let mut m = sheet::compile(sheet_text).map_err(ApiError::Sheet)?;
    if let Some(params) = &req.params {
        for (name, &value) in params {
            if !value.is_finite() {
                return Err(ApiError::Settings(SolveError::InvalidSettings {
                    field: "params",
                    reason: format!("the value given for `{name}` is not a finite number"),
                }));
            }
            if !m.set_param(name, value) {
                return Err(ApiError::Settings(SolveError::InvalidSettings {
                    field: "params",
                    reason: format!("the sheet has no parameter named `{name}`"),
                }));
            }
        }
    }
    Ok(m)
}

/// Solve `sheet` with `req`.
pub fn solve(sheet_text: &str, req: &RunRequest) -> Result<RunReport, ApiError> {
    let mut m = model(sheet_text, req)?;
    run_model(&mut m, req)
}

/// Solve an already compiled model with `req`.
pub fn run_model(m: &mut Model, req: &RunRequest) -> Result<RunReport, ApiError> {
    for (field, v) in [("stepLimit", req.step_limit), ("outputLimit", req.output_limit), ("eventLimit", req.event_limit)] {
        if v.is_some_and(|x| !(x.is_finite() && x >= 0.0)) {
            return Err(ApiError::Settings(SolveError::InvalidSettings { field, reason: "must be a number ≥ 0".to_string() }));
        }
    }
    let s = settings(req);
    let (t0, y0) = (m.t0(), m.initial_state().to_vec());
    // In the page the formulas run as an emitted wasm module; elsewhere, or
    // when the page may not compile one, on the interpreter.
    let mut p = crate::emit::EmittedModel::new(&mut *m);
    let run = solve::solve(&mut p, t0, &y0, &s).map_err(ApiError::Settings)?;
    drop(p);
    Ok(report(m, &s.method, run))
}

/// The JS shape of a run of `m`.
pub fn report(m: &Model, method: &str, run: Run) -> RunReport {
    let states = m.state_names().to_vec();
    let helpers = m.helper_names().to_vec();
    let names: Vec<String> = states.iter().chain(&helpers).cloned().collect();
    let named = |v: Vec<f64>, w: Vec<f64>| Named(names.iter().cloned().zip(v.into_iter().chain(w)).collect());
    let values = Named(names.iter().cloned().zip(run.states.into_iter().chain(run.helpers)).collect());
    let events = run.events.into_iter().map(|e| EventReport { name: e.name, t: e.t, values: named(e.states, e.helpers) }).collect();
    let extrema = run
        .extrema
        .into_iter()
        .map(|x| ExtremumReport { name: x.name, max: x.max, t_max: x.t_max, min: x.min, t_min: x.t_min })
        .collect();
    let diagnostics = run
        .diagnostics
        .into_iter()
        .map(|d| DiagnosticReport { level: d.level, code: d.code, message: d.message, t: d.t })
        .collect();
    let (status, error) = match &run.status {
        Status::Finished => ("finished", None),
        Status::Stopped { .. } => ("stopped", None),
        Status::Failed(e) => ("failed", Some(e.to_string())),
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
        error,
        stats: run.stats,
    }
}
