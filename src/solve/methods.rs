//! The method registry: every method a run can name, with its facts.
//!
//! Each entry points at its family's data ([`Family`]); the facts the driver
//! and the studies need (order, error order, controller constants,
//! stability function and limit) are read from there by [`MethodInfo`]'s
//! methods. Adding an explicit method is one [`Tableau`] in `tableau.rs` plus
//! one entry here; a method of another family is its data in that family's
//! file plus one entry.

use super::control::StepControl;
use super::explicit::ExplicitStepper;
use super::implicit::{Radau, RadauTableau, ThetaMethod, ThetaStepper, BACKWARD_EULER, RADAU5, TRAPEZOID};
use super::rosenbrock::{Rosenbrock, RosenbrockTableau, RODAS4};
use super::stability::{StabilityFunction, C64};
use super::stepper::Stepper;
use super::tableau::{self, Tableau};
use super::Switching;

/// A method's family and its coefficients: where its facts come from.
#[derive(Clone, Copy, Debug)]
pub enum Family {
    /// An explicit Runge–Kutta method, run by the generic explicit stepper.
    Explicit(&'static Tableau),
    /// A one-stage θ-method (backward Euler, the trapezoidal rule).
    Theta(&'static ThetaMethod),
    /// Radau IIA of order 5.
    Radau(&'static RadauTableau),
    /// A Rosenbrock method.
    Rosenbrock(&'static RosenbrockTableau),
}

impl Family {
    /// Order of the solution.
    pub fn order(self) -> u32 {
        match self {
            Family::Explicit(t) => t.order,
            Family::Theta(m) => m.order,
            Family::Radau(r) => r.order,
            Family::Rosenbrock(r) => r.order,
        }
    }

    /// Order `k` of the error estimate (`err ∝ h^k`) for the step-size
    /// controller: the tableau's for an explicit pair, one above the
    /// embedded solution's for Radau and Rosenbrock, and the method's own
    /// order for a fixed-step method (whose controller only runs when it is
    /// given no step).
    pub fn error_order(self) -> u32 {
        match self {
            Family::Explicit(t) if t.error_order > 0 => t.error_order,
            Family::Explicit(t) => t.order,
            Family::Theta(m) => m.order,
            Family::Radau(r) => r.embedded_order + 1,
            Family::Rosenbrock(r) => r.embedded_order + 1,
        }
    }

    /// The constants of the step-size controller: an explicit pair's own,
    /// or [`StepControl::GENERAL`].
    pub fn step_control(self) -> StepControl {
        match self {
            Family::Explicit(t) => t.control,
            _ => StepControl::GENERAL,
        }
    }

    /// The stability function `R(z)` from the coefficients.
    pub fn stability_function(self) -> StabilityFunction {
        match self {
            Family::Explicit(t) => t.stability_function(),
            Family::Theta(m) => m.stability_function(),
            Family::Radau(r) => r.stability_function(),
            Family::Rosenbrock(r) => r.stability_function(),
        }
    }

    /// The stepper for a system of `dim` states.
    pub fn build(self, dim: usize) -> Box<dyn Stepper> {
        match self {
            Family::Explicit(t) => ExplicitStepper::boxed(t, dim),
            Family::Theta(m) => Box::new(ThetaStepper::new(m, dim)),
            Family::Radau(_) => Box::new(Radau::new(dim)),
            Family::Rosenbrock(r) => Box::new(Rosenbrock::new(r, dim)),
        }
    }
}

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
    /// The family and its coefficients.
    #[serde(skip)]
    pub family: Family,
    /// Builds the policy that may change method during a run (`auto`).
    #[serde(skip)]
    pub switching: Option<fn() -> Box<dyn Switching>>,
}

impl std::fmt::Debug for MethodInfo {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.debug_struct("MethodInfo").field("id", &self.id).finish_non_exhaustive()
    }
}

impl MethodInfo {
    /// The tableau of an explicit Runge–Kutta method.
    pub fn tableau(&self) -> Option<&'static Tableau> {
        match self.family {
            Family::Explicit(t) => Some(t),
            _ => None,
        }
    }

    /// Builds the stepper for a system of `dim` states.
    pub fn build(&self, dim: usize) -> Box<dyn Stepper> {
        self.family.build(dim)
    }

    /// Order `k` of the error estimate, for the controller ([`Family::error_order`]).
    pub fn error_order(&self) -> u32 {
        self.family.error_order()
    }

    /// The controller constants ([`Family::step_control`]).
    pub fn step_control(&self) -> StepControl {
        self.family.step_control()
    }

    /// The stability function `R(z)` ([`Family::stability_function`]).
    pub fn stability_function(&self) -> StabilityFunction {
        self.family.stability_function()
    }

    /// The edge of an explicit method's stability region on the negative
    /// real axis, computed once per method; 0 for the implicit methods,
    /// whose regions hold the whole negative axis and whose steps the
    /// stiffness test does not watch.
    pub fn stability_limit(&self) -> f64 {
        static LIMITS: std::sync::OnceLock<Vec<f64>> = std::sync::OnceLock::new();
        let limits = LIMITS.get_or_init(|| {
            REGISTRY
                .iter()
                .map(|m| match m.family {
                    Family::Explicit(_) => m.stability_function().stable_reach(C64::from_polar(1.0, std::f64::consts::PI)).unwrap_or(f64::INFINITY),
                    _ => 0.0,
                })
                .collect()
        });
        REGISTRY.iter().position(|m| std::ptr::eq(m, self)).map_or(0.0, |i| limits[i])
    }
}

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
        family: Family::Explicit(&tableau::EULER),
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
        family: Family::Explicit(&tableau::HEUN),
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
        family: Family::Explicit(&tableau::MIDPOINT),
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
        family: Family::Explicit(&tableau::RK4),
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
        family: Family::Explicit(&tableau::BS32),
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
        family: Family::Explicit(&tableau::DP54),
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
        family: Family::Explicit(&tableau::DP853),
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
        reference: BACKWARD_EULER.reference,
        summary: "Implicit, first order, fixed step with Newton iteration; stable at any step on decaying problems. For comparison.",
        dense_order: 1,
        family: Family::Theta(&BACKWARD_EULER),
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
        reference: TRAPEZOID.reference,
        summary: "Implicit, second order, fixed step with Newton iteration; stable but does not damp fast transients. For comparison.",
        dense_order: 3,
        family: Family::Theta(&TRAPEZOID),
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
        reference: RODAS4.reference,
        summary: "Adaptive, stiff (L-stable), fourth order, one Jacobian and one factorization per step; for stiff problems at relative tolerances 1e-2 to 1e-8.",
        dense_order: 3,
        family: Family::Rosenbrock(&RODAS4),
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
        reference: RADAU5.reference,
        summary: "Adaptive, stiff (L-stable), fifth order, reuses Jacobian and factorization across steps; for stiff problems at tight tolerances.",
        dense_order: 3,
        family: Family::Radau(&RADAU5),
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
        family: Family::Explicit(&tableau::DP54),
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
