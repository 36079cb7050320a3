//! Stiff reference problems.
