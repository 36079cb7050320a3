//! The sheet reader the page builds its sliders and output grid from
//! (`sheet::outline`): the start time as the solver reads it, parameters with
//! their values, lines and literals, and the names. Expected values are worked
//! by hand from each sheet.

use ratebook::sheet::outline::{outline, Literal, Outline};

fn read(text: &str) -> Outline {
    match outline(text) {
        Ok(o) => o,
        Err(e) => panic!("{text:?}: {e}"),
    }
}

#[test]
fn a_start_time_written_as_an_expression_is_evaluated() {
    // The page's former regex read `t0` as the start and fell back to 0.
    assert_eq!(read("t0 = 6\ny' = -y\ny(t0) = 1\n").start, 6.0);
    assert_eq!(read("a = 2\ny' = -y\ny(a*3 + 0.5) = 1\n").start, 6.5);
    assert_eq!(read("y' = -y\ny(-2.5) = 1\n").start, -2.5);
}

#[test]
fn parameters_come_with_values_lines_and_the_literal_a_slider_rewrites() {
    let sheet = "# cooling\nk = 0.002   # per second\n  T_room=-2e1\nk2 = 2*k\nT' = -k2*(T - T_room)\nq = k*T\nT(0) = 90\n";
    let o = read(sheet);
    let p: Vec<_> = o.params.iter().map(|p| (p.name.as_str(), p.value, p.line)).collect();
    assert_eq!(p, [("k", 0.002, 2), ("T_room", -20.0, 3), ("k2", 0.004, 4)]);
    assert_eq!(o.params[0].literal, Some(Literal { index: 4, text: "0.002".into() }));
    assert_eq!(o.params[1].literal, Some(Literal { index: 9, text: "-2e1".into() }));
    assert_eq!(o.params[2].literal, None, "a parameter defined from others has no literal");
    // Each literal is exactly where it says, in the line as JS splits it.
    for prm in &o.params {
        if let Some(l) = &prm.literal {
            let line = sheet.split('\n').nth(prm.line - 1).unwrap();
            assert_eq!(&line[l.index..l.index + l.text.len()], l.text);
        }
    }
    assert_eq!(o.states, ["T"]);
    assert_eq!(o.helpers, ["q"]);
    assert_eq!(o.independent, "t");
}

#[test]
fn names_follow_the_sheet_and_a_byte_order_mark_shifts_line_one() {
    let o = read("\u{FEFF}w = 3\nd2x/ds2 = -w*x\nx(0) = 1\nx'(0) = 0\n");
    assert_eq!(o.independent, "s");
    assert_eq!(o.states, ["x", "x'"]);
    // The mark is one UTF-16 unit at the start of the line as the page holds it.
    assert_eq!(o.params[0].literal, Some(Literal { index: 5, text: "3".into() }));
}

#[test]
fn a_sheet_that_cannot_be_read_gives_the_compiler_s_error() {
    let bad = "k = 1\ny' = -k*(y\ny(0) = 1\n";
    let e = outline(bad).unwrap_err();
    assert_eq!(e, ratebook::sheet::compile(bad).unwrap_err());
    assert_eq!(e.line, 2);
}
