//! Implicit Runge–Kutta methods solved by Newton iteration, one file per
//! family: [`theta`], the fixed-step backward Euler and trapezoidal rule (for
//! comparison views), and [`radau`], the adaptive 3-stage Radau IIA method of
//! order 5 (for tight tolerances); [`newton`] holds their shared iteration
//! control.
//!
//! All use a simplified Newton iteration with the Jacobian at the start of the
//! step and an LU-factored iteration matrix. The convergence test follows
//! Hairer & Wanner, *Solving ODEs II*, Sec. IV.8 (common practice): with the
//! observed contraction rate `θ_k = ‖ΔZ_k‖/‖ΔZ_{k-1}‖`, the iteration stops
//! when `θ/(1-θ)·‖ΔZ‖ ≤ κ`, and fails when `θ ≥ 1` or when the predicted
//! error after the remaining iterations stays above `κ`. Here
//! `κ = max(10ε/rtol, min(0.03, √rtol))` in the weighted norm.
//! A failed iteration returns [`StepFault::NewtonFailed`] so the driver
//! shrinks `h` and retries; the iteration count is bounded, so it never hangs.

pub mod newton;
pub mod radau;
pub mod theta;

pub use radau::{Radau, RadauTableau, Sqrt6Number, RADAU5};
pub use theta::{ThetaMethod, ThetaStepper, BACKWARD_EULER, TRAPEZOID};

#[cfg(test)]
mod tests {
    use super::*;
    use crate::solve::rosenbrock::{Rosenbrock, RODAS4};
    use crate::solve::stability::C64;
    use crate::solve::stepper::{Stepper, Tolerance};
    use crate::solve::testing::*;

    #[test]
    fn rodas4_and_radau5_are_l_stable_and_accurate_near_zero() {
        for (f, order) in [(RODAS4.stability_function(), 4), (RADAU5.stability_function(), 5)] {
            // Order p: R(z) − e^z = O(z^(p+1)) (Hairer & Wanner, Solving ODEs II, Sec. IV.3).
            for z in [0.01, -0.02] {
                let d = (f.eval(C64::new(z, 0.0)) - C64::new(z, 0.0).exp()).norm();
                assert!(d < 10.0 * z.abs().powi(order + 1), "{order} {z} {d}");
            }
            // L-stable: |R(z)| → 0 as z → −∞, and A-stable on the imaginary axis.
            assert!(f.growth(C64::new(-1e8, 0.0)) < 1e-3);
            assert!(f.growth(C64::new(-1e-3, 50.0)) <= 1.0);
            assert_eq!(f.largest_stable_step(C64::new(-1e5, 1e3)), None);
        }
    }

    #[test]
    fn dense_slopes_match_differences_of_the_dense_output() {
        // The exact slope of each continuous extension against a central
        // difference of the same polynomial (common practice, no source).
        let steppers: Vec<Box<dyn Stepper>> = vec![
            Box::new(Radau::new(2)),
            Box::new(ThetaStepper::new(&TRAPEZOID, 2)),
            Box::new(ThetaStepper::new(&BACKWARD_EULER, 2)),
            Box::new(Rosenbrock::new(&RODAS4, 2)),
        ];
        for mut st in steppers {
            fixed_step_error(st.as_mut(), 10, DenseCheck::Local(0.5));
            let h = 0.1;
            for &theta in &[0.1, 0.5, 0.9] {
                let (mut lo, mut hi, mut slope) = ([0.0; 2], [0.0; 2], [0.0; 2]);
                let d = 1e-6;
                st.dense(theta - d, &mut lo);
                st.dense(theta + d, &mut hi);
                st.dense_slope(theta, h, &mut slope);
                for i in 0..2 {
                    let fd = (hi[i] - lo[i]) / (2.0 * d * h);
                    assert!((slope[i] - fd).abs() < 1e-6 * fd.abs().max(1.0), "{} vs {}", slope[i], fd);
                }
            }
        }
    }


    #[test]
    fn stiff_references_with_a_plain_loop() {
        use crate::problems::stiff::*;
        // References: tests/reference/stiff_reference.py (SciPy Radau, rtol 1e-13 / 1e-12).
        let tol = Tolerance { relative: 1e-6, absolute: 1e-6 };
        let mut st: Vec<(Box<dyn Stepper>, u32)> = vec![(Box::new(Rosenbrock::new(&RODAS4, 2)), 3), (Box::new(Radau::new(2)), 3)];
        for (s, q) in st.iter_mut() {
            let (y, stats) = adaptive(s.as_mut(), &mut VanDerPol::new(1000.0), &[2.0, 0.0], 3000.0, &tol, *q);
            eprintln!("vdp {:?} {:?} err {:e}", y, stats, (y[0] - VAN_DER_POL_1000_AT_3000[0]).abs());
            assert!((y[0] - VAN_DER_POL_1000_AT_3000[0]).abs() < 1e-2);
        }
        let tol = Tolerance { relative: 1e-6, absolute: 1e-10 };
        let mut st: Vec<(Box<dyn Stepper>, u32)> = vec![(Box::new(Rosenbrock::new(&RODAS4, 3)), 3), (Box::new(Radau::new(3)), 3)];
        for (s, q) in st.iter_mut() {
            let (y, stats) = adaptive(s.as_mut(), &mut Robertson::default(), &[1.0, 0.0, 0.0], 1e5, &tol, *q);
            eprintln!("rober {:?} {:?} rel err {:e}", y, stats, ((y[0] - ROBERTSON_AT_1E5[0]) / ROBERTSON_AT_1E5[0]).abs());
            assert!(((y[0] - ROBERTSON_AT_1E5[0]) / ROBERTSON_AT_1E5[0]).abs() < 1e-3);
        }
    }
}
