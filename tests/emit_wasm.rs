//! The emitted modules are valid WebAssembly 1.0 and import only what they use.
//!
//! Validity is checked with wasmparser's validator (the Bytecode Alliance's
//! reference parser for the W3C WebAssembly Core Specification), restricted to
//! the 1.0 feature set so that every engine accepts the modules. Running them
//! against the interpreter, bit for bit, is tests/node/emit.test.mjs and
//! tests/e2e/emit.test.mjs.

use ratebook::emit::lower::{module, EmitError, MATHS};
use ratebook::emit::wasm::{Code, FuncType, Module, Simple, ValType};
use ratebook::sheet::ir::{Inst, Op, Program};
use wasmparser::{Payload, TypeRef, Validator, WasmFeatures};

const ALL_OPS: [Op; 42] = {
    use Op::*;
    [
        Add, Sub, Mul, Div, Rem, Pow, Atan2, Min, Max, Hypot, AddC, MulC, CSub, DivC, CDiv, PowC, CPow, Neg, Sq, Sqrt,
        Exp, Ln, Log10, Abs, Sin, Cos, Tan, Asin, Acos, Atan, Sinh, Cosh, Tanh, Asinh, Acosh, Atanh, Floor, Ceil,
        Round, Trunc, Signum, Sign,
    ]
};

fn validate(bytes: &[u8]) {
    let mut v = Validator::new_with_features(WasmFeatures::WASM1);
    if let Err(e) = v.validate_all(bytes) {
        panic!("invalid module: {e}");
    }
}

/// Imported names (memory included) and, per defined function, its declared f64 locals.
fn parse(bytes: &[u8]) -> (Vec<String>, Vec<u32>) {
    let mut imports = Vec::new();
    let mut locals = Vec::new();
    for p in wasmparser::Parser::new(0).parse_all(bytes) {
        match p.expect("parses") {
            Payload::ImportSection(r) => {
                for i in r.into_imports() {
                    let i = i.expect("import");
                    assert_eq!(i.module, "env");
                    if let TypeRef::Memory(m) = i.ty {
                        assert_eq!((m.initial, m.maximum, m.shared, m.memory64), (0, None, false, false));
                    }
                    imports.push(i.name.to_string());
                }
            }
            Payload::CodeSectionEntry(body) => {
                let mut n = 0;
                for l in body.get_locals_reader().expect("locals") {
                    n += l.expect("local").0;
                }
                locals.push(n);
            }
            _ => {}
        }
    }
    (imports, locals)
}

/// A program over `t`, two states and one live parameter, with the constants
/// 0.5 and -3, that applies `op` to the slot pair `(a, b)` and outputs it.
fn one_op(op: Op, a: u32, b: u32) -> Program {
    let b = if op.is_binary() { b } else { a };
    let c = if op.uses_immediate() { 1.25 } else { 0.0 };
    Program::new(2, vec![("k".into(), 2.0)], vec![0.5, -3.0], vec![Inst { op, a, b, c }], vec![6, 1])
        .expect("well-formed program")
}

#[test]
fn every_operation_emits_a_valid_module_with_exactly_its_imports() {
    for op in ALL_OPS.into_iter().chain([Op::Heaviside]) {
        // Operands: t with a state, a live parameter with a constant.
        for (a, b) in [(0, 2), (3, 4)] {
            let p = one_op(op, a, b);
            let bytes = module(&[("rhs", &p)]).expect("emits");
            validate(&bytes);
            let (imports, locals) = parse(&bytes);
            let mut want = vec!["memory".to_string()];
            let name = match op {
                Op::PowC | Op::CPow => Some("rb_pow"),
                o => MATHS.iter().find(|m| m.1 == o).map(|m| m.0),
            };
            want.extend(name.map(str::to_string));
            assert_eq!(imports, want, "{op:?}");
            assert_eq!(locals.len(), 1);
        }
    }
}

#[test]
fn the_maths_list_covers_every_operation_that_wasm_lacks() {
    use Op::*;
    let native = [Add, Sub, Mul, Div, AddC, MulC, CSub, DivC, CDiv, Neg, Sq, Sqrt, Abs, Floor, Ceil, Trunc, Sign, Heaviside];
    for op in ALL_OPS.into_iter().chain([Heaviside]) {
        let listed = MATHS.iter().any(|m| m.1 == op) || matches!(op, PowC | CPow);
        assert_eq!(listed, !native.contains(&op), "{op:?}");
    }
    let mut names: Vec<_> = MATHS.iter().map(|m| m.0).collect();
    names.sort();
    names.dedup();
    assert_eq!(names.len(), MATHS.len(), "export names are unique");
}

#[test]
fn several_kernels_share_one_module_and_one_set_of_imports() {
    let rates = one_op(Op::Sin, 1, 1);
    let events = one_op(Op::Sin, 2, 2);
    let jac = one_op(Op::Hypot, 1, 2);
    let bytes = module(&[("rhs", &rates), ("events", &events), ("jac", &jac)]).expect("emits");
    validate(&bytes);
    let (imports, locals) = parse(&bytes);
    assert_eq!(imports, ["memory", "rb_hypot", "rb_sin"]);
    assert_eq!(locals.len(), 3);
}

/// A long chain `s ← s·y0 + t` repeated, with every step also feeding a
/// running sum that is output at the end.
fn long_chain(n: usize) -> Program {
    let first = 2; // slot 0 is t, slot 1 is y0; no live values or constants
    let mut insts = Vec::new();
    let mut acc = 1u32; // y0
    let mut sum = 0u32; // t
    for _ in 0..n {
        let me = (first + insts.len()) as u32;
        insts.push(Inst { op: Op::Mul, a: acc, b: 1, c: 0.0 });
        insts.push(Inst { op: Op::Add, a: me, b: 0, c: 0.0 });
        insts.push(Inst { op: Op::Add, a: sum, b: me + 1, c: 0.0 });
        acc = me + 1;
        sum = me + 2;
    }
    Program::new(1, vec![], vec![], insts, vec![sum, acc]).expect("well-formed program")
}

#[test]
fn locals_are_reused_so_long_tapes_stay_small() {
    let p = long_chain(30_000);
    let bytes = module(&[("rhs", &p)]).expect("emits");
    validate(&bytes);
    let (_, locals) = parse(&bytes);
    // Three values are live at once (acc, sum, the product) plus the state.
    assert!(locals[0] <= 5, "{} locals for 90 000 instructions", locals[0]);
}

#[test]
fn instructions_that_reach_no_output_are_left_out() {
    // Slot 4 (sin y0) reaches nothing; slot 5 (y0 + t) is the output.
    let insts = vec![Inst { op: Op::Sin, a: 1, b: 1, c: 0.0 }, Inst { op: Op::Add, a: 1, b: 0, c: 0.0 }];
    let p = Program::new(1, vec![], vec![7.0], insts, vec![4]).expect("well-formed program");
    let bytes = module(&[("rhs", &p)]).expect("emits");
    validate(&bytes);
    assert_eq!(parse(&bytes).0, ["memory"], "no sin import for dead code");
}

#[test]
fn emitting_is_deterministic() {
    let p = long_chain(50);
    assert_eq!(module(&[("rhs", &p)]), module(&[("rhs", &p)]));
}

#[test]
fn an_empty_program_still_gives_a_valid_kernel() {
    let p = Program::new(0, vec![], vec![], vec![], vec![]).expect("well-formed program");
    validate(&module(&[("rhs", &p)]).expect("emits"));
}

#[test]
fn outputs_may_be_inputs_or_constants() {
    // Outputs t, y1, live k, the constant 0.5.
    let p = Program::new(2, vec![("k".into(), 2.0)], vec![0.5], vec![], vec![0, 2, 3, 4]).expect("well-formed");
    validate(&module(&[("rhs", &p)]).expect("emits"));
}

#[test]
fn the_encoder_writes_loops_blocks_and_integer_arithmetic() {
    // n iterations of x ← x·2 + 1; all constructs the stage-loop kernels use.
    let mut m = Module::new();
    m.import_memory("env", "memory");
    let t = FuncType { params: vec![ValType::F64, ValType::I32], results: vec![ValType::F64] };
    let mut c = Code::new(2);
    let n = c.local(ValType::I32);
    c.get(1).set(n);
    c.block().loop_();
    c.get(n).op(Simple::I32Eqz).br_if(1);
    c.get(0).f64_const(2.0).op(Simple::F64Mul).f64_const(1.0).op(Simple::F64Add).set(0);
    c.get(n).i32_const(-1).op(Simple::I32Add).set(n);
    c.br(0).end().end();
    c.get(0).end();
    let f = m.define(&t, c);
    m.export("iterate", f);
    validate(&m.finish());
}

#[test]
fn too_many_live_values_are_refused_not_emitted_broken() {
    // 60 000 states summed pairwise only at the end: all are live at once.
    let n = 60_000;
    let first = 1 + n;
    let mut insts = vec![Inst { op: Op::Add, a: 1, b: 2, c: 0.0 }];
    for i in 3..=n as u32 {
        insts.push(Inst { op: Op::Add, a: (first + insts.len() - 1) as u32, b: i, c: 0.0 });
    }
    let p = Program::new(n, vec![], vec![], insts, vec![(first + n - 2) as u32]).expect("well-formed");
    assert_eq!(module(&[("rhs", &p)]), Err(EmitError::TooLarge));
}

#[test]
fn the_rk4_stepper_module_is_valid_for_every_operation() {
    use ratebook::emit::lower::rk4_module;
    for op in ALL_OPS.into_iter().chain([Op::Heaviside]) {
        let bytes = rk4_module(&one_op(op, 3, 1)).expect("emits");
        validate(&bytes);
    }
    let chain = long_chain(1000);
    assert_eq!(rk4_module(&chain), Err(EmitError::NotRates), "two outputs for one state");
    let one_rate = Program::new(1, vec![], vec![], chain.insts().to_vec(), vec![chain.outputs()[0]]).expect("well-formed");
    validate(&rk4_module(&one_rate).expect("emits"));
}
