//! The build ledger: builds, parts and passes; label sets and how labels
//! carry over from pass to pass; targets and forecasts; RON files (atomic,
//! versioned) and CSV export.
//!
//! The window and the command line change a build only through the commands
//! on [`Build`] and [`Part`] (`add_part`, `record_pass`, `set_label`,
//! `confirm_label`, `set_target` ...), read it through their accessors, and
//! keep it on disk with [`store::load`] and [`store::save`].

pub mod carry_over;
pub mod compare;
pub mod csv;
pub mod forecast;
pub mod from_analysis;
pub mod labels;
pub mod model;
pub mod schema_v1;
pub mod schema_v2;
pub mod schema_v3;
pub mod shape_map;
pub mod spectrum;
pub mod stock;
pub mod store;
pub mod time;

pub use carry_over::{CarriedLabel, CarryOver};
pub use forecast::{FallbackReason, Forecast, ForecastMethod, ForecastWarning, ThicknessForecast};
pub use model::preset_labels;
pub use model::{
    Build, Family, FrequencyChange, LabelPoint, MeasuredMode, ModeLabel, Part, PartKind, Pass,
    PassChange, PassInput, PassModeRecord, PassOutcome, ThicknessReading, SCHEMA_VERSION,
};
pub use shape_map::{StoredModeShape, StoredShapeMap, StoredTapPoint};
pub use spectrum::{SpectrumError, StoredSpectrum};
pub use stock::StockSample;
pub use store::StoreError;
pub use time::Timestamp;

/// What a command on the ledger can refuse.
#[derive(Clone, Debug, PartialEq, thiserror::Error)]
pub enum LedgerError {
    /// A name that must not be empty is.
    #[error("{0} needs a name")]
    EmptyName(&'static str),
    /// A second part with the same name.
    #[error("the build already has a part named \"{0}\"")]
    DuplicatePart(String),
    /// No part of that name.
    #[error("the build has no part named \"{0}\"")]
    NoSuchPart(String),
    /// No pass of that number.
    #[error("part \"{part}\" has no pass {pass}")]
    NoSuchPass {
        /// The part.
        part: String,
        /// The pass number asked for.
        pass: u32,
    },
    /// No mode at that index (or no label on it, for a confirmation).
    #[error("pass {pass} has no labelled mode number {index}")]
    NoSuchMode {
        /// The pass.
        pass: u32,
        /// The mode index asked for.
        index: usize,
    },
    /// A label the part does not offer.
    #[error("part \"{part}\" does not have \"{label}\" among its labels")]
    UnknownLabel {
        /// The part.
        part: String,
        /// The label.
        label: String,
    },
    /// A value that must be finite and positive is not.
    #[error("{what} is {value} {unit}; it must be a positive number")]
    NotPositive {
        /// What the value is, with where it is.
        what: String,
        /// The value given.
        value: f64,
        /// Its unit.
        unit: &'static str,
    },
    /// Any other broken rule, described in full.
    #[error("{0}")]
    Invalid(String),
}
