//! tapwright: a tap-tone workbench for stringed-instrument makers.
//!
//! Layers (see `DEVELOPERS.md`, "Layout"): `analysis` and `acoustics` are
//! pure; `ledger` holds the build model and its files; `audio` is the only
//! code that touches audio devices (input and output); `text` words
//! messages and numbers for people; `report` writes the build report; `ui`
//! is the eframe window; `cli` holds the subcommands. `wav_io` reads and
//! writes recordings and `atomic_file` writes every file whole or not at
//! all.

pub mod acoustics;
pub mod analysis;
pub mod atomic_file;
pub mod audio;
pub mod cli;
pub mod demo;
pub mod ledger;
pub mod report;
pub mod shapes;
pub mod text;
pub mod ui;
pub mod wav_io;
