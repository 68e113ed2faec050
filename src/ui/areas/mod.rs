//! The areas of the window, one module each. An area draws from what it is
//! given (its own view state and an [`AreaContext`](crate::ui::context::AreaContext))
//! and asks for changes by pushing commands; no area imports another area
//! or the shell.

pub mod air;
pub mod drive;
pub mod ledger;
pub mod listen;
pub mod stock;
