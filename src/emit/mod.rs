//! The per-model wasm module emitter.
//!
//! In the page, the formulas of a sheet run as a tiny wasm module made for
//! that model when it is loaded, instead of through the interpreter:
//! - [`wasm`] encodes WebAssembly binaries;
//! - [`lower`] translates the sheet's lowered programs ([`crate::sheet::ir`])
//!   into one module of kernels that read and write the solver's memory.
//!
//! The emitted code performs the same IEEE operations in the same order as
//! the interpreter, and calls the same Rust functions for the maths that wasm
//! lacks, so both give bit-identical results. The interpreter stays for the
//! native build, the tests, and as the fallback when the page may not compile
//! wasm.

pub mod lower;
pub mod wasm;
pub mod model;

pub use model::{EmittedModel, KernelFn, Loader, Rk4Fn};
