//! Mode shapes from roving taps: the microphone stays put, the maker taps
//! the plate at every point of a grid, and each mode's signed shape over
//! the plate comes out of the taps (by vibro-acoustic reciprocity the sound
//! of mode k in a tap at point j is φₖ(j)·Cₖ, with Cₖ the same for every
//! point). Pure: no files, no devices, no window.
//!
//! - [`outline`]: plate outlines (rectangle, violin, guitar) in mm.
//! - [`grid`]: tap points over an outline and the order to visit them.
//! - [`survey`]: a roving-tap session in progress (point to tap next,
//!   2–4 good taps per point, any point tapped again, progress).
//! - [`estimate`]: from the taps at every point to each mode's signed
//!   shape, with per-point spreads and uncertainties and a quality figure
//!   per mode (inside: `poles` finds the pass's modes, `amplitudes` fits
//!   each tap's complex amplitudes with the poles fixed, `align` finds
//!   each tap's delay and each mode's reference phase).
//! - [`surface`]: a smooth surface through a mode's values (a smoothing
//!   thin-plate fit in a polynomial space), sampled on a raster.
//! - [`contour`]: the surface's zero lines (nodal lines), by marching
//!   squares, cut at the outline.
//! - [`drawing`]: one mode ready to draw: surface, raster, nodal lines.
//! - [`carving`]: the carving guide: how a small, even thinning of each
//!   part of the plate moves a mode (Rayleigh quotient), and where it
//!   moves one mode and spares another.
//! - [`plate`]: a thin-plate model (Rayleigh–Ritz) for the tests and the
//!   demo set.
//! - [`arching`]: the membrane stiffness an arch adds to the plate model
//!   (a shallow shell), which puts a violin plate's ring mode near an
//!   octave above its X mode.
//! - [`synthetic`]: roving taps made from known shapes (force pulse,
//!   click, delays, room noise).
//! - [`demo_set`]: the bundled roving-tap demo set (an invented arched
//!   violin top), made in memory.

mod align;
mod amplitudes;
pub mod arching;
mod basis;
pub mod carving;
pub mod contour;
pub mod demo_set;
pub mod drawing;
pub mod estimate;
pub mod grid;
mod legendre;
mod material;
pub mod outline;
pub mod plate;
mod poles;
pub mod surface;
pub mod survey;
pub mod synthetic;

pub use arching::Arch;
pub use basis::Derivatives;
pub use carving::{CarvingMap, TwoModeGuide, CARVING_CAUTION, COVERAGE_REACH};
pub use contour::{zero_lines, Polyline};
pub use drawing::{weights_from_uncertainties, ModeDrawing};
pub use estimate::{
    estimate_shapes, modal_assurance, roving_trigger_settings, taps_in_recording, MapPoint,
    ModeShape, PointTaps, RecordingTaps, ShapeError, ShapeMap, ShapeSettings,
    CERTAIN_SIGN_UNCERTAINTIES,
};
pub use grid::{tap_grid, GridError, TapPoint};
pub use outline::{BoutWidths, Outline, OutlineError, OutlineShape};
pub use plate::{
    BendingStiffness, Edges, ModeSurface, PlateError, PlateMaterial, PlateMode, PlateModel,
};
pub use surface::{FittedSurface, Raster, ShapeSurface, SurfaceError, DEFAULT_SMOOTHING};
pub use survey::{Survey, SurveyError, TapOutcome};
