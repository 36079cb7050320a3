//! The sheet parser and compiler on arbitrary text.
#![no_main]
libfuzzer_sys::fuzz_target!(|data: &[u8]| ratebook::fuzzing::compile(data));
