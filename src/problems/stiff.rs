//! Stiff reference problems.

use super::TestProblem;

/// The stiff problems of the shared set.
pub fn all() -> Vec<TestProblem> {
    Vec::new()
}
