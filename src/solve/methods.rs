//! The method registry: every method a run can name, with its facts.
//!
//! Adding an explicit method is one [`Tableau`] in `tableau.rs` plus one entry
//! here. A method with its own stepper (the stiff methods) gives a `build`
//! function instead of a tableau.

use super::explicit::ExplicitStepper;
use super::stepper::Stepper;
use super::tableau::{self, Tableau};
use super::Switching;

/// One method of the registry.
#[derive(serde::Serialize)]
#[serde(rename_all = "camelCase")]
pub struct MethodInfo {
    /// Stable id used by the JS API, saved files and links, e.g. `dormand-prince-5`.
    pub id: &'static str,
    /// Full name, e.g. `Dormand–Prince 5(4)`.
    pub name: &'static str,
    /// Order of the solution.
    pub order: u32,
    /// Order of the embedded solution used for the error estimate (`None` for
    /// fixed-step methods).
    pub embedded_order: Option<u32>,
    /// Stages per step (the FSAL stage included).
    pub stages: u32,
    /// First same as last: the last stage of a step is the first of the next.
    pub fsal: bool,
    /// Chooses its own step from rtol/atol (otherwise it needs `step`).
    pub adaptive: bool,
    /// Implicit or linearly implicit (suits stiff problems).
    pub implicit: bool,
    /// The paper or book the coefficients come from, with table or page.
    pub reference: &'static str,
    /// One line on when to use it.
    pub summary: &'static str,
    /// Order of the continuous extension used for `at` output and events.
    pub dense_order: u32,
    /// The tableau, for explicit Runge–Kutta methods.
    #[serde(skip)]
    pub tableau: Option<&'static Tableau>,
    /// Builds the stepper for a system of `dim` states.
    #[serde(skip)]
    pub build: fn(dim: usize) -> Box<dyn Stepper>,
    /// Builds the policy that may change method during a run (`auto`).
    #[serde(skip)]
    pub switching: Option<fn() -> Box<dyn Switching>>,
}

impl std::fmt::Debug for MethodInfo {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.debug_struct("MethodInfo").field("id", &self.id).finish_non_exhaustive()
    }
}

macro_rules! explicit_builder {
    ($fn_name:ident, $tab:path) => {
        fn $fn_name(dim: usize) -> Box<dyn Stepper> {
            ExplicitStepper::boxed(&$tab, dim)
        }
    };
}
explicit_builder!(build_euler, tableau::EULER);
explicit_builder!(build_heun, tableau::HEUN);
explicit_builder!(build_midpoint, tableau::MIDPOINT);
explicit_builder!(build_rk4, tableau::RK4);
explicit_builder!(build_bs32, tableau::BS32);
explicit_builder!(build_dp54, tableau::DP54);
explicit_builder!(build_dp853, tableau::DP853);

/// The registry, in the order a menu would show it.
static REGISTRY: [MethodInfo; 12] = [
    MethodInfo {
        id: "euler",
        name: "Euler",
        order: 1,
        embedded_order: None,
        stages: 1,
        fsal: false,
        adaptive: false,
        implicit: false,
        reference: "Hairer, Nørsett & Wanner, Solving ODEs I, 2nd ed., Sec. II.1",
        summary: "First order, one evaluation per step; error falls only in proportion to h. For teaching and comparison.",
        dense_order: 1,
        tableau: Some(&tableau::EULER),
        build: build_euler,
        switching: None,
    },
    MethodInfo {
        id: "heun",
        name: "Heun (improved Euler)",
        order: 2,
        embedded_order: None,
        stages: 2,
        fsal: false,
        adaptive: false,
        implicit: false,
        reference: "Hairer, Nørsett & Wanner, Solving ODEs I, 2nd ed., Sec. II.1, eq. (1.10)",
        summary: "Second order, two evaluations per step; explicit trapezoid rule.",
        dense_order: 2,
        tableau: Some(&tableau::HEUN),
        build: build_heun,
        switching: None,
    },
    MethodInfo {
        id: "midpoint",
        name: "Explicit midpoint",
        order: 2,
        embedded_order: None,
        stages: 2,
        fsal: false,
        adaptive: false,
        implicit: false,
        reference: "Hairer, Nørsett & Wanner, Solving ODEs I, 2nd ed., Sec. II.1, eq. (1.9)",
        summary: "Second order, two evaluations per step; Runge's midpoint rule.",
        dense_order: 2,
        tableau: Some(&tableau::MIDPOINT),
        build: build_midpoint,
        switching: None,
    },
    MethodInfo {
        id: "rk4",
        name: "Classical Runge–Kutta",
        order: 4,
        embedded_order: None,
        stages: 4,
        fsal: false,
        adaptive: false,
        implicit: false,
        reference: "Hairer, Nørsett & Wanner, Solving ODEs I, 2nd ed., Sec. II.1, Table 1.2",
        summary: "Fourth order, four evaluations per step; the standard fixed-step method.",
        dense_order: 3,
        tableau: Some(&tableau::RK4),
        build: build_rk4,
        switching: None,
    },
    MethodInfo {
        id: "bogacki-shampine-3",
        name: "Bogacki–Shampine 3(2)",
        order: 3,
        embedded_order: Some(2),
        stages: 4,
        fsal: true,
        adaptive: true,
        implicit: false,
        reference: "P. Bogacki, L. F. Shampine, Appl. Math. Lett. 2 (1989) 321–325, Table 1",
        summary: "Adaptive, third order, three evaluations per step; for loose tolerances and rough rates.",
        dense_order: 3,
        tableau: Some(&tableau::BS32),
        build: build_bs32,
        switching: None,
    },
    MethodInfo {
        id: "dormand-prince-5",
        name: "Dormand–Prince 5(4)",
        order: 5,
        embedded_order: Some(4),
        stages: 7,
        fsal: true,
        adaptive: true,
        implicit: false,
        reference: "J. R. Dormand, P. J. Prince, J. Comput. Appl. Math. 6 (1980) 19–26, Table 2; dense output: L. F. Shampine, Math. Comp. 46 (1986) 135–150",
        summary: "Adaptive, fifth order, six evaluations per step; the default for everyday accuracy.",
        dense_order: 4,
        tableau: Some(&tableau::DP54),
        build: build_dp54,
        switching: None,
    },
    MethodInfo {
        id: "dormand-prince-8",
        name: "Dormand–Prince 8(5,3)",
        order: 8,
        embedded_order: Some(5),
        stages: 13,
        fsal: true,
        adaptive: true,
        implicit: false,
        reference: "Hairer, Nørsett & Wanner, Solving ODEs I, 2nd ed., Sec. II.10 and the code dop853.f",
        summary: "Adaptive, eighth order, twelve evaluations per step; for tight tolerances (relative tolerance 1e-7 and below).",
        dense_order: 7,
        tableau: Some(&tableau::DP853),
        build: build_dp853,
        switching: None,
    },
    MethodInfo {
        id: "backward-euler",
        name: "Backward Euler",
        order: 1,
        embedded_order: None,
        stages: 1,
        fsal: false,
        adaptive: false,
        implicit: true,
        reference: super::implicit::BACKWARD_EULER.reference,
        summary: "Implicit, first order, fixed step with Newton iteration; stable at any step on decaying problems. For comparison.",
        dense_order: 1,
        tableau: None,
        build: super::implicit::build_beuler,
        switching: None,
    },
    MethodInfo {
        id: "trapezoid",
        name: "Trapezoidal rule",
        order: 2,
        embedded_order: None,
        stages: 1,
        fsal: false,
        adaptive: false,
        implicit: true,
        reference: super::implicit::TRAPEZOID.reference,
        summary: "Implicit, second order, fixed step with Newton iteration; stable but does not damp fast transients. For comparison.",
        dense_order: 3,
        tableau: None,
        build: super::implicit::build_trapezoid,
        switching: None,
    },
    MethodInfo {
        id: "rosenbrock-4",
        name: "Rosenbrock 4(3), L-stable",
        order: 4,
        embedded_order: Some(3),
        stages: 6,
        fsal: false,
        adaptive: true,
        implicit: true,
        reference: super::rosenbrock::RODAS4.reference,
        summary: "Adaptive, stiff (L-stable), fourth order, one Jacobian and one factorization per step; for stiff problems at relative tolerances 1e-2 to 1e-8.",
        dense_order: 3,
        tableau: None,
        build: super::rosenbrock::build_rodas4,
        switching: None,
    },
    MethodInfo {
        id: "radau-iia-5",
        name: "Radau IIA, order 5",
        order: 5,
        embedded_order: Some(3),
        stages: 3,
        fsal: false,
        adaptive: true,
        implicit: true,
        reference: super::implicit::RADAU5.reference,
        summary: "Adaptive, stiff (L-stable), fifth order, reuses Jacobian and factorization across steps; for stiff problems at tight tolerances.",
        dense_order: 3,
        tableau: None,
        build: super::implicit::build_radau5,
        switching: None,
    },
    MethodInfo {
        id: "auto",
        name: "Switches explicit ⇄ implicit (Dormand–Prince 5(4) / Radau IIA)",
        order: 5,
        embedded_order: Some(4),
        stages: 7,
        fsal: true,
        adaptive: true,
        implicit: false,
        reference: "Dormand–Prince 5(4) and Radau IIA of order 5; see dormand-prince-5 and radau-iia-5",
        summary: "Adaptive, the default: runs explicit Dormand–Prince 5(4), switches to implicit Radau IIA (order 5) while the problem is stiff and back when it is not.",
        dense_order: 4,
        tableau: Some(&tableau::DP54),
        build: build_dp54,
        switching: Some(super::auto::policy),
    },
];

/// Every method of the registry.
pub fn methods() -> &'static [MethodInfo] {
    &REGISTRY
}

/// The method with this id.
pub fn method(id: &str) -> Option<&'static MethodInfo> {
    REGISTRY.iter().find(|m| m.id == id)
}
