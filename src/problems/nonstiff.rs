//! Non-stiff reference problems.
