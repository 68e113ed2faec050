//! Helpers shared by the test files that `mod common;` them.

pub mod encoded;
