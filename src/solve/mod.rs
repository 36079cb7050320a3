//! Solvers: the method registry, the steppers, step-size control, dense
//! output, event location and the driver that runs them.

pub mod stepper;
pub mod implicit;
pub mod linalg;
pub mod rosenbrock;
