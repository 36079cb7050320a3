//! Nonstiff reference problems.

use super::TestProblem;

/// The nonstiff problems of the shared set.
pub fn all() -> Vec<TestProblem> {
    Vec::new()
}
