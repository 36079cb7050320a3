//! Nonstiff reference problems. The rate functions are plain `fn`s so that the
//! tests, the benches and the hand-written baseline share one definition.
//! Values computed by `tests/reference/nonstiff.py` are read from its
//! committed output `tests/reference/nonstiff.json`.

use super::{FnProblem, TestProblem};
use crate::problem::{Crossing, EventAction, EventSpec, NonFiniteCause, Problem};

/// The committed output of `tests/reference/nonstiff.py` (mpmath).
pub const REFERENCE_JSON: &str = include_str!("../../tests/reference/nonstiff.json");

/// A number from the reference JSON by path, e.g. `["lorenz", "at", "5"]`.
pub fn reference(path: &[&str]) -> Option<serde_json::Value> {
    static PARSED: std::sync::OnceLock<Option<serde_json::Value>> = std::sync::OnceLock::new();
    let v = PARSED.get_or_init(|| serde_json::from_str(REFERENCE_JSON).ok()).as_ref()?;
    let mut cur = v;
    for p in path {
        cur = cur.get(p)?;
    }
    Some(cur.clone())
}

fn reference_vec(path: &[&str]) -> Option<Vec<f64>> {
    reference(path)?.as_array()?.iter().map(|x| x.as_f64()).collect()
}

/// Logistic growth `y' = r y (1 − y/K)`, `r = 1`, `K = 10`, `y(0) = 0.5`.
pub fn logistic_rhs(_t: f64, y: &[f64], dy: &mut [f64]) {
    dy[0] = y[0] * (1.0 - y[0] / 10.0);
}

/// Analytic: `y = K / (1 + (K/y0 − 1) e^(−r t))`.
pub fn logistic_exact(t: f64) -> f64 {
    10.0 / (1.0 + 19.0 * (-t).exp())
}

/// Cooling toward a sinusoidal ambient: `T' = −k (T − (A + B sin ωt))` with
/// `k = 0.5`, `A = 20`, `B = 5`, `ω = 2`, `T(0) = 90`.
pub fn cooling_rhs(t: f64, y: &[f64], dy: &mut [f64]) {
    dy[0] = -0.5 * (y[0] - (20.0 + 5.0 * (2.0 * t).sin()));
}

/// Analytic (linear first-order ODE with integrating factor):
/// `T = A + B k (k sin ωt − ω cos ωt)/(k² + ω²) + C e^(−kt)`, `C = T0 − A + B k ω/(k² + ω²)`.
pub fn cooling_exact(t: f64) -> f64 {
    let (k, a, b, w, t0) = (0.5, 20.0, 5.0, 2.0, 90.0);
    let d = k * k + w * w;
    a + b * k * (k * (w * t).sin() - w * (w * t).cos()) / d + (t0 - a + b * k * w / d) * (-k * t).exp()
}

/// Damped driven oscillator `x'' + 2ζω0 x' + ω0² x = F cos ωt` with
/// `ω0 = 2`, `ζ = 0.1`, `F = 1`, `ω = 1.5`, `x(0) = 1`, `x'(0) = 0`; states `[x, v]`.
pub fn oscillator_rhs(t: f64, y: &[f64], dy: &mut [f64]) {
    dy[0] = y[1];
    dy[1] = (1.5 * t).cos() - 0.4 * y[1] - 4.0 * y[0];
}

/// Analytic: steady response `a cos ωt + b sin ωt` plus the decaying
/// homogeneous solution `e^(−ζω0 t)(c1 cos ωd t + c2 sin ωd t)`.
pub fn oscillator_exact(t: f64) -> [f64; 2] {
    let (w0, z, f, w) = (2.0f64, 0.1, 1.0, 1.5f64);
    let d = (w0 * w0 - w * w).powi(2) + (2.0 * z * w0 * w).powi(2);
    let a = f * (w0 * w0 - w * w) / d;
    let b = f * 2.0 * z * w0 * w / d;
    let wd = w0 * (1.0 - z * z).sqrt();
    let s = z * w0;
    let c1 = 1.0 - a;
    let c2 = (0.0 - b * w + s * c1) / wd;
    let e = (-s * t).exp();
    let (cw, sw) = ((w * t).cos(), (w * t).sin());
    let (cd, sd) = ((wd * t).cos(), (wd * t).sin());
    let x = a * cw + b * sw + e * (c1 * cd + c2 * sd);
    let v = -a * w * sw + b * w * cw + e * (-s * (c1 * cd + c2 * sd) + wd * (-c1 * sd + c2 * cd));
    [x, v]
}

/// Arenstorf orbit parameter μ (Hairer, Nørsett & Wanner, *Solving ODEs I*,
/// 2nd ed., Sec. II.0, eq. (0.1); from memory).
pub const ARENSTORF_MU: f64 = 0.012277471;
/// Initial state `[x, y, x', y']` of the Arenstorf orbit (same source, eq. (0.2); from memory).
pub const ARENSTORF_Y0: [f64; 4] = [0.994, 0.0, 0.0, -2.00158510637908252240537862224];
/// Period of the Arenstorf orbit (same source; from memory).
pub const ARENSTORF_PERIOD: f64 = 17.0652165601579625588917206249;

/// The restricted three-body problem of the Arenstorf orbit; states `[x, y, x', y']`.
pub fn arenstorf_rhs(_t: f64, y: &[f64], dy: &mut [f64]) {
    let mu = ARENSTORF_MU;
    let mp = 1.0 - mu;
    let (x, z, vx, vz) = (y[0], y[1], y[2], y[3]);
    // Distances to the two bodies cubed, d^(3/2) written as d·√d.
    let d1 = (x + mu) * (x + mu) + z * z;
    let d2 = (x - mp) * (x - mp) + z * z;
    let (r1, r2) = (d1 * d1.sqrt(), d2 * d2.sqrt());
    dy[0] = vx;
    dy[1] = vz;
    dy[2] = x + 2.0 * vz - mp * (x + mu) / r1 - mu * (x - mp) / r2;
    dy[3] = z - 2.0 * vx - mp * z / r1 - mu * z / r2;
}

/// Lorenz system, σ = 10, ρ = 28, β = 8/3.
pub fn lorenz_rhs(_t: f64, y: &[f64], dy: &mut [f64]) {
    dy[0] = 10.0 * (y[1] - y[0]);
    dy[1] = y[0] * (28.0 - y[2]) - y[1];
    dy[2] = y[0] * y[1] - 8.0 / 3.0 * y[2];
}

/// The two-state Brusselator `x' = A + x²y − (B+1)x`, `y' = Bx − x²y`, `A = 1`, `B = 3`.
pub fn brusselator_rhs(_t: f64, y: &[f64], dy: &mut [f64]) {
    let (x, z) = (y[0], y[1]);
    dy[0] = 1.0 + x * x * z - 4.0 * x;
    dy[1] = 3.0 * x - x * x * z;
}

/// Pendulum `θ'' = −(g/L) sin θ`, g = 9.81, L = 2; states `[θ, ω]`.
pub fn pendulum_rhs(_t: f64, y: &[f64], dy: &mut [f64]) {
    dy[0] = y[1];
    dy[1] = -9.81 / 2.0 * y[0].sin();
}

/// Tank draining through an orifice (Torricelli): `h' = −(a/A) √(2 g h)`,
/// `a/A = 0.01`, g = 9.81, `h(0) = 4`; helper `q = a √(2 g h)` per unit area.
pub fn tank_rhs(_t: f64, y: &[f64], dy: &mut [f64]) {
    dy[0] = -0.01 * (2.0 * 9.81 * y[0]).sqrt();
}

/// Closed form: `√h = √h0 − (a/A) √(2g) t / 2`, so the level `h1` is reached at
/// `t = 2 (√h0 − √h1) / ((a/A) √(2g))`.
pub fn tank_time_to(h1: f64) -> f64 {
    2.0 * (4f64.sqrt() - h1.sqrt()) / (0.01 * (2.0 * 9.81f64).sqrt())
}

/// The draining tank with a `stop` event at `h < 0.5` and the non-finite
/// explanation a compiled sheet would give (`q` takes the root of `h`).
pub fn tank_problem() -> FnProblem<fn(f64, &[f64], &mut [f64])> {
    FnProblem::new(&["h"], tank_rhs as fn(f64, &[f64], &mut [f64]))
        .with_events(
            vec![EventSpec { name: "h < 0.5".into(), action: EventAction::Stop, crossing: Crossing::Falling }],
            |_t, y, g| g[0] = y[0] - 0.5,
        )
        .with_helpers(&["q"], |_t, y, out| out[0] = 0.01 * (2.0 * 9.81 * y[0]).sqrt())
        .with_explain(|_t, y| {
            (y[0] < 0.0).then(|| NonFiniteCause { name: "q".into(), what: "sqrt of a negative number".into() })
        })
}

/// Falling with quadratic drag: `x' = v`, `v' = g − (c/m) v²`, g = 9.81,
/// `c/m = 0.004`, from rest; `stop` event when `x > 100` (fallen 100 m).
pub fn fall_rhs(_t: f64, y: &[f64], dy: &mut [f64]) {
    dy[0] = y[1];
    dy[1] = 9.81 - 0.004 * y[1] * y[1];
}

/// Closed form: `x = (v_t²/g) ln cosh(g t / v_t)` with `v_t = √(g m / c)`, so
/// the drop `H` takes `t = (v_t/g) acosh(exp(g H / v_t²))`.
pub fn fall_time(height: f64) -> f64 {
    let vt = (9.81f64 / 0.004).sqrt();
    vt / 9.81 * ((9.81 * height / (vt * vt)).exp()).acosh()
}

/// The falling body with its `stop` event `x > 100`.
pub fn fall_problem() -> FnProblem<fn(f64, &[f64], &mut [f64])> {
    FnProblem::new(&["x", "v"], fall_rhs as fn(f64, &[f64], &mut [f64])).with_events(
        vec![EventSpec { name: "x > 100".into(), action: EventAction::Stop, crossing: Crossing::Rising }],
        |_t, y, g| g[0] = y[0] - 100.0,
    )
}

fn boxed(names: &'static [&'static str], f: fn(f64, &[f64], &mut [f64])) -> Box<dyn Problem> {
    Box::new(FnProblem::new(names, f))
}

/// The nonstiff problems of the shared set.
pub fn all() -> Vec<TestProblem> {
    vec![
        TestProblem {
            name: "logistic",
            t0: 0.0,
            y0: vec![0.5],
            t_end: 10.0,
            reference: Some(vec![logistic_exact(10.0)]),
            source: "analytic: y = K/(1 + (K/y0 - 1) e^(-rt))",
            stiff: false,
            make: || boxed(&["y"], logistic_rhs),
        },
        TestProblem {
            name: "cooling",
            t0: 0.0,
            y0: vec![90.0],
            t_end: 10.0,
            reference: Some(vec![cooling_exact(10.0)]),
            source: "analytic: linear first-order ODE, integrating factor",
            stiff: false,
            make: || boxed(&["T"], cooling_rhs),
        },
        TestProblem {
            name: "oscillator",
            t0: 0.0,
            y0: vec![1.0, 0.0],
            t_end: 40.0,
            reference: Some(oscillator_exact(40.0).to_vec()),
            source: "analytic: steady response plus damped homogeneous solution",
            stiff: false,
            make: || boxed(&["x", "v"], oscillator_rhs),
        },
        TestProblem {
            name: "arenstorf",
            t0: 0.0,
            y0: ARENSTORF_Y0.to_vec(),
            t_end: ARENSTORF_PERIOD,
            reference: Some(ARENSTORF_Y0.to_vec()),
            source: "periodic orbit returns to its start: Hairer, Nørsett & Wanner, Solving ODEs I, Sec. II.0 (from memory)",
            stiff: false,
            make: || boxed(&["x", "y", "vx", "vy"], arenstorf_rhs),
        },
        TestProblem {
            name: "lorenz",
            t0: 0.0,
            y0: vec![1.0, 1.0, 1.0],
            t_end: 20.0,
            reference: reference_vec(&["lorenz", "at", "20"]),
            source: "tests/reference/nonstiff.py (mpmath odefun, 40 digits)",
            stiff: false,
            make: || boxed(&["x", "y", "z"], lorenz_rhs),
        },
        TestProblem {
            name: "brusselator",
            t0: 0.0,
            y0: vec![1.5, 3.0],
            t_end: 20.0,
            reference: reference_vec(&["brusselator", "at", "20"]),
            source: "tests/reference/nonstiff.py (mpmath odefun, 40 digits)",
            stiff: false,
            make: || boxed(&["x", "y"], brusselator_rhs),
        },
        TestProblem {
            name: "pendulum",
            t0: 0.0,
            y0: vec![2.5, 0.0],
            t_end: reference(&["pendulum", "period"]).and_then(|v| v.as_f64()).unwrap_or(f64::NAN),
            reference: Some(vec![2.5, 0.0]),
            source: "period 4 sqrt(L/g) K(sin^2(theta0/2)) from tests/reference/nonstiff.py (mpmath.ellipk)",
            stiff: false,
            make: || boxed(&["theta", "omega"], pendulum_rhs),
        },
    ]
}

/// The non-stiff benchmark's cases (`scripts/bench.d/solver`): Arenstorf to
/// its period, Lorenz to t = 20, the Brusselator to t = 20 and the driven
/// oscillator to t = 40, at rtol = atol = 1e-3, 1e-6 and 1e-9, for each
/// adaptive explicit method. Run one with [`super::bench::bench_run`], which
/// serves any problem of the shared set.
pub fn bench_cases() -> Vec<super::bench::BenchCase> {
    let mut v = Vec::new();
    for problem in ["arenstorf", "lorenz", "brusselator", "oscillator"] {
        for tol in [1e-3, 1e-6, 1e-9] {
            for method in ["bogacki-shampine-3", "dormand-prince-5", "dormand-prince-8"] {
                v.push(super::bench::BenchCase { problem, method, rtol: tol, atol: tol });
            }
        }
    }
    v
}

/// The rate function of a benchmark problem, for the hand-written baseline.
pub fn bench_rhs(problem: &str) -> Option<fn(f64, &[f64], &mut [f64])> {
    Some(match problem {
        "arenstorf" => arenstorf_rhs,
        "lorenz" => lorenz_rhs,
        "brusselator" => brusselator_rhs,
        "oscillator" => oscillator_rhs,
        _ => return None,
    })
}
