//! `solve` on fuzzed sheets and settings, with a step cap.
#![no_main]
libfuzzer_sys::fuzz_target!(|data: &[u8]| ratebook::fuzzing::solve(data));
