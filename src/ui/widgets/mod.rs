//! Small pieces of the window that more than one area draws: the level
//! meter, the spectrum plot, a plate drawn to scale with a mode's shape or
//! a carving guide over it (Shapes and Ledger).

pub mod level_meter;
pub mod plate_view;
pub mod spectrum_plot;
