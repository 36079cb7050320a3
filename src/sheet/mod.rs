//! The sheet language: parsing, lowering to our own evaluator, and exact Jacobians.
