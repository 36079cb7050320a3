//! ratebook: a rate-equation workbench.
//!
//! The numerical core (sheet language, solvers, studies, drawing) has no web
//! dependencies and is tested natively. Only [`web`] (wasm32) touches the browser.
#![warn(missing_docs)]

pub mod api;
pub mod draw;
pub mod emit;
pub mod field;
#[doc(hidden)]
pub mod fuzzing;
pub mod problem;
pub mod problems;
pub mod sheet;
pub mod solve;
pub mod study;

#[cfg(target_arch = "wasm32")]
pub mod web;
