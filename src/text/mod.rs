//! Words and numbers for people, written once and used by the command line,
//! the window and the build report alike: an error as one sentence, a typed
//! number read by one rule, numbers with a true minus sign, notes and
//! cents, a forecast in words, and a pass's modes as JSON.
//!
//! Nothing here draws, prints or touches a file. It uses the pure layers
//! (`analysis::pitch`) and, for the forecast wording only, the ledger's
//! forecast types; the ledger itself never uses `text`.

pub mod forecast;
pub mod numbers;
pub mod pass_json;
pub mod pitch;
pub mod sentences;
pub mod typed;
pub mod units;

pub use numbers::{date_text, num, number_text, signed};
pub use pitch::note_text;
pub use sentences::{capitalised, error_sentence, one_sentence, sentence};
pub use typed::{parse_number, parse_optional_number, read_number, NumberProblem};
pub use units::{LengthUnit, MassUnit, TemperatureUnit, Units, VolumeUnit};
