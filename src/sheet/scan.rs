//! Reading a sheet: lines into statements, and expressions into RPN.
//!
//! Expressions are checked by our own scanner first, which knows where every
//! token is and so can say where a mistake is. The checked text is then
//! parsed by meval, whose RPN tokens give the structure (with meval's
//! precedence: `^` is right-associative and binds tighter than unary minus).
//! Names are handed to meval as placeholders `v0`, `v1`, …, so names with
//! primes (`x'`) need no special syntax in meval and cannot collide.

use super::error::{suggest, ModelError, ModelErrorKind as K};
use super::ir::Op;
use meval::tokenizer::{Operation, Token};

/// Most characters in one expression.
pub const MAX_EXPR_CHARS: usize = 10_000;
/// Most lines in a sheet.
pub const MAX_LINES: usize = 2_000;
/// Highest derivative order.
pub const MAX_ORDER: usize = 4;

/// A function of the sheet language.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Func {
    /// A one-argument function computed by one operation.
    Unary(Op),
    /// A two-argument function computed by one operation.
    Binary(Op),
    /// `min(a, …)`, one or more arguments.
    Min,
    /// `max(a, …)`, one or more arguments.
    Max,
    /// `clamp(x, lo, hi)`: `min(max(x, lo), hi)`.
    Clamp,
}

/// Every function: name, the function, how many arguments (`None`: one or more).
pub const FUNCTIONS: &[(&str, Func, Option<usize>)] = &[
    ("sqrt", Func::Unary(Op::Sqrt), Some(1)),
    ("exp", Func::Unary(Op::Exp), Some(1)),
    ("ln", Func::Unary(Op::Ln), Some(1)),
    ("log", Func::Unary(Op::Ln), Some(1)),
    ("log10", Func::Unary(Op::Log10), Some(1)),
    ("abs", Func::Unary(Op::Abs), Some(1)),
    ("sin", Func::Unary(Op::Sin), Some(1)),
    ("cos", Func::Unary(Op::Cos), Some(1)),
    ("tan", Func::Unary(Op::Tan), Some(1)),
    ("asin", Func::Unary(Op::Asin), Some(1)),
    ("acos", Func::Unary(Op::Acos), Some(1)),
    ("atan", Func::Unary(Op::Atan), Some(1)),
    ("sinh", Func::Unary(Op::Sinh), Some(1)),
    ("cosh", Func::Unary(Op::Cosh), Some(1)),
    ("tanh", Func::Unary(Op::Tanh), Some(1)),
    ("asinh", Func::Unary(Op::Asinh), Some(1)),
    ("acosh", Func::Unary(Op::Acosh), Some(1)),
    ("atanh", Func::Unary(Op::Atanh), Some(1)),
    ("floor", Func::Unary(Op::Floor), Some(1)),
    ("ceil", Func::Unary(Op::Ceil), Some(1)),
    ("round", Func::Unary(Op::Round), Some(1)),
    ("signum", Func::Unary(Op::Signum), Some(1)),
    ("sign", Func::Unary(Op::Sign), Some(1)),
    ("heaviside", Func::Unary(Op::Heaviside), Some(1)),
    ("atan2", Func::Binary(Op::Atan2), Some(2)),
    ("pow", Func::Binary(Op::Pow), Some(2)),
    ("hypot", Func::Binary(Op::Hypot), Some(2)),
    ("clamp", Func::Clamp, Some(3)),
    ("min", Func::Min, None),
    ("max", Func::Max, None),
];

/// Functions an earlier version of the language named otherwise: the old
/// name and the name now. A call by the old name is an error that gives the
/// new one (no alias: `step` read as a function next to the setting "Step h").
pub const RENAMED_FUNCTIONS: &[(&str, &str)] = &[("step", "heaviside")];

/// Names the language keeps: every function, `pi` and `e`.
pub fn is_reserved(name: &str) -> bool {
    name == "pi" || name == "e" || FUNCTIONS.iter().any(|f| f.0 == name)
}

fn function(name: &str) -> Option<(Func, Option<usize>)> {
    FUNCTIONS.iter().find(|f| f.0 == name).map(|f| (f.1, f.2))
}

/// One token of a lowered expression, in RPN order.
#[derive(Clone, Debug, PartialEq)]
pub enum Tok {
    /// A number.
    Num(f64),
    /// The name at this index of [`Expr::names`].
    Name(usize),
    /// Unary minus.
    Neg,
    /// A binary operator.
    Bin(Op),
    /// A function call with its argument count.
    Call(Func, usize),
}

/// A name used in an expression, with its column.
#[derive(Clone, Debug, PartialEq)]
pub struct NameRef {
    /// The name, with its primes (`x'`).
    pub name: String,
    /// 1-based column.
    pub col: usize,
}

/// A checked expression.
#[derive(Clone, Debug, PartialEq)]
pub struct Expr {
    /// Column of its first character.
    pub col: usize,
    /// The text as written, trimmed.
    pub text: String,
    /// The expression in RPN.
    pub rpn: Vec<Tok>,
    /// The names it uses, one entry per occurrence, in text order.
    pub names: Vec<NameRef>,
}

/// What a line says.
#[derive(Clone, Debug, PartialEq)]
pub enum Stmt {
    /// `name = expr`
    Def {
        /// The name.
        name: String,
        /// Its column.
        col: usize,
        /// The expression.
        expr: Expr,
    },
    /// `dX/dT = expr`, `X' = expr`, `d2X/dT2 = expr`, `X'' = expr`, …
    Rate {
        /// The state's base name (no primes).
        state: String,
        /// Column of the left side.
        col: usize,
        /// The order of the derivative.
        order: usize,
        /// The independent variable named by a `d…/d…` form, with its column.
        indep: Option<(String, usize)>,
        /// The right side.
        expr: Expr,
    },
    /// `X(t0) = expr`, `X'(t0) = expr`, …
    Init {
        /// The state with its primes.
        state: String,
        /// Its column.
        col: usize,
        /// The start time.
        t0: Expr,
        /// The value.
        value: Expr,
    },
    /// `stop when …` or `mark when …`
    Event {
        /// `true` for `stop`, `false` for `mark`.
        stop: bool,
        /// The condition as written, trimmed.
        text: String,
        /// The comparison: `<`, `<=`, `>`, `>=` or `=`.
        cmp: &'static str,
        /// Left side.
        lhs: Expr,
        /// Right side.
        rhs: Expr,
    },
}

/// A statement with its 1-based line.
#[derive(Clone, Debug, PartialEq)]
pub struct Line {
    /// 1-based line.
    pub line: usize,
    /// What it says.
    pub stmt: Stmt,
}

/// The ASCII to write for a common non-ASCII look-alike.
fn ascii_hint(c: char) -> Option<&'static str> {
    Some(match c {
        '\u{2212}' | '\u{2010}' | '\u{2011}' | '\u{2012}' | '\u{2013}' | '\u{2014}' | '\u{FE63}' | '\u{FF0D}' => "-",
        '\u{00D7}' | '\u{00B7}' | '\u{2219}' | '\u{22C5}' | '\u{2217}' | '\u{2715}' => "*",
        '\u{00F7}' | '\u{2215}' | '\u{2044}' => "/",
        '\u{2018}' | '\u{2019}' | '\u{2032}' | '\u{02B9}' | '\u{00B4}' => "'",
        '\u{201C}' | '\u{201D}' | '\u{2033}' => "''",
        '\u{03C0}' => "pi",
        '\u{00B2}' => "^2",
        '\u{00B3}' => "^3",
        '\u{221A}' => "sqrt(...)",
        '\u{2264}' => "<=",
        '\u{2265}' => ">=",
        '\u{00A0}' | '\u{2009}' | '\u{202F}' | '\u{2007}' | '\u{3000}' => "a plain space",
        '\u{FF1D}' => "=",
        '\u{FF08}' => "(",
        '\u{FF09}' => ")",
        '\u{FF0C}' => ",",
        '\u{FF0B}' => "+",
        '\u{2024}' => ".",
        _ => return None,
    })
}

fn err(line: usize, col: usize, kind: K) -> ModelError {
    ModelError::new(line, col, kind)
}

fn syntax(line: usize, col: usize, expected: impl Into<String>) -> ModelError {
    err(line, col, K::Syntax { expected: expected.into() })
}

fn is_ident_start(b: u8) -> bool {
    b.is_ascii_alphabetic() || b == b'_'
}

fn is_ident(b: u8) -> bool {
    b.is_ascii_alphanumeric() || b == b'_'
}

/// Split a sheet into statements. Limits are checked before any other work.
pub fn parse_lines(text: &str) -> Result<Vec<Line>, ModelError> {
    let text = text.strip_prefix('\u{FEFF}').unwrap_or(text);
    let count = text.lines().take(MAX_LINES + 1).count();
    if count > MAX_LINES {
        let lines = text.lines().count();
        return Err(err(MAX_LINES + 1, 1, K::TooManyLines { lines, limit: MAX_LINES }));
    }
    let mut out = Vec::new();
    for (i, raw) in text.lines().enumerate() {
        let line = i + 1;
        let code = match raw.find('#') {
            Some(p) => &raw[..p],
            None => raw,
        };
        if let Some((ci, c)) = code.chars().enumerate().find(|(_, c)| !c.is_ascii()) {
            let hint = ascii_hint(c).map(str::to_string);
            return Err(err(line, ci + 1, K::NonAscii { found: c, hint }));
        }
        if code.trim().is_empty() {
            continue;
        }
        out.push(Line { line, stmt: parse_stmt(code, line)? });
    }
    Ok(out)
}

/// `s` trimmed, with the 1-based column of its first character given that
/// `s` starts at column `col`.
fn trim_at(s: &str, col: usize) -> (&str, usize) {
    let lead = s.len() - s.trim_start().len();
    (s.trim(), col + lead)
}

fn parse_stmt(code: &str, line: usize) -> Result<Stmt, ModelError> {
    let (body, col) = trim_at(code, 1);
    for (word, stop) in [("stop", true), ("mark", false)] {
        if let Some(rest) = body.strip_prefix(word) {
            let (after, acol) = trim_at(rest, col + word.len());
            if rest.starts_with([' ', '\t']) {
                if let Some(cond) = after.strip_prefix("when") {
                    if cond.is_empty() || cond.starts_with([' ', '\t']) {
                        return parse_event(cond, acol + 4, line, stop, word);
                    }
                }
                return Err(syntax(line, acol, format!("expected \"{word} when\" followed by a condition, such as \"{word} when h < 0.05\"")));
            }
        }
    }
    let bytes = body.as_bytes();
    let Some(eq) = body.find('=') else {
        if let Some(p) = body.find(['<', '>']) {
            return Err(syntax(line, col + p, "a condition needs \"stop when\" or \"mark when\" in front of it"));
        }
        return Err(syntax(line, col, "expected a statement such as \"k = 0.5\", \"dx/dt = -k*x\" or \"x(0) = 1\""));
    };
    if eq > 0 && matches!(bytes[eq - 1], b'<' | b'>' | b'!') {
        return Err(syntax(line, col + eq - 1, "a condition needs \"stop when\" or \"mark when\" in front of it"));
    }
    let (lhs, lcol) = trim_at(&body[..eq], col);
    let rhs_raw = &body[eq + 1..];
    if let Some(p) = rhs_raw.find('=') {
        return Err(syntax(line, col + eq + 1 + p, "only one \"=\" is allowed in a statement"));
    }
    let (rhs, rcol) = trim_at(rhs_raw, col + eq + 1);
    if lhs.is_empty() {
        return Err(syntax(line, col, "a name is missing before \"=\""));
    }
    let lb = lhs.as_bytes();
    if !is_ident_start(lb[0]) {
        return Err(syntax(line, lcol, "the left side of \"=\" must be a name (k = 2), a rate (dx/dt or x') or an initial value (x(0))"));
    }
    let id_len = lb.iter().take_while(|&&b| is_ident(b)).count();
    let ident = &lhs[..id_len];
    let rest = &lhs[id_len..];
    // dX/dT and dnX/dTn
    if lb[0] == b'd' && rest.trim_start().starts_with('/') {
        return parse_d_form(lhs, lcol, line, rhs, rcol);
    }
    let primes = rest.bytes().take_while(|&b| b == b'\'').count();
    let after = &rest[primes..];
    let name = format!("{ident}{}", "'".repeat(primes));
    if is_reserved(ident) {
        return Err(err(line, lcol, K::ReservedName { name: ident.to_string() }));
    }
    let value = || scan_expr(rhs, rcol, line);
    if after.trim().is_empty() {
        if primes == 0 {
            return Ok(Stmt::Def { name, col: lcol, expr: value()? });
        }
        if primes > MAX_ORDER {
            return Err(err(line, lcol, K::OrderTooHigh { order: primes.to_string(), limit: MAX_ORDER }));
        }
        return Ok(Stmt::Rate { state: ident.to_string(), col: lcol, order: primes, indep: None, expr: value()? });
    }
    let (after_t, acol) = trim_at(after, lcol + id_len + primes);
    if let Some(inner) = after_t.strip_prefix('(') {
        let Some(inner) = inner.strip_suffix(')') else {
            return Err(syntax(line, acol, "an initial value is written like \"x(0) = 1\""));
        };
        let (t0, tcol) = trim_at(inner, acol + 1);
        if t0.is_empty() {
            return Err(syntax(line, acol + 1, "the start time is missing inside the parentheses, as in \"x(0) = 1\""));
        }
        let t0 = scan_expr(t0, tcol, line)?;
        return Ok(Stmt::Init { state: name, col: lcol, t0, value: value()? });
    }
    if after_t.starts_with('"') {
        return Err(syntax(line, acol, "for a second derivative write two primes, as in x''"));
    }
    Err(syntax(line, acol, "the left side of \"=\" must be a name (k = 2), a rate (dx/dt or x') or an initial value (x(0))"))
}

/// `dX/dT = …` or `dnX/dTn = …`.
fn parse_d_form(lhs: &str, lcol: usize, line: usize, rhs: &str, rcol: usize) -> Result<Stmt, ModelError> {
    let bad = || syntax(line, lcol, "a rate is written \"dx/dt\", or \"d2x/dt2\" for a second derivative");
    let Some(slash) = lhs.find('/') else { return Err(bad()) };
    let num = lhs[..slash].trim_end();
    let (den, den_col) = trim_at(&lhs[slash + 1..], lcol + slash + 1);
    let nb = num.as_bytes();
    let digits = nb[1..].iter().take_while(|b| b.is_ascii_digit()).count();
    // The order as written; a number too long for `usize` is too high all the same.
    let written = if digits == 0 { "1" } else { &num[1..1 + digits] };
    let order: usize = written.parse().unwrap_or(usize::MAX);
    let state = &num[1 + digits..];
    if state.is_empty() || !is_ident_start(state.as_bytes()[0]) || !state.bytes().all(is_ident) {
        return Err(bad());
    }
    let Some(t) = den.strip_prefix('d') else { return Err(bad()) };
    let t = if digits == 0 {
        t
    } else {
        match t.strip_suffix(&num[1..1 + digits]) {
            Some(t) => t,
            None => {
                return Err(syntax(line, den_col, format!("the order is written on both sides, as in \"d{written}{state}/dt{written}\"")))
            }
        }
    };
    if t.is_empty() || !is_ident_start(t.as_bytes()[0]) || !t.bytes().all(is_ident) {
        return Err(bad());
    }
    if order == 0 {
        return Err(err(line, lcol, K::OrderZero { state: state.to_string(), indep: t.to_string() }));
    }
    if order > MAX_ORDER {
        return Err(err(line, lcol, K::OrderTooHigh { order: written.trim_start_matches('0').to_string(), limit: MAX_ORDER }));
    }
    if is_reserved(state) {
        return Err(err(line, lcol + 1 + digits, K::ReservedName { name: state.to_string() }));
    }
    let expr = scan_expr(rhs, rcol, line)?;
    Ok(Stmt::Rate { state: state.to_string(), col: lcol, order, indep: Some((t.to_string(), den_col + 1)), expr })
}

fn parse_event(cond: &str, col: usize, line: usize, stop: bool, word: &str) -> Result<Stmt, ModelError> {
    let (text, tcol) = trim_at(cond, col);
    if text.is_empty() {
        return Err(syntax(line, col, format!("a condition is missing after \"{word} when\", as in \"{word} when h < 0.05\"")));
    }
    let b = text.as_bytes();
    let mut found: Option<(usize, usize, &'static str)> = None;
    let mut i = 0;
    while i < b.len() {
        let (len, cmp) = match (b[i], b.get(i + 1)) {
            (b'<', Some(b'=')) => (2, "<="),
            (b'>', Some(b'=')) => (2, ">="),
            (b'=', Some(b'=')) => (2, "="),
            (b'<', _) => (1, "<"),
            (b'>', _) => (1, ">"),
            (b'=', _) => (1, "="),
            (b'!', Some(b'=')) => {
                return Err(syntax(line, tcol + i, "\"!=\" has no crossing to find; use \"=\" for a crossing in either direction"))
            }
            _ => {
                i += 1;
                continue;
            }
        };
        if found.is_some() {
            return Err(syntax(line, tcol + i, "a condition has one comparison, such as \"h < 0.05\""));
        }
        found = Some((i, len, cmp));
        i += len;
    }
    let Some((p, len, cmp)) = found else {
        return Err(syntax(line, tcol, "a condition needs a comparison: <, >, <=, >= or =, as in \"h < 0.05\""));
    };
    let (l, lc) = trim_at(&text[..p], tcol);
    let (r, rc) = trim_at(&text[p + len..], tcol + p + len);
    if l.is_empty() {
        return Err(syntax(line, tcol + p, format!("a value is missing before \"{cmp}\"")));
    }
    if r.is_empty() {
        return Err(syntax(line, tcol + p, format!("a value is missing after \"{cmp}\"")));
    }
    let lhs = scan_expr(l, lc, line)?;
    let rhs = scan_expr(r, rc, line)?;
    Ok(Stmt::Event { stop, text: text.to_string(), cmp, lhs, rhs })
}

#[derive(Clone, Copy, PartialEq)]
enum Want {
    Operand,
    Operator,
}

struct Frame {
    col: usize,
    func: Option<(&'static str, Option<usize>)>,
    commas: usize,
}

/// Check one expression (ASCII, already trimmed) that starts at column `col`
/// of `line`, and parse it into RPN.
pub fn scan_expr(text: &str, col: usize, line: usize) -> Result<Expr, ModelError> {
    let n = text.len();
    if n > MAX_EXPR_CHARS {
        return Err(err(line, col, K::ExpressionTooLong { length: n, limit: MAX_EXPR_CHARS }));
    }
    if text.is_empty() {
        return Err(syntax(line, col, "an expression is missing"));
    }
    let b = text.as_bytes();
    let mut out = String::with_capacity(n + 16);
    let mut names: Vec<NameRef> = Vec::new();
    let mut stack: Vec<Frame> = Vec::new();
    let mut want = Want::Operand;
    // The previous token's text, for hints.
    let mut prev: (usize, usize) = (0, 0);
    let mut last_op: Option<(usize, char)> = None;
    let mut i = 0;
    let at = |i: usize| col + i;
    let implicit = |prev: (usize, usize), start: usize, end: usize| {
        let hint = format!("{}*{}", &text[prev.0..prev.1], &text[start..end]);
        err(line, col + start, K::ImplicitMultiplication { hint })
    };
    while i < n {
        let c = b[i];
        if c == b' ' || c == b'\t' {
            i += 1;
            continue;
        }
        let start = i;
        if c.is_ascii_digit() || (c == b'.' && b.get(i + 1).is_some_and(u8::is_ascii_digit)) {
            let end = scan_number(text, i, line, col)?;
            if want == Want::Operator {
                return Err(implicit(prev, start, end));
            }
            let num = &text[start..end];
            if num.parse::<f64>().map_or(true, |v| !v.is_finite()) {
                return Err(err(line, at(start), K::BadNumber { text: num.to_string(), hint: Some("it is too large for a double-precision number".into()) }));
            }
            // An identifier glued to a number: `2x`.
            if end < n && is_ident_start(b[end]) {
                let e2 = end + b[end..].iter().take_while(|&&c| is_ident(c)).count();
                let hint = format!("{}*{}", num, &text[end..e2]);
                return Err(err(line, at(end), K::ImplicitMultiplication { hint }));
            }
            out.push_str(num);
            out.push(' ');
            want = Want::Operator;
            prev = (start, end);
            i = end;
            continue;
        }
        if is_ident_start(c) {
            let mut end = i + b[i..].iter().take_while(|&&c| is_ident(c)).count();
            let id_end = end;
            while end < n && b[end] == b'\'' {
                end += 1;
            }
            let mut j = end;
            while j < n && (b[j] == b' ' || b[j] == b'\t') {
                j += 1;
            }
            let is_call = j < n && b[j] == b'(';
            if want == Want::Operator {
                let e = if is_call { j + 1 } else { end };
                return Err(implicit(prev, start, e));
            }
            let name = &text[start..end];
            if is_call {
                if end != id_end {
                    return Err(syntax(line, at(id_end), "a function name cannot have a prime"));
                }
                let Some(&(fname, _, arity)) = FUNCTIONS.iter().find(|f| f.0 == name) else {
                    if let Some(&(_, now)) = RENAMED_FUNCTIONS.iter().find(|f| f.0 == name) {
                        return Err(err(line, at(start), K::RenamedFunction { name: name.to_string(), now }));
                    }
                    let suggestion = suggest(name, FUNCTIONS.iter().map(|f| f.0));
                    return Err(err(line, at(start), K::UnknownFunction { name: name.to_string(), suggestion }));
                };
                stack.push(Frame { col: at(start), func: Some((fname, arity)), commas: 0 });
                out.push_str(fname);
                out.push('(');
                want = Want::Operand;
                prev = (start, j + 1);
                i = j + 1;
                continue;
            }
            if name == "pi" || name == "e" {
                out.push_str(name);
            } else {
                out.push_str(&format!("v{}", names.len()));
                names.push(NameRef { name: name.to_string(), col: at(start) });
            }
            out.push(' ');
            want = Want::Operator;
            prev = (start, end);
            i = end;
            continue;
        }
        match c {
            b'(' => {
                if want == Want::Operator {
                    return Err(implicit(prev, start, start + 1));
                }
                stack.push(Frame { col: at(i), func: None, commas: 0 });
                out.push('(');
            }
            b')' => {
                let Some(top) = stack.pop() else {
                    return Err(err(line, at(i), K::UnbalancedParentheses { unclosed: false }));
                };
                if want == Want::Operand {
                    let right_after_open = text[prev.1..i].trim().is_empty() && text[prev.0..prev.1].ends_with('(');
                    if let (Some((fname, arity)), 0, true) = (top.func, top.commas, right_after_open) {
                        return Err(err(line, top.col, K::WrongArgumentCount { function: fname.to_string(), expected: arity_words(arity), found: 0 }));
                    }
                    return Err(syntax(line, at(i), "a value is missing before \")\""));
                }
                if let Some((fname, arity)) = top.func {
                    let found = top.commas + 1;
                    if arity.map_or(false, |a| a != found) {
                        return Err(err(line, top.col, K::WrongArgumentCount { function: fname.to_string(), expected: arity_words(arity), found }));
                    }
                }
                out.push(')');
                want = Want::Operator;
            }
            b',' => {
                match stack.last_mut() {
                    Some(Frame { func: Some(_), commas, .. }) => *commas += 1,
                    _ => return Err(syntax(line, at(i), "a comma separates the arguments of a function, but this one is outside any function call")),
                }
                if want == Want::Operand {
                    return Err(syntax(line, at(i), "a value is missing before \",\""));
                }
                out.push(',');
                want = Want::Operand;
            }
            b'+' | b'-' => {
                out.push(c as char);
                want = Want::Operand;
            }
            b'*' | b'/' | b'%' | b'^' => {
                if want == Want::Operand {
                    if c == b'*' && last_op.is_some_and(|(p, o)| o == '*' && p + 1 == i) {
                        return Err(syntax(line, at(i - 1), "powers are written with ^, as in x^2, not **"));
                    }
                    return Err(syntax(line, at(i), format!("a value is missing before \"{}\"", c as char)));
                }
                out.push(c as char);
                want = Want::Operand;
            }
            b'\'' => return Err(syntax(line, at(i), "a prime ' must follow a name, as in x'")),
            b'"' => return Err(syntax(line, at(i), "for a second derivative write two primes, as in x''")),
            b'=' | b'<' | b'>' | b'!' => return Err(syntax(line, at(i), format!("\"{}\" cannot appear inside an expression", c as char))),
            b'.' => {
                let end = i + b[i..].iter().take_while(|&&c| is_ident(c) || c == b'.').count();
                return Err(err(line, at(i), K::BadNumber { text: text[i..end.max(i + 1)].to_string(), hint: None }));
            }
            b'[' | b']' | b'{' | b'}' => return Err(syntax(line, at(i), "use round parentheses ( ) for grouping")),
            _ => return Err(err(line, at(i), K::UnexpectedCharacter { found: c as char })),
        }
        if matches!(c, b'+' | b'-' | b'*' | b'/' | b'%' | b'^') {
            last_op = Some((i, c as char));
        }
        prev = (start, start + 1);
        i += 1;
    }
    if let Some(top) = stack.last() {
        return Err(err(line, top.col, K::UnbalancedParentheses { unclosed: true }));
    }
    if want == Want::Operand {
        let what = match last_op {
            Some((p, o)) => return Err(syntax(line, at(p), format!("a value is missing after \"{o}\""))),
            None => "an expression is missing",
        };
        return Err(syntax(line, col, what));
    }
    let parsed: meval::Expr = out
        .parse()
        .map_err(|_| syntax(line, col, "this expression could not be read"))?;
    let mut rpn = Vec::with_capacity(parsed.len());
    for t in parsed.iter() {
        rpn.push(match t {
            Token::Number(v) => Tok::Num(*v),
            Token::Var(v) if v == "pi" => Tok::Num(std::f64::consts::PI),
            Token::Var(v) if v == "e" => Tok::Num(std::f64::consts::E),
            Token::Var(v) => match v.strip_prefix('v').and_then(|k| k.parse::<usize>().ok()) {
                Some(k) if k < names.len() => Tok::Name(k),
                _ => return Err(syntax(line, col, "this expression could not be read")),
            },
            Token::Unary(Operation::Minus) => Tok::Neg,
            Token::Unary(_) => continue,
            Token::Binary(o) => Tok::Bin(match o {
                Operation::Plus => Op::Add,
                Operation::Minus => Op::Sub,
                Operation::Times => Op::Mul,
                Operation::Div => Op::Div,
                Operation::Rem => Op::Rem,
                Operation::Pow => Op::Pow,
            }),
            Token::Func(name, Some(argc)) => match function(name) {
                Some((f, _)) => Tok::Call(f, *argc),
                None => return Err(syntax(line, col, "this expression could not be read")),
            },
            _ => return Err(syntax(line, col, "this expression could not be read")),
        });
    }
    Ok(Expr { col, text: text.to_string(), rpn, names })
}

fn arity_words(arity: Option<usize>) -> String {
    match arity {
        Some(n) => n.to_string(),
        None => "at least 1".to_string(),
    }
}

/// Scan a number starting at byte `i` the way meval reads one
/// (`digits[.digits][(e|E)[+|-]digits]`) and return its end, or the error
/// for a malformed one.
fn scan_number(text: &str, i: usize, line: usize, col: usize) -> Result<usize, ModelError> {
    let b = text.as_bytes();
    let n = b.len();
    let digits = |from: usize| from + b[from..].iter().take_while(|c| c.is_ascii_digit()).count();
    let junk_end = |from: usize| from + b[from..].iter().take_while(|&&c| is_ident(c) || c == b'.').count();
    let bad = |end: usize, hint: Option<&str>| {
        err(line, col + i, K::BadNumber { text: text[i..end].to_string(), hint: hint.map(str::to_string) })
    };
    if b[i] == b'.' {
        let end = junk_end(i);
        let fixed = format!("write a digit before the point, as in 0{}", &text[i..end]);
        return Err(bad(end, Some(&fixed)));
    }
    let mut j = digits(i);
    if j < n && b[j] == b'.' {
        j = digits(j + 1);
    }
    if j < n && (b[j] == b'e' || b[j] == b'E') {
        let mut k = j + 1;
        if k < n && (b[k] == b'+' || b[k] == b'-') {
            k += 1;
        }
        if k < n && b[k].is_ascii_digit() {
            j = digits(k);
        } else if k == j + 1 && k < n && is_ident(b[k]) {
            // `2exp(x)`: a number followed by a name, reported by the caller.
            return Ok(j);
        } else {
            let end = junk_end(j + 1).max(k);
            return Err(bad(end, Some("an exponent needs digits, as in 1.5e-3")));
        }
    }
    if j < n && (b[j] == b'.' || b[j].is_ascii_digit()) {
        return Err(bad(junk_end(j), None));
    }
    Ok(j)
}
