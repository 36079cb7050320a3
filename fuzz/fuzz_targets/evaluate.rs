//! Compiled evaluation (rates, helpers, events, switches, Jacobian, ∂f/∂t)
//! at fuzzed points, and the emitted wasm modules, which must validate as
//! WebAssembly 1.0 (what the page loads).
#![no_main]
use wasmparser::{Validator, WasmFeatures};

libfuzzer_sys::fuzz_target!(|data: &[u8]| {
    for bytes in ratebook::fuzzing::evaluate(data) {
        let mut v = Validator::new_with_features(WasmFeatures::WASM1);
        if let Err(e) = v.validate_all(&bytes) {
            panic!("an emitted module does not validate: {e}");
        }
    }
});
