//! The error corpus: bad sheets, each with the line, the column and the gist
//! of the message it must give. Source of every expectation: the sheet
//! language's own rules (src/sheet/mod.rs); columns are counted by hand,
//! 1-based, in characters.

use ratebook::sheet::{compile, ModelErrorKind};

/// (sheet, line, column, words the message must contain)
const CORPUS: &[(&str, usize, usize, &str)] = &[
    // empty sheets
    ("", 1, 1, "empty"),
    ("   \n\n  ", 1, 1, "empty"),
    ("# only a comment\n", 1, 1, "empty"),
    // no rate equation
    ("k = 2\n", 1, 1, "no rate equation"),
    // unknown names, with suggestions
    ("dh/dt = -k*hh\nh(0) = 1\nk = 1", 1, 12, "unknown name \"hh\"; did you mean \"h\"?"),
    ("dh/dt = -kk*h\nh(0) = 1\nk = 1", 1, 10, "did you mean \"k\""),
    ("dx/dt = -rate*x\nx(0) = 1\nrates = 2", 1, 10, "did you mean \"rates\""),
    ("dx/dt = -x*zeta\nx(0) = 1", 1, 12, "unknown name \"zeta\""),
    ("dx/dt = -x\nx(0) = q", 2, 8, "unknown name \"q\""),
    ("x'' = -x\nx(0) = 1\nx'(0) = 0\ny = x'''", 4, 5, "unknown name \"x'''\""),
    ("dx/dt = x'\nx(0) = 1", 1, 9, "unknown name \"x'\""),
    ("dx/dt = -x\nx(0) = 1\nstop when xx < 1", 3, 11, "did you mean \"x\""),
    ("dx/dt = -x\nx(0) = 1\nstop when x < lim", 3, 15, "unknown name \"lim\""),
    // unknown functions
    ("dx/dt = -sqr(x)\nx(0) = 1", 1, 10, "unknown function \"sqr\"; did you mean \"sqrt\"?"),
    ("dx/dt = -x*expp(1)\nx(0) = 1", 1, 12, "did you mean \"exp\""),
    ("dx/dt = f(x)\nx(0) = 1", 1, 9, "unknown function \"f\""),
    // a function under its former name: the error gives today's, no alias
    ("P = 2\nheat = P*step(5 - t)\ndT/dt = heat - T\nT(0) = 1", 2, 10, "the function \"step\" is now called \"heaviside\", with the same meaning: write heaviside(…) here"),
    ("dx/dt = -x + step (t - 1)\nx(0) = 1", 1, 14, "now called \"heaviside\""),
    // missing or doubled initial values
    ("dx/dt = -x\n", 1, 1, "\"x\" has no initial value"),
    ("x'' = -x\nx(0) = 1\n", 1, 1, "\"x'\" has no initial value"),
    ("dx/dt = -x\nx(0) = 1\nx(0) = 2", 3, 1, "two initial values; the first is on line 2"),
    ("x'' = -x\nx(0) = 1\nx'(0) = 0\nx'(0) = 1", 4, 1, "\"x'\" has two initial values"),
    // initial value for something that is not a state
    ("dx/dt = -x\nx(0) = 1\ny(0) = 1", 3, 1, "\"y\" is not a state"),
    ("dx/dt = -x\nx(0) = 1\nx'(0) = 1", 3, 1, "\"x'\" is not a state"),
    ("k = 2\ndx/dt = -k*x\nx(0) = 1\nk(0) = 3", 4, 1, "\"k\" is not a state"),
    ("dx/dt = -x\nxx(0) = 1", 2, 1, "did you mean \"x\""),
    // duplicate definitions
    ("k = 1\nk = 2\ndx/dt = -k*x\nx(0) = 1", 2, 1, "\"k\" is defined twice; the first definition is on line 1"),
    ("dx/dt = -x\ndx/dt = x\nx(0) = 1", 2, 1, "\"x\" has two rate equations; the first is on line 1"),
    ("x' = -x\n  dx/dt = x\nx(0) = 1", 2, 3, "\"x\" has two rate equations"),
    ("x = 3\ndx/dt = -x\nx(0) = 1", 2, 1, "\"x\" is defined twice"),
    ("dx/dt = -x\nx = 3\nx(0) = 1", 2, 1, "defined twice"),
    ("x'' = -x\nx' = 1\nx(0) = 1\nx'(0) = 0", 2, 1, "\"x'\" clashes with the second-order equation for \"x\" on line 1 (\"x''\"), which already makes \"x\" and \"x'\" its states"),
    ("v = 2\ny' = v\n  y''' = -y\ny(0) = 1", 3, 3, "\"y'''\" clashes with the first-order equation for \"y\" on line 2 (\"y'\"), which already makes \"y\" its state"),
    ("d2x/dt2 = -x\nx(0) = 1\nx'(0) = 0\nx'' = 0", 4, 1, "\"x\" has two rate equations; the first is on line 1"),
    ("dx/dt = -x\nt = 3\nx(0) = 1", 2, 1, "independent variable"),
    // helper cycles
    ("a = b\nb = a\ndx/dt = a*x\nx(0) = 1", 1, 1, "a -> b -> a"),
    ("q = 2*r\nr = x*q\ndx/dt = -q\nx(0) = 1", 1, 1, "circle: q -> r -> q"),
    ("dx/dt = -u\nx(0) = 1\nu = x + w\nv = u\nw = v", 3, 1, "u -> w -> v -> u"),
    ("a = a + 1\ndx/dt = a\nx(0) = 1", 1, 1, "circle: a -> a"),
    // unbalanced parentheses
    ("dx/dt = -(x\nx(0) = 1", 1, 10, "never closed"),
    ("dx/dt = -x)\nx(0) = 1", 1, 11, "no matching"),
    ("dx/dt = sin(x\nx(0) = 1", 1, 9, "never closed"),
    ("dx/dt = ((x) + (x)\nx(0) = 1", 1, 9, "never closed"),
    ("dx/dt = (x))\nx(0) = 1", 1, 12, "no matching"),
    ("dx/dt = -x\nx(0) = (1", 2, 8, "never closed"),
    // wrong argument counts
    ("dx/dt = sin(x, 2)\nx(0) = 1", 1, 9, "\"sin\" takes 1 argument, but 2 were given"),
    ("dx/dt = atan2(x)\nx(0) = 1", 1, 9, "\"atan2\" takes 2 arguments, but 1 was given"),
    ("dx/dt = clamp(x, 0)\nx(0) = 1", 1, 9, "\"clamp\" takes 3 arguments"),
    ("dx/dt = pow(x)\nx(0) = 1", 1, 9, "\"pow\" takes 2 arguments"),
    ("dx/dt = max()\nx(0) = 1", 1, 9, "\"max\" takes at least 1 arguments, but 0 were given"),
    ("dx/dt = -x + hypot(x, 1, 2)\nx(0) = 1", 1, 14, "\"hypot\" takes 2 arguments, but 3 were given"),
    // implicit multiplication
    ("dx/dt = -2x\nx(0) = 1", 1, 11, "\"2*x\""),
    ("k = 3\ndx/dt = -k x\nx(0) = 1", 2, 12, "\"k*x\""),
    ("dx/dt = 2(x + 1)\nx(0) = 1", 1, 10, "\"2*(\""),
    ("dx/dt = (x + 1)(x - 1)\nx(0) = 1", 1, 16, "\")*(\""),
    ("dx/dt = 3sin(x)\nx(0) = 1", 1, 10, "\"3*sin\""),
    ("dx/dt = 1.5e-3x\nx(0) = 1", 1, 15, "\"1.5e-3*x\""),
    // mixed independent variable
    ("dx/dt = 1\ndy/ds = 2\nx(0) = 1\ny(0) = 1", 2, 5, "independent variable is \"t\" (line 1), but here it is \"s\""),
    ("dx/dz = 1\nd2y/dt2 = 2\nx(0) = 1\ny(0) = 1\ny'(0) = 0", 2, 6, "but here it is \"t\""),
    // numbers that do not parse
    ("dx/dt = -1.2.3*x\nx(0) = 1", 1, 10, "\"1.2.3\" does not parse"),
    ("dx/dt = -.5*x\nx(0) = 1", 1, 10, "0.5"),
    ("dx/dt = -1e*x\nx(0) = 1", 1, 10, "exponent needs digits"),
    ("dx/dt = -x*1e999\nx(0) = 1", 1, 12, "too large"),
    ("dx/dt = -x\nx(0) = 1..0", 2, 8, "does not parse"),
    ("dx/dt = -x*2e+\nx(0) = 1", 1, 12, "exponent needs digits"),
    // non-ASCII look-alikes
    ("dx/dt = \u{2212}x\nx(0) = 1", 1, 9, "write \"-\""),
    ("dx/dt = 2\u{00D7}x\nx(0) = 1", 1, 10, "write \"*\""),
    ("dx/dt = x\u{00F7}2\nx(0) = 1", 1, 10, "write \"/\""),
    ("x\u{2019}\u{2019} = -x\nx(0) = 1\nx'(0) = 0", 1, 2, "write \"'\""),
    ("dx/dt = -\u{03C0}*x\nx(0) = 1", 1, 10, "write \"pi\""),
    ("dx/dt = -x\u{00B2}\nx(0) = 1", 1, 11, "write \"^2\""),
    ("dx/dt = -x\nx(0) = \u{201C}1\u{201D}", 2, 8, "U+201C"),
    ("dx/dt = -x\nx(0)\u{00A0}= 1", 2, 5, "a plain space"),
    ("dx/dt = -x\nstop when x \u{2264} 0.5\nx(0) = 1", 2, 13, "write \"<=\""),
    ("d\u{00E9}bit = 2\ndx/dt = -x\nx(0) = 1", 1, 2, "not plain ASCII"),
    // other syntax mistakes
    ("dx/dt = -x +\nx(0) = 1", 1, 12, "missing after \"+\""),
    ("dx/dt = -x * * 2\nx(0) = 1", 1, 14, "missing before \"*\""),
    ("dx/dt = x**2\nx(0) = 1", 1, 10, "^"),
    ("dx/dt =\nx(0) = 1", 1, 8, "expression is missing"),
    ("= 3\ndx/dt = -x\nx(0) = 1", 1, 1, "name is missing"),
    ("dx/dt = -x\nx < 3\nx(0) = 1", 2, 3, "stop when"),
    ("dx/dt = -x\nx(0) = 1\nstop when x", 3, 11, "comparison"),
    ("dx/dt = -x\nx(0) = 1\nstop when", 3, 10, "condition is missing"),
    ("dx/dt = -x\nx(0) = 1\nstop when x < 1 < 2", 3, 17, "one comparison"),
    ("dx/dt = -x\nx(0) = 1\nmark when x != 0.5", 3, 13, "either direction"),
    ("dx/dt = -x\nx(0) = 1\nstop if x < 1", 3, 6, "stop when"),
    ("dx/dt = -x; 2\nx(0) = 1", 1, 11, "\";\""),
    ("dx/dt = -x = 2\nx(0) = 1", 1, 12, "only one \"=\""),
    ("dx/dt = -x$\nx(0) = 1", 1, 11, "\"$\""),
    ("dx/dt = -x[1]\nx(0) = 1", 1, 11, "round parentheses"),
    ("dx/dt = f(1, 2), 3\nx(0) = 1", 1, 9, "unknown function"),
    ("dx/dt = -x, 3\nx(0) = 1", 1, 11, "outside any function"),
    ("dx/dt = -x\nx() = 1", 2, 3, "start time is missing"),
    ("dx/dt = -x\nx\" = 1\nx(0) = 1", 2, 2, "two primes"),
    ("2k = 3\ndx/dt = -x\nx(0) = 1", 1, 1, "left side"),
    ("sin = 3\ndx/dt = -x\nx(0) = 1", 1, 1, "\"sin\" is a built-in name"),
    ("pi = 3\ndx/dt = -x\nx(0) = 1", 1, 1, "built-in"),
    ("dx/dt = -x\nx(t) = 1", 2, 3, "the start time must be a constant"),
    ("dx/dt = -x\nx(0) = x", 2, 8, "the initial value of x must be a constant"),
    ("dx/dt = -x\nq = 2*x\nx(0) = q", 3, 8, "uses \"q\", which changes"),
    ("dx/dt = -x\ndy/dt = -y\nx(0) = 1\ny(1) = 2", 4, 3, "same start; line 3 starts at 0, this one at 1"),
    ("x''''' = -x\nx(0) = 1", 1, 1, "order 5 is too high"),
    ("d5x/dt5 = -x\nx(0) = 1", 1, 1, "order 5"),
    ("d2x/dt = -x\nx(0) = 1\nx'(0) = 0", 1, 5, "both sides"),
    ("dx/d = -x\nx(0) = 1", 1, 1, "dx/dt"),
];

#[test]
fn error_corpus_gives_line_column_and_message() {
    assert!(CORPUS.len() >= 60, "the corpus has {} sheets", CORPUS.len());
    let mut failures = Vec::new();
    for (k, (sheet, line, col, gist)) in CORPUS.iter().enumerate() {
        match compile(sheet) {
            Ok(_) => failures.push(format!("#{k} {sheet:?}: compiled, expected an error")),
            Err(e) => {
                let msg = e.message();
                if e.line != *line || e.column != *col || !msg.contains(gist) {
                    failures.push(format!("#{k} {sheet:?}: got {msg:?} at {}:{}, want {line}:{col} containing {gist:?}", e.line, e.column));
                }
                assert!(msg.starts_with(&format!("line {}, column {}: ", e.line, e.column)));
                assert_eq!(msg, e.to_string());
            }
        }
    }
    assert!(failures.is_empty(), "{} failures:\n{}", failures.len(), failures.join("\n"));
}

#[test]
fn limits_are_refused_cleanly() {
    // 2 001 lines: refused on the line after the limit.
    let mut s = String::from("dx/dt = -x\nx(0) = 1\n");
    for _ in 0..2000 {
        s.push_str("# note\n");
    }
    let e = compile(&s).unwrap_err();
    assert_eq!((e.line, e.column), (2001, 1));
    assert!(matches!(e.kind, ModelErrorKind::TooManyLines { limit: 2000, .. }));
    // An expression of 10 001 characters.
    let long = format!("dx/dt = -x{}\nx(0) = 1", " ".repeat(9999) + "+1");
    let Err(e) = compile(&long) else { panic!("a 10 003-character expression compiled") };
    assert!(matches!(e.kind, ModelErrorKind::ExpressionTooLong { limit: 10_000, .. }), "{e}");
    assert_eq!((e.line, e.column), (1, 9));
    // 201 states.
    let mut s = String::new();
    for i in 0..201 {
        s += &format!("dx{i}/dt = -x{i}\nx{i}(0) = 1\n");
    }
    let e = compile(&s).unwrap_err();
    assert_eq!((e.line, e.column), (401, 1));
    assert!(e.message().contains("more than 200 states"));
    // 200 states is fine.
    let mut s = String::new();
    for i in 0..200 {
        s += &format!("dx{i}/dt = -x{i}\nx{i}(0) = 1\n");
    }
    assert!(compile(&s).is_ok());
    // A very large sheet on one line is refused at once.
    let huge = "x".repeat(5_000_000);
    let e = compile(&format!("dx/dt = {huge}\nx(0) = 1")).unwrap_err();
    assert!(matches!(e.kind, ModelErrorKind::ExpressionTooLong { .. }));
    // Deep nesting within the limit compiles and does not overflow the stack.
    let deep = format!("dx/dt = {}x{}\nx(0) = 1", "(".repeat(4000), ")".repeat(4000));
    assert!(compile(&deep).is_ok());
    let long_sum = format!("dx/dt = -x{}\nx(0) = 1", "+x".repeat(4900));
    let mut m = compile(&long_sum).unwrap();
    let mut j = [0.0];
    use ratebook::problem::Problem;
    assert!(m.jacobian(0.0, &[1.0], &mut j));
    assert_eq!(j[0], 4899.0);
}

#[test]
fn kinds_carry_their_details() {
    let e = compile("dh/dt = -k*hh\nh(0) = 1\nk = 1").unwrap_err();
    assert_eq!(e.kind, ModelErrorKind::UnknownName { name: "hh".into(), suggestion: Some("h".into()) });
    let e = compile("a = b\nb = a\ndx/dt = a*x\nx(0) = 1").unwrap_err();
    assert_eq!(e.kind, ModelErrorKind::HelperCycle { names: vec!["a".into(), "b".into()] });
    let e = compile("dx/dt = -2x\nx(0) = 1").unwrap_err();
    assert_eq!(e.kind, ModelErrorKind::ImplicitMultiplication { hint: "2*x".into() });
    let e = compile("dx/dt = \u{2212}x\nx(0) = 1").unwrap_err();
    assert_eq!(e.kind, ModelErrorKind::NonAscii { found: '\u{2212}', hint: Some("-".into()) });
    // It is a std::error::Error.
    let boxed: Box<dyn std::error::Error> = Box::new(e);
    assert!(boxed.to_string().contains("U+2212"));
}

#[test]
fn comments_may_hold_any_characters() {
    let m = compile("# Tank \u{2014} drains in \u{00B0}C \u{00D7} m\u{00B2}\ndh/dt = -0.1*h   # m\u{00B3}/s\nh(0) = 2\n");
    assert!(m.is_ok(), "{:?}", m.err());
    // A byte-order mark at the start is ignored.
    assert!(compile("\u{FEFF}dx/dt = -x\nx(0) = 1").is_ok());
}

#[test]
fn nothing_panics_on_garbage() {
    // A tiny generator of random junk over the language's own characters
    // (common practice, no source: fuzz-style robustness check).
    let alphabet: Vec<char> = "xyt0123456789.eE+-*/%^(),=<>' \n#dsinqrtabclmpw_\u{2212}\"".chars().collect();
    let mut s: u64 = 0x9E37_79B9_7F4A_7C15;
    for _ in 0..3000 {
        let mut text = String::new();
        s ^= s << 13;
        s ^= s >> 7;
        s ^= s << 17;
        let len = (s % 40) as usize;
        for _ in 0..len {
            s ^= s << 13;
            s ^= s >> 7;
            s ^= s << 17;
            text.push(alphabet[(s % alphabet.len() as u64) as usize]);
        }
        for wrapped in [text.clone(), format!("dx/dt = {text}\nx(0) = 1"), format!("dx/dt = -x\nx(0) = 1\nstop when {text}")] {
            if let Err(e) = compile(&wrapped) {
                assert!(e.line >= 1 && e.column >= 1);
                let line = wrapped.lines().nth(e.line - 1).unwrap_or("");
                assert!(e.column <= line.chars().count() + 1, "{wrapped:?}: {e}");
            }
        }
    }
}
