//! Placeholder, replaced by the crate's real module tree.
#![forbid(unsafe_code)]
