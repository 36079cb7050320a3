//! The benchmarks' shared runner: one case of any problem of the shared set
//! through the driver, as the page runs it. The native examples and the wasm
//! exports call the same functions, so that both sides time the same work.
//!
//! Timing is done by the caller (no clock in the core). To time the solve
//! alone, the caller runs [`bench_repeat`] with enough repeats that the one-off
//! costs of a call (finding and building the problem, the JSON of the result,
//! and in wasm the crossing into and out of the module) vanish in the mean.

/// One case of a benchmark: a problem of the shared set, a method and its
/// tolerances.
#[derive(Clone, Copy, Debug, PartialEq, serde::Serialize)]
pub struct BenchCase {
    /// Name in the shared set.
    pub problem: &'static str,
    /// Registry id of the method.
    pub method: &'static str,
    /// Relative tolerance.
    pub rtol: f64,
    /// Absolute tolerance.
    pub atol: f64,
}

/// Run one case once through the driver; see [`bench_repeat`].
pub fn bench_run(problem: &str, method: &str, rtol: f64, atol: f64) -> Option<serde_json::Value> {
    bench_repeat(problem, method, rtol, atol, 1)
}

/// Build the problem once, solve it `repeats` times (at least once) through
/// the driver with no extrema and output at every step (as SciPy does), and
/// report the last run's status, end state and work counts as JSON: the
/// [`crate::solve::Stats`] fields plus `status`, `y` and `switches` (method
/// switches of `auto`). `None` for an unknown problem or invalid settings.
pub fn bench_repeat(problem: &str, method: &str, rtol: f64, atol: f64, repeats: u32) -> Option<serde_json::Value> {
    let p = super::by_name(problem)?;
    let mut model = (p.make)();
    let settings = crate::solve::Settings {
        method: method.to_string(),
        to: p.t_end,
        tol: crate::solve::Tolerance { relative: rtol, absolute: atol },
        extrema: false,
        ..crate::solve::Settings::default()
    };
    let mut run = crate::solve::solve(model.as_mut(), p.t0, &p.y0, &settings).ok()?;
    for _ in 1..repeats {
        run = crate::solve::solve(model.as_mut(), p.t0, &p.y0, &settings).ok()?;
    }
    let y: Vec<f64> = run.states.iter().map(|s| s.last().copied().unwrap_or(f64::NAN)).collect();
    let status = match &run.status {
        crate::solve::Status::Finished => "finished".to_string(),
        crate::solve::Status::Stopped { .. } => "stopped".to_string(),
        crate::solve::Status::Failed(e) => e.code().to_string(),
    };
    let switches = run.diagnostics.iter().filter(|d| d.code == "method-switch").count();
    let mut v = serde_json::to_value(run.stats).ok()?;
    let obj = v.as_object_mut()?;
    obj.insert("status".into(), status.into());
    obj.insert("y".into(), y.into());
    obj.insert("switches".into(), switches.into());
    Some(v)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn repeated_runs_report_one_run() {
        // The logistic problem's end value against its analytic solution (its reference).
        let one = bench_run("logistic", "dormand-prince-5", 1e-8, 1e-8).unwrap();
        let three = bench_repeat("logistic", "dormand-prince-5", 1e-8, 1e-8, 3).unwrap();
        assert_eq!(one, three);
        let y = one["y"][0].as_f64().unwrap();
        let exact = super::super::by_name("logistic").and_then(|p| p.reference).unwrap()[0];
        assert!((y - exact).abs() < 1e-6);
        assert_eq!(one["status"], "finished");
        assert!(bench_run("no-such-problem", "dormand-prince-5", 1e-6, 1e-6).is_none());
        assert!(bench_run("logistic", "no-such-method", 1e-6, 1e-6).is_none());
    }
}
