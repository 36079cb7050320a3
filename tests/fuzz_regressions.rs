//! Replays the committed fuzz corpus (`tests/fuzz-corpus/<target>/*`):
//! every input the fuzz targets in `fuzz/` once crashed, hung or tripped an
//! assertion on, plus a few seeds, through the same entry points
//! (`ratebook::fuzzing`), so that a fixed finding stays fixed under plain
//! `cargo test`.

use std::fs;
use std::path::PathBuf;

use wasmparser::{Validator, WasmFeatures};

fn corpus(target: &str) -> Vec<(String, Vec<u8>)> {
    let dir = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("tests/fuzz-corpus").join(target);
    let mut files: Vec<_> = fs::read_dir(&dir)
        .unwrap_or_else(|e| panic!("{}: {e}", dir.display()))
        .map(|e| e.expect("corpus entry").path())
        .filter(|p| p.is_file())
        .collect();
    files.sort();
    files
        .into_iter()
        .map(|p| (p.file_name().unwrap_or_default().to_string_lossy().into_owned(), fs::read(&p).expect("corpus file")))
        .collect()
}

fn replay(target: &str, run: impl Fn(&[u8])) -> usize {
    let inputs = corpus(target);
    assert!(!inputs.is_empty(), "the {target} corpus is empty");
    for (name, data) in &inputs {
        eprintln!("{target}/{name}");
        run(data);
    }
    inputs.len()
}

#[test]
fn compile_corpus() {
    replay("compile", ratebook::fuzzing::compile);
}

#[test]
fn evaluate_corpus() {
    replay("evaluate", |data| {
        for bytes in ratebook::fuzzing::evaluate(data) {
            let mut v = Validator::new_with_features(WasmFeatures::WASM1);
            if let Err(e) = v.validate_all(&bytes) {
                panic!("an emitted module does not validate: {e}");
            }
        }
    });
}

#[test]
fn solve_corpus() {
    replay("solve", ratebook::fuzzing::solve);
}
