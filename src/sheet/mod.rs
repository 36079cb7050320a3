//! The sheet language: parsing, lowering to our own evaluator, and exact Jacobians.
//!
//! A sheet is one statement per line; `#` starts a comment; blank lines are
//! ignored.
//!
//! ```text
//! # Settling tank drained through a bottom orifice
//! A  = 1.5                 # tank cross-section, m^2
//! a  = 0.004               # orifice area, m^2
//! g  = 9.81
//! q  = a*sqrt(2*g*h)       # depends on the state h, so it is a helper
//! dh/dt = -q/A
//! h(0) = 2
//! stop when h < 0.05
//! mark when h < 1
//! ```
//!
//! - `name = expr` is a **parameter** when `expr` is constant (it may use
//!   other parameters) and a **helper** when it depends on the independent
//!   variable or a state. Definitions may come in any order; a cycle is an
//!   error.
//! - `dX/dT = expr` is the rate of state `X`, with `T` the independent
//!   variable. `X' = expr` is the same with `t` (or the variable a `d…/d…`
//!   line declares). `X'' = expr` and `d2X/dT2 = expr` (up to order 4) make
//!   the states `X`, `X'`, …, which expressions may use.
//! - `X(t0) = expr` gives a state's initial value; all share one `t0`.
//! - `stop when COND` ends the run when COND becomes true; `mark when COND`
//!   records each time. COND is `a < b`, `a <= b`, `a > b`, `a >= b` or
//!   `a = b` (a crossing either way). The event function is `a - b`.
//! - Expressions use meval's syntax (`+ - * / % ^`, with `^`
//!   right-associative and binding tighter than unary minus, so `-x^2` is
//!   `-(x^2)`), `pi`, `e`, meval's functions (`sqrt exp ln abs`, trigonometric,
//!   hyperbolic and inverse ones, `floor ceil round signum atan2 min max`) and
//!   ours: `log` (natural), `log10`, `pow(x, y)`, `hypot(x, y)`,
//!   `clamp(x, lo, hi)` (`min(max(x, lo), hi)`), `heaviside(x)` (0 below 0, 1
//!   at or above) and `sign(x)` (-1, 0 or 1).
//!
//! [`compile`] turns the text into a [`Model`], which implements
//! [`Problem`](crate::problem::Problem). The pipeline: [`scan`] (our checks
//! with positions, then meval's RPN), [`analyze`] (names and order),
//! [`lower`] (the expression graph [`dag`], with constant folding and
//! sharing), and [`ir`] (the flat tapes the evaluator runs and a code
//! generator can translate).

pub mod analyze;
pub mod dag;
mod error;
pub mod ir;
pub mod lower;
mod model;
pub mod outline;
pub mod scan;

pub use error::{ModelError, ModelErrorKind};
pub(crate) use error::suggest;
pub use model::{Model, Param};

/// Compile a sheet into a model, or say what is wrong with it and where.
///
/// Never panics. Limits (2 000 lines, 10 000 characters per expression, 200
/// states) are checked before the work they would make slow.
pub fn compile(text: &str) -> Result<Model, ModelError> {
    let lines = scan::parse_lines(text)?;
    let sheet = analyze::analyze(lines)?;
    let cols: Vec<usize> = sheet.t0.iter().map(|(e, _)| e.col).collect();
    let lines_t0: Vec<usize> = sheet.t0.iter().map(|(_, l)| *l).collect();
    Model::build(sheet).map_err(|(line, found, first_line, first)| {
        let k = lines_t0.iter().position(|&l| l == line).unwrap_or(0);
        ModelError::new(
            line,
            cols.get(k).copied().unwrap_or(1),
            ModelErrorKind::MixedStartTime { first, first_line, found },
        )
    })
}
