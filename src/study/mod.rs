//! How far to trust an answer: accuracy checks, convergence studies,
//! stability regions and the pitfalls that make a run untrustworthy, each
//! explained in plain words with the number behind it.
//!
//! - [`stability`]: stability functions `R(z)` from the method coefficients,
//!   the largest stable step, region boundaries for drawing;
//! - [`convergence`]: observed order, Richardson extrapolation, the step for a
//!   target accuracy;
//! - [`digits`]: trusted significant digits and printing to them;
//! - [`probe`]: Jacobian, spectrum, Lipschitz, blow-up and grazing probes;
//! - [`report`]: what an accuracy check reports, the vocabulary that
//!   [`check`] and [`pitfalls`] share;
//! - [`check`]: the accuracy check of one run;
//! - [`pitfalls`]: one detector per pitfall, over one context;
//! - [`sweep`]: the fixed-step convergence study.

pub mod convergence;
pub mod digits;
pub mod probe;
pub mod stability;
pub mod check;
pub mod pitfalls;
pub mod report;
pub mod sweep;
