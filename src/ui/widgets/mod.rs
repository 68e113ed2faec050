//! Small pieces of the window that more than one area draws.

pub mod level_meter;
pub mod spectrum_plot;
