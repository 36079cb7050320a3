//! Model errors: what went wrong in a sheet, and where.

use std::fmt;

/// An error in a sheet, with the place it was found.
///
/// Lines and columns are 1-based; columns count characters, so a column points
/// at the same place an editor shows.
#[derive(Clone, Debug, PartialEq)]
pub struct ModelError {
    /// Line of the sheet, 1-based.
    pub line: usize,
    /// Column within the line, 1-based, in characters.
    pub column: usize,
    /// What went wrong.
    pub kind: ModelErrorKind,
}

/// The kinds of mistakes a sheet can contain.
#[derive(Clone, Debug, PartialEq)]
pub enum ModelErrorKind {
    /// A name that is not a state, parameter, helper, constant or the
    /// independent variable.
    UnknownName {
        /// The name as written.
        name: String,
        /// The closest known name, when one is close enough.
        suggestion: Option<String>,
    },
    /// A function that the sheet language does not have.
    UnknownFunction {
        /// The name as written.
        name: String,
        /// The closest known function, when one is close enough.
        suggestion: Option<String>,
    },
    /// A function called by the name an earlier version of the language gave
    /// it, e.g. `step(x)`, now `heaviside(x)`.
    RenamedFunction {
        /// The old name as written.
        name: String,
        /// Its name now.
        now: &'static str,
    },
    /// A state with no initial value.
    MissingInitialValue {
        /// The state, e.g. `x'`.
        state: String,
    },
    /// A state given two initial values.
    DuplicateInitialValue {
        /// The state.
        state: String,
        /// Line of the first initial value.
        first_line: usize,
    },
    /// An initial value for something that is not a state (no rate equation
    /// makes it one).
    NotAState {
        /// The name as written, e.g. `v` or `x'`.
        name: String,
        /// Which states there are of that name, or a close state name.
        suggestion: Option<String>,
    },
    /// A name defined twice.
    DuplicateDefinition {
        /// The name.
        name: String,
        /// Line of the first definition.
        first_line: usize,
    },
    /// A second rate equation for a state that already has one: the same
    /// equation twice (`x' = …` on two lines), or two orders for one state,
    /// as in `x'' = …` and `x' = …`, where the second-order equation already
    /// makes `x` and `x'` its states.
    RateGivenTwice {
        /// The state's base name, without primes.
        state: String,
        /// The order of the equation here (`2` for `x''`).
        order: usize,
        /// Line of the first equation for the state.
        first_line: usize,
        /// The order of the first equation.
        first_order: usize,
    },
    /// Definitions that depend on each other in a circle.
    HelperCycle {
        /// The names on the cycle, in order; the first depends on the second, and so on,
        /// and the last on the first.
        names: Vec<String>,
    },
    /// A parenthesis without its partner.
    UnbalancedParentheses {
        /// `true` when an opening `(` is never closed, `false` for a `)` with no `(`.
        unclosed: bool,
    },
    /// A function called with the wrong number of arguments.
    WrongArgumentCount {
        /// The function.
        function: String,
        /// How many it takes, in words, e.g. `1` or `at least 1`.
        expected: String,
        /// How many were given.
        found: usize,
    },
    /// Two values side by side with no operator, as in `2x`.
    ImplicitMultiplication {
        /// What to write instead, e.g. `2*x`.
        hint: String,
    },
    /// The sheet has no statements at all.
    EmptySheet,
    /// The sheet has statements but no rate equation.
    NoRateEquations,
    /// Two different independent variables, as in `dx/dt` and `dy/ds`.
    MixedIndependentVariable {
        /// The one declared first.
        first: String,
        /// Line where it was declared.
        first_line: usize,
        /// The different one found here.
        found: String,
    },
    /// Initial values given at different start times.
    MixedStartTime {
        /// The start time used first.
        first: f64,
        /// Line where it was used.
        first_line: usize,
        /// The different start time found here.
        found: f64,
    },
    /// A number that does not parse, e.g. `1.2.3` or `.5`.
    BadNumber {
        /// The text as written.
        text: String,
        /// A note on how to write it, when there is one.
        hint: Option<String>,
    },
    /// A non-ASCII character where the language needs plain ASCII.
    NonAscii {
        /// The character found.
        found: char,
        /// The ASCII to write instead, when it is a known look-alike.
        hint: Option<String>,
    },
    /// A character that has no meaning in the language, e.g. `$` or `;`.
    UnexpectedCharacter {
        /// The character found.
        found: char,
    },
    /// The expression or statement is not well formed.
    Syntax {
        /// What was expected, in plain words.
        expected: String,
    },
    /// A value that must be a constant depends on a state, a helper or the
    /// independent variable.
    NotConstant {
        /// What must be constant, e.g. `the initial value of h`.
        what: String,
        /// The offending name.
        name: String,
    },
    /// A name that the language keeps for itself (a function, `pi`, `e`).
    ReservedName {
        /// The name.
        name: String,
    },
    /// A derivative of order 0 (`d0x/dt0`), which is the state itself.
    OrderZero {
        /// The state.
        state: String,
        /// The independent variable written below it.
        indep: String,
    },
    /// A derivative of higher order than the language allows.
    OrderTooHigh {
        /// The order as written (all its digits, however many).
        order: String,
        /// The highest allowed.
        limit: usize,
    },
    /// More states than the language allows.
    TooManyStates {
        /// The limit.
        limit: usize,
    },
    /// An expression longer than the language allows.
    ExpressionTooLong {
        /// Its length in characters.
        length: usize,
        /// The limit.
        limit: usize,
    },
    /// More lines than the language allows.
    TooManyLines {
        /// The number of lines.
        lines: usize,
        /// The limit.
        limit: usize,
    },
}

impl ModelError {
    /// An error at `line`, `column`.
    pub fn new(line: usize, column: usize, kind: ModelErrorKind) -> Self {
        ModelError { line, column, kind }
    }

    /// A plain-English message that says what went wrong and where, e.g.
    /// `line 5, column 12: unknown name "hh"; did you mean "h"?`.
    pub fn message(&self) -> String {
        format!("line {}, column {}: {}", self.line, self.column, self.kind.describe())
    }
}

impl ModelErrorKind {
    /// What went wrong, in plain English, without the place.
    pub fn describe(&self) -> String {
        use ModelErrorKind::*;
        let mean = |s: &Option<String>| match s {
            Some(s) => format!("; did you mean \"{s}\"?"),
            None => String::new(),
        };
        match self {
            UnknownName { name, suggestion } => format!("unknown name \"{name}\"{}", mean(suggestion)),
            UnknownFunction { name, suggestion } => {
                format!("unknown function \"{name}\"{}", mean(suggestion))
            }
            RenamedFunction { name, now } => format!(
                "the function \"{name}\" is now called \"{now}\", with the same meaning: write {now}(…) here"
            ),
            MissingInitialValue { state } => format!(
                "the state \"{state}\" has no initial value; add a line such as \"{}(0) = 1\"",
                state
            ),
            DuplicateInitialValue { state, first_line } => format!(
                "the state \"{state}\" has two initial values; the first is on line {first_line}"
            ),
            NotAState { name, suggestion } => {
                let tail = match suggestion {
                    Some(s) => format!("; did you mean \"{s}\"?"),
                    None => String::new(),
                };
                format!("\"{name}\" is not a state: no rate equation defines it, so it cannot have an initial value{tail}")
            }
            DuplicateDefinition { name, first_line } => {
                format!("\"{name}\" is defined twice; the first definition is on line {first_line}")
            }
            RateGivenTwice { state, order, first_line, first_order } => {
                let lhs = |k: usize| format!("{state}{}", "'".repeat(k));
                if order == first_order {
                    format!("\"{state}\" has two rate equations; the first is on line {first_line}; keep one of the two")
                } else {
                    let states: Vec<String> = (0..*first_order).map(|k| format!("\"{}\"", lhs(k))).collect();
                    let nth = ["first", "second", "third", "fourth"].get(first_order.wrapping_sub(1)).copied();
                    let what = match nth {
                        Some(w) => format!("{w}-order equation"),
                        None => format!("equation of order {first_order}"),
                    };
                    let its = if *first_order == 1 { "its state" } else { "its states" };
                    format!(
                        "\"{}\" clashes with the {what} for \"{state}\" on line {first_line} (\"{}\"), which already makes {} {its}; a state has one rate equation, so keep one of the two",
                        lhs(*order),
                        lhs(*first_order),
                        states.join(" and "),
                    )
                }
            }
            HelperCycle { names } => {
                let mut ring = names.clone();
                if let Some(first) = names.first() {
                    ring.push(first.clone());
                }
                format!("these definitions depend on each other in a circle: {}", ring.join(" -> "))
            }
            UnbalancedParentheses { unclosed: true } => {
                "unbalanced parentheses: this \"(\" is never closed".to_string()
            }
            UnbalancedParentheses { unclosed: false } => {
                "unbalanced parentheses: this \")\" has no matching \"(\"".to_string()
            }
            WrongArgumentCount { function, expected, found } => format!(
                "the function \"{function}\" takes {expected} argument{}, but {found} {} given",
                if expected == "1" { "" } else { "s" },
                if *found == 1 { "was" } else { "were" }
            ),
            ImplicitMultiplication { hint } => {
                format!("missing operator: multiplication must be written out, as in \"{hint}\"")
            }
            EmptySheet => "the sheet is empty: write at least one rate equation, such as \"dx/dt = -x\", and an initial value, such as \"x(0) = 1\"".to_string(),
            NoRateEquations => "the sheet has no rate equation; write one such as \"dx/dt = -x\"".to_string(),
            MixedIndependentVariable { first, first_line, found } => format!(
                "the independent variable is \"{first}\" (line {first_line}), but here it is \"{found}\"; use one independent variable throughout"
            ),
            MixedStartTime { first, first_line, found } => format!(
                "all initial values must be given at the same start; line {first_line} starts at {first}, this one at {found}"
            ),
            BadNumber { text, hint } => match hint {
                Some(h) => format!("the number \"{text}\" does not parse; {h}"),
                None => format!("the number \"{text}\" does not parse"),
            },
            NonAscii { found, hint } => match hint {
                Some(h) => format!(
                    "the character \"{found}\" (U+{:04X}) is not plain ASCII; write \"{h}\" instead",
                    *found as u32
                ),
                None => format!(
                    "the character \"{found}\" (U+{:04X}) is not plain ASCII; names and operators must be plain ASCII (comments after # may use any characters)",
                    *found as u32
                ),
            },
            UnexpectedCharacter { found } => format!("the character \"{found}\" has no meaning here"),
            Syntax { expected } => expected.clone(),
            NotConstant { what, name } => format!(
                "{what} must be a constant, but it uses \"{name}\", which changes during the run"
            ),
            ReservedName { name } => {
                format!("\"{name}\" is a built-in name and cannot be defined; choose another name")
            }
            OrderZero { state, indep } => format!(
                "a derivative of order 0 is \"{state}\" itself, not a rate; write \"d{state}/d{indep}\" for its rate, or \"d2{state}/d{indep}2\" for its second derivative"
            ),
            OrderTooHigh { order, limit } => {
                format!("a derivative of order {order} is too high; the highest allowed is {limit}")
            }
            TooManyStates { limit } => format!("the sheet has more than {limit} states"),
            ExpressionTooLong { length, limit } => format!(
                "this expression has {length} characters; the limit is {limit}"
            ),
            TooManyLines { lines, limit } => {
                format!("the sheet has {lines} lines; the limit is {limit}")
            }
        }
    }
}

impl fmt::Display for ModelError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(&self.message())
    }
}

impl std::error::Error for ModelError {}

/// The closest of `candidates` to `name` by edit distance, when it is close
/// enough to be a likely typo.
pub(crate) fn suggest<'a>(name: &str, candidates: impl IntoIterator<Item = &'a str>) -> Option<String> {
    let limit = match name.chars().count() {
        0..=2 => 1,
        3..=5 => 2,
        _ => 3,
    };
    let mut best: Option<(usize, &str)> = None;
    for c in candidates {
        if c == name {
            continue;
        }
        let d = edit_distance(&name.to_ascii_lowercase(), &c.to_ascii_lowercase());
        if d <= limit && best.map_or(true, |(bd, _)| d < bd) {
            best = Some((d, c));
        }
    }
    best.map(|(_, c)| c.to_string())
}

/// Levenshtein distance, counting a swap of two neighbours as one edit.
fn edit_distance(a: &str, b: &str) -> usize {
    let a: Vec<char> = a.chars().collect();
    let b: Vec<char> = b.chars().collect();
    // Names are at most a few dozen characters; beyond that no suggestion matters.
    if a.len() > 64 || b.len() > 64 {
        return usize::MAX;
    }
    let w = b.len() + 1;
    let mut d = vec![0usize; (a.len() + 1) * w];
    for i in 0..=a.len() {
        d[i * w] = i;
    }
    for j in 0..=b.len() {
        d[j] = j;
    }
    for i in 1..=a.len() {
        for j in 1..=b.len() {
            let cost = usize::from(a[i - 1] != b[j - 1]);
            let mut v = (d[(i - 1) * w + j] + 1).min(d[i * w + j - 1] + 1).min(d[(i - 1) * w + j - 1] + cost);
            if i > 1 && j > 1 && a[i - 1] == b[j - 2] && a[i - 2] == b[j - 1] {
                v = v.min(d[(i - 2) * w + j - 2] + 1);
            }
            d[i * w + j] = v;
        }
    }
    d[a.len() * w + b.len()]
}
