//! placeholder, replaced by its issue
