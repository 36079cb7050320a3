//! What a sheet says, read by the solver's own parser for those who show it:
//! the start time, the parameters with their values and lines, the names of
//! the states and helpers. The page builds its sliders and output grid from
//! this, so that the sheet language is parsed in one place only.

use super::scan::{self, Stmt, Tok};
use super::{compile, ModelError};
use crate::problem::Problem;
use serde::Serialize;

/// A sheet's outline (see [`outline`]).
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Outline {
    /// The start of the run: the value of the initial values' `t0`
    /// (an expression, such as `t0 = 6` with `y(t0) = 1`, is evaluated), or 0.
    pub start: f64,
    /// The independent variable's name.
    pub independent: String,
    /// The parameters, in sheet order.
    pub params: Vec<ParamLine>,
    /// The states, in order, with their primes (`x'`).
    pub states: Vec<String>,
    /// The helpers, in order.
    pub helpers: Vec<String>,
}

/// One parameter of a sheet.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct ParamLine {
    /// Its name.
    pub name: String,
    /// Its value (evaluated when it is defined from other parameters).
    pub value: f64,
    /// The line that defines it, 1-based.
    pub line: usize,
    /// When its definition is a plain number (`k = 0.5`, `k = -2e3`): that
    /// number as written, which a slider may rewrite in place.
    pub literal: Option<Literal>,
}

/// A number as written in the sheet.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Literal {
    /// Where it starts in its line, 0-based, counted as a JS string counts
    /// (UTF-16 units; a byte-order mark opening the sheet counts on line 1).
    pub index: usize,
    /// The text as written.
    pub text: String,
}

/// Read `text` as the solver does and outline it, or say what is wrong with
/// it and where (the same error as [`compile`]). Never panics.
pub fn outline(text: &str) -> Result<Outline, ModelError> {
    let model = compile(text)?;
    // The sheet compiled, so it parses; its definitions give the literals.
    // Code is ASCII, so a column counts bytes, chars and UTF-16 units alike.
    let lines = scan::parse_lines(text)?;
    let bom = usize::from(text.starts_with('\u{FEFF}'));
    let literal = |line: usize| {
        lines.iter().find(|l| l.line == line).and_then(|l| match &l.stmt {
            Stmt::Def { expr, .. } if is_number(&expr.rpn) => {
                let index = expr.col - 1 + if line == 1 { bom } else { 0 };
                Some(Literal { index, text: expr.text.clone() })
            }
            _ => None,
        })
    };
    Ok(Outline {
        start: model.t0(),
        independent: model.independent().to_string(),
        params: model
            .params()
            .iter()
            .map(|p| ParamLine { name: p.name.clone(), value: p.value, line: p.line, literal: literal(p.line) })
            .collect(),
        states: model.state_names().to_vec(),
        helpers: model.helper_names().to_vec(),
    })
}

/// Whether an expression is one number, perhaps negated.
fn is_number(rpn: &[Tok]) -> bool {
    matches!(rpn, [Tok::Num(_)] | [Tok::Num(_), Tok::Neg])
}
