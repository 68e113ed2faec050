//! Display spectrum (being built).
#[derive(Clone, Debug)]
pub struct DisplaySpectrum {}
