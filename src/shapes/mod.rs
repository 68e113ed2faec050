//! Mode shapes from roving taps: the microphone stays put, the maker taps
//! the plate at every point of a grid, and each mode's signed shape over
//! the plate comes out of the taps (by vibro-acoustic reciprocity the sound
//! of mode k in a tap at point j is φₖ(j)·Cₖ, with Cₖ the same for every
//! point). Pure: no files, no devices, no window.
//!
//! - [`outline`]: plate outlines (rectangle, violin, guitar) in mm.
//! - [`grid`]: tap points over an outline and the order to visit them.
//! - [`estimate`]: from the taps at every point to each mode's signed
//!   shape, with per-point spreads and uncertainties and a quality figure
//!   per mode (inside: `poles` finds the pass's modes, `amplitudes` fits
//!   each tap's complex amplitudes with the poles fixed, `align` finds
//!   each tap's delay and each mode's reference phase).
//! - [`plate`]: a thin-plate model (Rayleigh–Ritz) for the tests and the
//!   demo set.
//! - [`synthetic`]: roving taps made from known shapes (force pulse,
//!   click, delays, room noise).

mod align;
mod amplitudes;
mod basis;
pub mod estimate;
pub mod grid;
mod legendre;
pub mod outline;
pub mod plate;
mod poles;
pub mod synthetic;

pub use basis::Derivatives;
pub use estimate::{
    estimate_shapes, modal_assurance, roving_trigger_settings, taps_in_recording, MapPoint,
    ModeShape, PointTaps, RecordingTaps, ShapeError, ShapeMap, ShapeSettings,
};
pub use grid::{tap_grid, GridError, TapPoint};
pub use outline::{BoutWidths, Outline, OutlineError, OutlineShape};
pub use plate::{BendingStiffness, Edges, PlateError, PlateMaterial, PlateMode, PlateModel};
