//! Derivative orders that are no order (`d0x/dt0`, a number of twenty
//! digits) and parameters with no finite value (`0/0`, `1/0`) are named as
//! the user wrote them, with their line. Source of the expectations: the sheet
//! language's own rules (src/sheet/mod.rs: orders 1 to 4; a parameter is a
//! constant); columns are counted by hand, 1-based.

use ratebook::api::{self, RunRequest};
use ratebook::sheet::{compile, ModelErrorKind};

#[test]
fn order_zero_is_its_own_error() {
    let e = compile("d0x/dt0 = 1\nx(0) = 0\n").unwrap_err();
    assert_eq!((e.line, e.column), (1, 1));
    assert!(matches!(&e.kind, ModelErrorKind::OrderZero { state, indep } if state == "x" && indep == "t"), "{:?}", e.kind);
    let m = e.message();
    assert!(m.contains("order 0") && m.contains("\"dx/dt\""), "{m}");
    assert!(!m.contains("too high"), "{m}");
    // d00x/dt00 is order 0 as well.
    assert!(matches!(compile("d00x/dt00 = 1\nx(0) = 0\n").unwrap_err().kind, ModelErrorKind::OrderZero { .. }));
}

#[test]
fn a_huge_order_is_shown_as_written() {
    let digits = "99999999999999999999";
    let e = compile(&format!("y = 1\nd{digits}x/dt{digits} = 1\nx(0) = 0\n")).unwrap_err();
    assert_eq!((e.line, e.column), (2, 1));
    let m = e.message();
    assert!(m.contains(&format!("order {digits} is too high")), "{m}");
    assert!(!m.contains("4294967295") && !m.contains("18446744073709551615"), "{m}");
    // A mismatched huge order names it as written too.
    let m = compile(&format!("d{digits}x/dt5 = 1\nx(0) = 0\n")).unwrap_err().message();
    assert!(m.contains(digits) && !m.contains("18446744073709551615"), "{m}");
    // Control: the highest allowed order compiles, one more does not.
    assert!(compile("d4x/dt4 = -x\nx(0) = 1\nx'(0) = 0\nx''(0) = 0\nx'''(0) = 0\n").is_ok());
    let m = compile("d5x/dt5 = -x\nx(0) = 1\n").unwrap_err().message();
    assert!(m.contains("order 5 is too high"), "{m}");
}

fn failure(sheet: &str) -> String {
    let r = api::solve(sheet, &RunRequest { to: Some(5.0), ..Default::default() }).unwrap();
    assert_eq!(r.status, "failed");
    r.error.unwrap()
}

#[test]
fn a_parameter_with_no_finite_value_is_named_with_its_line() {
    let m = failure("# decay\nk = 0/0\ny' = -k*y\ny(0) = 1\n");
    assert!(m.contains("the parameter `k` of line 2 is not a number"), "{m}");
    assert!(!m.contains("overflow"), "{m}");
    let m = failure("k = 1/0\ny' = -k*y\ny(0) = 1\n");
    assert!(m.contains("the parameter `k` of line 1 is infinite"), "{m}");
    // Through another parameter and a helper.
    let m = failure("a = 0\nk = a/a\nq = k*y\ny' = -q\ny(0) = 1\n");
    assert!(m.contains("the parameter `k` of line 2"), "{m}");
    // Control: a real overflow in the rate is still called one.
    let m = failure("y' = exp(exp(y))\ny(0) = 10\n");
    assert!(!m.contains("the parameter"), "{m}");
    // Control: an infinite parameter the rate does not need is no failure.
    let r = api::solve("cap = 1/0\ny' = -min(y, cap)\ny(0) = 1\n", &RunRequest { to: Some(1.0), ..Default::default() }).unwrap();
    assert_eq!(r.status, "finished");
}
