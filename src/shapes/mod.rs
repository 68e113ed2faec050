//! Mode shapes from roving taps: the microphone stays put, the maker taps
//! the plate at every point of a grid, and each mode's signed shape over
//! the plate comes out of the taps (by vibro-acoustic reciprocity the sound
//! of mode k in a tap at point j is φₖ(j)·Cₖ, with Cₖ the same for every
//! point). Pure: no files, no devices, no window.
//!
//! - [`outline`]: plate outlines (rectangle, violin, guitar) in mm.
//! - [`plate`]: a thin-plate model (Rayleigh–Ritz) for the tests and the
//!   demo set.

mod basis;
mod legendre;
pub mod outline;
pub mod plate;

pub use basis::Derivatives;
pub use outline::{BoutWidths, Outline, OutlineError, OutlineShape};
pub use plate::{BendingStiffness, Edges, PlateError, PlateMaterial, PlateMode, PlateModel};
