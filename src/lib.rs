//! tapwright: a tap-tone workbench for stringed-instrument makers.
//!
//! Layers (see `DEVELOPERS.md`): `analysis` and `acoustics` are pure;
//! `ledger` holds the build model and its files; `capture` is the only code
//! that touches audio devices; `ui` is the eframe window; `cli` holds the
//! subcommands. `wav_io` reads and writes recordings for all of them.

pub mod acoustics;
pub mod analysis;
pub mod capture;
pub mod cli;
pub mod demo;
pub mod ledger;
pub mod report;
pub mod shapes;
pub mod ui;
pub mod wav_io;
