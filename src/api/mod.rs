//! The JS API's request and report, in plain serde types.
//!
//! The web layer only converts these to and from JS values; everything here
//! runs natively, so the API's behaviour is tested with `cargo test`.

use serde::ser::SerializeMap;
use serde::{Deserialize, Serialize, Serializer};

pub mod study;

/// Settings of one run, as the JS API takes them (`solve(sheet, settings)`).
#[derive(Clone, Debug, Default, Deserialize)]
#[serde(rename_all = "camelCase", default)]
pub struct RunRequest {
    /// End of the run. Required; may be before the sheet's start (backward run).
    pub to: Option<f64>,
    /// Method id; `auto` when absent.
    pub method: Option<String>,
    /// Step size for fixed-step methods.
    pub step: Option<f64>,
    /// Relative tolerance for adaptive methods (default 1e-6).
    pub rtol: Option<f64>,
    /// Absolute tolerance for adaptive methods (default 1e-9).
    pub atol: Option<f64>,
    /// Output times; without them every accepted step is reported.
    pub at: Option<Vec<f64>>,
    /// Step cap (default 1e6).
    pub max_steps: Option<f64>,
}

/// Values keyed by name, in model order (a JS object).
#[derive(Clone, Debug, Default, PartialEq)]
pub struct Named(pub Vec<(String, Vec<f64>)>);

impl Serialize for Named {
    fn serialize<S: Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        let mut m = s.serialize_map(Some(self.0.len()))?;
        for (k, v) in &self.0 {
            m.serialize_entry(k, v)?;
        }
        m.end()
    }
}

/// Work counters of a run.
#[derive(Clone, Copy, Debug, Default, PartialEq, Serialize)]
#[serde(rename_all = "camelCase")]
pub struct ReportStats {
    /// Right-hand-side evaluations.
    pub rhs_evals: u64,
    /// Accepted steps.
    pub steps: u64,
    /// Rejected steps.
    pub rejected: u64,
    /// Jacobian evaluations.
    pub jacobians: u64,
    /// LU factorizations.
    pub factorizations: u64,
}

/// One run's result as the JS API returns it.
#[derive(Clone, Debug, Default, Serialize)]
#[serde(rename_all = "camelCase")]
pub struct RunReport {
    /// The independent variable's name (`t` unless the sheet declares another).
    pub independent: String,
    /// State names, in order.
    pub states: Vec<String>,
    /// Helper names, in order.
    pub helpers: Vec<String>,
    /// Output times.
    pub t: Vec<f64>,
    /// Every state and helper at `t`, by name.
    pub values: Named,
    /// Work counters.
    pub stats: ReportStats,
    /// `finished`, `stopped` or `failed`.
    pub status: &'static str,
}

/// A sheet the model code cannot read: where, and what is wrong.
#[derive(Clone, Debug, PartialEq)]
pub struct SheetFault {
    /// 1-based line.
    pub line: usize,
    /// 1-based column.
    pub column: usize,
    /// Plain-English message naming what is wrong and where.
    pub message: String,
}

/// Why a request could not be run.
#[derive(Clone, Debug, PartialEq)]
pub enum ApiError {
    /// The sheet has an error at a line and column.
    Sheet(SheetFault),
    /// The settings are invalid.
    Settings(String),
}

/// Solve `sheet` with `req`.
pub fn solve(sheet: &str, req: &RunRequest) -> Result<RunReport, ApiError> {
    scalar::solve(sheet, req)
}

/// A first, single-equation path: `y' = expr` with `y(t0) = value`, by RK4.
mod scalar {
    use super::*;

    pub fn solve(sheet: &str, req: &RunRequest) -> Result<RunReport, ApiError> {
        let mut rate = None;
        let mut init = None;
        for (i, raw) in sheet.lines().enumerate() {
            let line = raw.split('#').next().unwrap_or("").trim();
            if line.is_empty() {
                continue;
            }
            let fault = |column: usize, message: &str| {
                ApiError::Sheet(SheetFault { line: i + 1, column, message: message.to_string() })
            };
            let Some((lhs, rhs)) = line.split_once('=') else {
                return Err(fault(1, "expected `y' = expression` or `y(t0) = value`"));
            };
            let col = raw.find(rhs.trim()).unwrap_or(0) + 1;
            let expr: meval::Expr =
                rhs.trim().parse().map_err(|e| fault(col, &format!("cannot read this expression: {e}")))?;
            let lhs = lhs.trim();
            if let Some(name) = lhs.strip_suffix('\'') {
                let f = expr
                    .bind2("t", name)
                    .map_err(|e| fault(col, &format!("{e}")))?;
                rate = Some((name.to_string(), f));
            } else if let Some((name, t0)) = lhs.strip_suffix(')').and_then(|s| s.split_once('(')) {
                let t0: f64 = t0.trim().parse().map_err(|_| fault(1, "the start time must be a number"))?;
                let v = expr.eval().map_err(|e| fault(col, &format!("{e}")))?;
                init = Some((name.trim().to_string(), t0, v));
            } else {
                return Err(fault(1, "expected `y' = expression` or `y(t0) = value`"));
            }
        }
        let (name, f) = rate.ok_or(ApiError::Sheet(SheetFault { line: 1, column: 1, message: "the sheet has no rate equation".into() }))?;
        let (_, t0, y0) = init.ok_or(ApiError::Sheet(SheetFault { line: 1, column: 1, message: format!("the state {name} has no initial value") }))?;
        let to = req.to.ok_or(ApiError::Settings("`to` is required".into()))?;
        let n = 1000usize;
        let h = (to - t0) / n as f64;
        let (mut t, mut y) = (t0, y0);
        let mut ts = vec![t];
        let mut ys = vec![y];
        for _ in 0..n {
            let k1 = f(t, y);
            let k2 = f(t + h / 2.0, y + h / 2.0 * k1);
            let k3 = f(t + h / 2.0, y + h / 2.0 * k2);
            let k4 = f(t + h, y + h * k3);
            y += h / 6.0 * (k1 + 2.0 * k2 + 2.0 * k3 + k4);
            t += h;
            ts.push(t);
            ys.push(y);
        }
        Ok(RunReport {
            independent: "t".into(),
            states: vec![name.clone()],
            helpers: vec![],
            t: ts,
            values: Named(vec![(name, ys)]),
            stats: ReportStats { rhs_evals: 4 * n as u64, steps: n as u64, ..Default::default() },
            status: "finished",
        })
    }
}
