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
    // A failure by its code (`max-steps`, …), so that a table tells them apart.
    let status = match &run.status {
        crate::solve::Status::Failed(e) => e.code(),
        s => s.word(),
    };
    let switches = run.diagnostics.iter().filter(|d| d.code == "method-switch").count();
    let mut v = serde_json::to_value(run.stats).ok()?;
    let obj = v.as_object_mut()?;
    obj.insert("status".into(), status.into());
    obj.insert("y".into(), y.into());
    obj.insert("switches".into(), switches.into());
    Some(v)
}

/// The Arenstorf orbit as a user writes it: the two distances cubed are
/// helpers (so the run also reports them, with their peaks and troughs).
pub const ARENSTORF_SHEET: &str = "# A light body on a closed orbit about two heavy ones
mu = 0.012277471
m = 1 - mu
r1 = ((x + mu)*(x + mu) + y*y)^1.5
r2 = ((x - m)*(x - m) + y*y)^1.5
x' = vx
y' = vy
vx' = x + 2*vy - m*(x + mu)/r1 - mu*(x - m)/r2
vy' = y - 2*vx - m*y/r1 - mu*y/r2
x(0) = 0.994
y(0) = 0
vx(0) = 0
vy(0) = -2.00158510637908252240537862224
";

/// A problem of the shared set written as a sheet, with the same formulas
/// in the same order of operations as its hand-written rates (so that both
/// take the same steps), for the benchmarks of the user path (`solve()` on
/// sheet text). `None` for a problem without one.
pub fn sheet(problem: &str) -> Option<&'static str> {
    Some(match problem {
        "logistic" => "y' = y*(1 - y/10)\ny(0) = 0.5\n",
        "cooling" => "T' = -0.5*(T - (20 + 5*sin(2*t)))\nT(0) = 90\n",
        "oscillator" => "x' = v\nv' = cos(1.5*t) - 0.4*v - 4*x\nx(0) = 1\nv(0) = 0\n",
        "arenstorf" => ARENSTORF_SHEET,
        "lorenz" => "x' = 10*(y - x)\ny' = x*(28 - z) - y\nz' = x*y - 8/3*z\nx(0) = 1\ny(0) = 1\nz(0) = 1\n",
        "brusselator" => "x' = 1 + x*x*y - 4*x\ny' = 3*x - x*x*y\nx(0) = 1.5\ny(0) = 3\n",
        "pendulum" => "theta' = omega\nomega' = -9.81/2*sin(theta)\ntheta(0) = 2.5\nomega(0) = 0\n",
        "van_der_pol_1000" => "mu = 1000\ny1' = y2\ny2' = mu*(1 - y1*y1)*y2 - y1\ny1(0) = 2\ny2(0) = 0\n",
        "robertson" => "y1' = -(0.04*y1) + 1e4*y2*y3\ny2' = 0.04*y1 - 1e4*y2*y3 - 3e7*y2*y2\ny3' = 3e7*y2*y2\n\
                        y1(0) = 1\ny2(0) = 0\ny3(0) = 0\n",
        _ => return None,
    })
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

    #[test]
    fn sheets_take_the_steps_of_the_hand_written_rates() {
        // Each sheet against its problem's hand-written rates: the same steps
        // and evaluations (the user-path bench compares them per step), and
        // end states equal to rounding.
        let cases = [
            ("oscillator", "dormand-prince-5", 1e-6),
            ("arenstorf", "dormand-prince-8", 1e-9),
            ("lorenz", "dormand-prince-5", 1e-6),
            ("brusselator", "bogacki-shampine-3", 1e-6),
            ("van_der_pol_1000", "radau-iia-5", 1e-6),
            ("robertson", "rosenbrock-4", 1e-6),
            ("robertson", "auto", 1e-8),
        ];
        for (name, method, tol) in cases {
            let p = super::super::by_name(name).unwrap();
            let atol = if name == "robertson" { tol * 1e-4 } else { tol };
            let settings = crate::solve::Settings {
                method: method.into(),
                to: p.t_end,
                tol: crate::solve::Tolerance { relative: tol, absolute: atol },
                extrema: false,
                ..Default::default()
            };
            let hand = crate::solve::solve((p.make)().as_mut(), p.t0, &p.y0, &settings).unwrap();
            let mut model = crate::sheet::compile(sheet(name).unwrap()).unwrap();
            assert_eq!((model.t0(), model.initial_state()), (p.t0, &p.y0[..]), "{name}");
            let typed = crate::solve::solve(&mut model, p.t0, &p.y0, &settings).unwrap();
            let counts = |r: &crate::solve::Run| (r.stats.steps, r.stats.rhs_evals, r.stats.rejected);
            assert_eq!(counts(&typed), counts(&hand), "{name} {method}");
            for (a, b) in typed.states.iter().zip(&hand.states) {
                let (a, b) = (a.last().unwrap(), b.last().unwrap());
                assert!((a - b).abs() <= 1e-9 * b.abs().max(1e-6), "{name}: {a} against {b}");
            }
        }
    }
}
