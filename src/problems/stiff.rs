//! Stiff reference problems, each with its exact Jacobian and `∂f/∂t`.

use super::TestProblem;
use crate::problem::Problem;

/// Van der Pol's oscillator `y1' = y2`, `y2' = μ(1 - y1²) y2 - y1`.
///
/// Stiff for large μ: slow drifts along the branches `|y1| > 1` and fast
/// jumps between them, period ≈ (3 - 2 ln 2) μ (common practice, no source).
#[derive(Clone, Debug)]
pub struct VanDerPol {
    /// The stiffness parameter μ.
    pub mu: f64,
    names: Vec<String>,
}

impl VanDerPol {
    /// The oscillator with parameter `mu`.
    pub fn new(mu: f64) -> Self {
        VanDerPol { mu, names: vec!["y1".into(), "y2".into()] }
    }
}

impl Problem for VanDerPol {
    fn dim(&self) -> usize {
        2
    }
    fn state_names(&self) -> &[String] {
        &self.names
    }
    fn rhs(&mut self, _t: f64, y: &[f64], dy: &mut [f64]) {
        dy[0] = y[1];
        dy[1] = self.mu * (1.0 - y[0] * y[0]) * y[1] - y[0];
    }
    fn jacobian(&mut self, _t: f64, y: &[f64], jac: &mut [f64]) -> bool {
        jac.copy_from_slice(&[0.0, 1.0, -2.0 * self.mu * y[0] * y[1] - 1.0, self.mu * (1.0 - y[0] * y[0])]);
        true
    }
    fn time_derivative(&mut self, _t: f64, _y: &[f64], dfdt: &mut [f64]) -> bool {
        dfdt.fill(0.0);
        true
    }
}

/// Robertson's chemical kinetics: `A → B` (0.04), `B + B → C + B` (3e7),
/// `B + C → A + C` (1e4):
/// `y1' = -0.04 y1 + 1e4 y2 y3`, `y2' = 0.04 y1 - 1e4 y2 y3 - 3e7 y2²`,
/// `y3' = 3e7 y2²`. The total `y1 + y2 + y3` is conserved.
#[derive(Clone, Debug)]
pub struct Robertson {
    names: Vec<String>,
}

impl Default for Robertson {
    fn default() -> Self {
        Robertson { names: vec!["y1".into(), "y2".into(), "y3".into()] }
    }
}

impl Problem for Robertson {
    fn dim(&self) -> usize {
        3
    }
    fn state_names(&self) -> &[String] {
        &self.names
    }
    fn rhs(&mut self, _t: f64, y: &[f64], dy: &mut [f64]) {
        let a = 0.04 * y[0];
        let b = 1e4 * y[1] * y[2];
        let c = 3e7 * y[1] * y[1];
        dy[0] = -a + b;
        dy[1] = a - b - c;
        dy[2] = c;
    }
    fn jacobian(&mut self, _t: f64, y: &[f64], jac: &mut [f64]) -> bool {
        jac.copy_from_slice(&[
            -0.04,
            1e4 * y[2],
            1e4 * y[1],
            0.04,
            -1e4 * y[2] - 6e7 * y[1],
            -1e4 * y[1],
            0.0,
            6e7 * y[1],
            0.0,
        ]);
        true
    }
    fn time_derivative(&mut self, _t: f64, _y: &[f64], dfdt: &mut [f64]) -> bool {
        dfdt.fill(0.0);
        true
    }
}

/// The stiff scalar `y' = -1000(y - cos t) - sin t`, whose solution from
/// `y(0) = 1` is `y = cos t` (analytic).
#[derive(Clone, Debug)]
pub struct StiffCosine {
    names: Vec<String>,
}

impl Default for StiffCosine {
    fn default() -> Self {
        StiffCosine { names: vec!["y".into()] }
    }
}

impl Problem for StiffCosine {
    fn dim(&self) -> usize {
        1
    }
    fn state_names(&self) -> &[String] {
        &self.names
    }
    fn rhs(&mut self, t: f64, y: &[f64], dy: &mut [f64]) {
        dy[0] = -1000.0 * (y[0] - t.cos()) - t.sin();
    }
    fn jacobian(&mut self, _t: f64, _y: &[f64], jac: &mut [f64]) -> bool {
        jac[0] = -1000.0;
        true
    }
    fn time_derivative(&mut self, t: f64, _y: &[f64], dfdt: &mut [f64]) -> bool {
        dfdt[0] = -1000.0 * t.sin() - t.cos();
        true
    }
}

/// Where the SciPy reference values come from.
const SCIPY_SOURCE: &str = "tests/reference/stiff_reference.py (SciPy solve_ivp Radau at rtol 1e-13 for Van der Pol, 1e-12 for Robertson, checked against LSODA; output stiff_reference.json)";

/// Van der Pol μ = 1000 at t = 3000 from (2, 0): SciPy reference.
pub const VAN_DER_POL_1000_AT_3000: [f64; 2] = [-1.5106069367443018, 0.0011783800007305336];
/// Robertson at t = 1e5 from (1, 0, 0): SciPy reference.
pub const ROBERTSON_AT_1E5: [f64; 3] = [0.017865921142099315, 7.27475146843627e-08, 0.9821340061103836];
/// Robertson at t = 1e11 from (1, 0, 0): SciPy reference.
pub const ROBERTSON_AT_1E11: [f64; 3] = [2.0833401497003356e-08, 8.333360770330983e-14, 0.999999979166511];

/// The stiff problems of the shared set.
pub fn all() -> Vec<TestProblem> {
    vec![
        TestProblem {
            name: "stiff_cosine",
            t0: 0.0,
            y0: vec![1.0],
            t_end: 10.0,
            reference: Some(vec![10f64.cos()]),
            source: "analytic: y = cos t",
            stiff: true,
            make: || Box::new(StiffCosine::default()),
        },
        TestProblem {
            name: "van_der_pol_1000",
            t0: 0.0,
            y0: vec![2.0, 0.0],
            t_end: 3000.0,
            reference: Some(VAN_DER_POL_1000_AT_3000.to_vec()),
            source: SCIPY_SOURCE,
            stiff: true,
            make: || Box::new(VanDerPol::new(1000.0)),
        },
        robertson_to("robertson", 1e5, &ROBERTSON_AT_1E5),
        robertson_to("robertson_1e11", 1e11, &ROBERTSON_AT_1E11),
    ]
}

fn robertson_to(name: &'static str, t_end: f64, reference: &[f64; 3]) -> TestProblem {
    TestProblem {
        name,
        t0: 0.0,
        y0: vec![1.0, 0.0, 0.0],
        t_end,
        reference: Some(reference.to_vec()),
        source: SCIPY_SOURCE,
        stiff: true,
        make: || Box::new(Robertson::default()),
    }
}

pub use super::bench::{bench_run, BenchCase};

/// The stiff benchmark's cases: Van der Pol μ = 1000 (atol = rtol) and
/// Robertson to 1e5 (atol = 1e-4·rtol, for the small `y2`), for each stiff
/// adaptive method and `auto`, on a ladder of rtol 1e-3 to 1e-10 (one per
/// decade), so that the benchmark can compare with SciPy at equal achieved
/// error in both directions. The headline settings are rtol 1e-4, 1e-6, 1e-8.
pub fn bench_cases() -> Vec<BenchCase> {
    let mut v = Vec::new();
    for (problem, atol_factor) in [("van_der_pol_1000", 1.0), ("robertson", 1e-4)] {
        for rtol in [1e-3, 1e-4, 1e-5, 1e-6, 1e-7, 1e-8, 1e-9, 1e-10] {
            for method in ["rosenbrock-4", "radau-iia-5", "auto"] {
                v.push(BenchCase { problem, method, rtol, atol: rtol * atol_factor });
            }
        }
    }
    v
}
