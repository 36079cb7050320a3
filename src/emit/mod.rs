//! The per-model wasm module emitter.
