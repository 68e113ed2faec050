//! The stock list of a build: the wood samples the maker graded before
//! carving, each with species, a note of where it came from, and up to two
//! sample bars (one cut along the grain, one across). The figures
//! (density, moduli, speed of sound, radiation ratio) are worked out from
//! the bars by [`crate::acoustics::stock`] whenever they are shown; only the
//! measurements are stored.

use serde::{Deserialize, Serialize};

use super::LedgerError;
use crate::acoustics::stock::{bar_figures, grain_ratio, BarFigures, BarSample, StockError};

/// One wood sample of a build.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct StockSample {
    /// The maker's name for the sample ("billet 3, top wedge"); unique
    /// within the build.
    pub name: String,
    /// Species ("Sitka spruce").
    pub species: String,
    /// Where it came from, when cut, how stored.
    pub source_note: String,
    /// The bar cut along the grain, if measured.
    pub along_grain: Option<BarSample>,
    /// The bar cut across the grain, if measured.
    pub cross_grain: Option<BarSample>,
}

impl StockSample {
    /// The along-grain bar's figures, if it has a bar.
    pub fn along_figures(&self) -> Option<Result<BarFigures, StockError>> {
        self.along_grain.as_ref().map(bar_figures)
    }

    /// The cross-grain bar's figures, if it has a bar.
    pub fn cross_figures(&self) -> Option<Result<BarFigures, StockError>> {
        self.cross_grain.as_ref().map(bar_figures)
    }

    /// Along-grain over cross-grain Young's modulus, when both bars are
    /// measured and valid.
    pub fn grain_ratio(&self) -> Option<f64> {
        let along = self.along_figures()?.ok()?;
        let across = self.cross_figures()?.ok()?;
        Some(grain_ratio(&along, &across))
    }

    /// Checks the sample: a name, at least one bar, and every bar valid.
    pub fn validate(&self) -> Result<(), LedgerError> {
        if self.name.trim().is_empty() {
            return Err(LedgerError::EmptyName("a stock sample"));
        }
        if self.along_grain.is_none() && self.cross_grain.is_none() {
            return Err(LedgerError::Invalid(format!(
                "stock sample \"{}\" has neither an along-grain nor a cross-grain bar",
                self.name
            )));
        }
        for (which, figures) in [
            ("along-grain", self.along_figures()),
            ("cross-grain", self.cross_figures()),
        ] {
            if let Some(Err(problem)) = figures {
                return Err(LedgerError::Invalid(format!(
                    "stock sample \"{}\", {which} bar: {problem}",
                    self.name
                )));
            }
        }
        Ok(())
    }
}

/// Checks every stock sample and that their names are unique.
pub(super) fn validate_stock(stock: &[StockSample]) -> Result<(), LedgerError> {
    for (index, sample) in stock.iter().enumerate() {
        sample.validate()?;
        if stock[..index].iter().any(|s| s.name == sample.name) {
            return Err(LedgerError::Invalid(format!(
                "the build has two stock samples named \"{}\"",
                sample.name
            )));
        }
    }
    Ok(())
}
