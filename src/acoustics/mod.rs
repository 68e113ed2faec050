//! Pure physics of the air in a body: speed of sound, the cavity
//! (Helmholtz) model with its openings, the inverse solve, the coupled
//! air/plate correction and the air check against a measured A0; and of
//! the wood: moduli of sample bars from their taps (`stock`).
//!
//! No files, no devices, no window. Lengths at the edges are in the units a
//! maker uses (`diameter_mm`, `volume_m3` with litre helpers); inside, metres.
//! Sources for every formula are in DEVELOPERS.md, "Sources" and beside
//! the code.
//!
//! Typical use:
//!
//! ```
//! use tapwright::acoustics::{estimate_cavity, CavityGeometry, Opening};
//! let mut geometry = CavityGeometry::new(13.0e-3, vec![Opening::Round { diameter_mm: 86.0 }]);
//! geometry.wall_thickness_mm = 2.5;
//! let estimate = estimate_cavity(&geometry).unwrap();
//! assert!(estimate.helmholtz_hz > 120.0 && estimate.helmholtz_hz < 150.0);
//! ```

pub mod cavity;
pub mod coupled;
pub mod solve;
pub mod speed_of_sound;
pub mod stock;

pub use cavity::{
    estimate_cavity, opening_conductance_m, CavityEstimate, CavityGeometry, EndCorrection, Opening,
    OpeningEstimate, Sensitivities, MAX_OPENING_SIZE_MM, MAX_THICKNESS_MM, MAX_VOLUME_M3,
    MIN_OPENING_SIZE_MM, MIN_VOLUME_M3,
};
pub use coupled::{compare_with_measured, coupled_correction, AirCheck, CoupledCorrection};
pub use solve::{solve_round_diameter_mm, solve_slot_length_mm, solve_volume_m3};
pub use speed_of_sound::{speed_of_sound_m_s, AirConditions, SpeedOfSoundModel};
pub use stock::{bar_figures, BarFigures, BarMode, BarSample, StockError};

/// Cubic metres in one litre.
pub const M3_PER_LITRE: f64 = 1e-3;
/// Cubic metres in one cubic centimetre.
pub const M3_PER_CM3: f64 = 1e-6;
/// Cubic metres in one cubic inch (exactly 2.54³ cm³).
pub const M3_PER_IN3: f64 = 16.387_064e-6;

/// Everything the acoustics layer can refuse, each as one sentence that
/// names the offending value.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum AcousticsError {
    /// Air temperature outside the model's range.
    #[error("the air temperature {temp_c} °C is outside the {model} model's range of {min_c} to {max_c} °C")]
    TemperatureOutOfRange {
        temp_c: f64,
        model: &'static str,
        min_c: f64,
        max_c: f64,
    },
    /// Relative humidity outside 0–100 %.
    #[error("the relative humidity {relative_humidity_pct} % is outside 0 to 100 %")]
    HumidityOutOfRange { relative_humidity_pct: f64 },
    /// Barometric pressure outside the accepted range.
    #[error("the air pressure {} kPa is outside the accepted 50 to 120 kPa", .pressure_pa / 1000.0)]
    PressureOutOfRange { pressure_pa: f64 },
    /// CO2 concentration outside 0–10 000 ppm.
    #[error("the CO2 concentration {co2_ppm} ppm is outside 0 to 10 000 ppm")]
    Co2OutOfRange { co2_ppm: f64 },
    /// Cavity volume zero, negative, not a number, or absurd.
    #[error("the cavity volume {volume_l} L is outside the accepted 0.001 to 1000 L")]
    VolumeOutOfRange { volume_l: f64 },
    /// A cavity with no openings has no Helmholtz resonance.
    #[error("the cavity has no openings, so it has no Helmholtz resonance")]
    NoOpenings,
    /// One size of one opening is zero, negative, not a number, or absurd.
    #[error(
        "opening {opening}: the {dimension} {value_mm} mm is outside the accepted 0.1 to 1000 mm"
    )]
    OpeningSizeOutOfRange {
        /// 1-based position of the opening in the list.
        opening: usize,
        /// Which size ("diameter", "length", "width", "mean width").
        dimension: &'static str,
        value_mm: f64,
    },
    /// A slot whose width is not smaller than its length.
    #[error("opening {opening}: a slot's length ({length_mm} mm) must be larger than its mean width ({mean_width_mm} mm); describe it as an oval instead")]
    SlotNotSlender {
        opening: usize,
        length_mm: f64,
        mean_width_mm: f64,
    },
    /// Wall thickness at the openings negative, not a number, or absurd.
    #[error("the wall thickness {thickness_mm} mm is outside the accepted 0 to 100 mm")]
    ThicknessOutOfRange { thickness_mm: f64 },
    /// Openings larger in total than a body of this volume can hold.
    #[error("the openings' total area {total_area_cm2:.1} cm² is larger than a {volume_l} L body can hold (at most {limit_cm2:.1} cm², the area of one face of a cube of that volume)")]
    OpeningsTooLarge {
        total_area_cm2: f64,
        limit_cm2: f64,
        volume_l: f64,
    },
    /// A frequency given by the user (target, measured, coupled) is not a
    /// positive finite number or is absurd.
    #[error("the {what} {value_hz} Hz is not a frequency between 1 and 20 000 Hz")]
    FrequencyOutOfRange { what: &'static str, value_hz: f64 },
    /// The inverse solve cannot reach the target.
    #[error("no {what} gives {target_hz} Hz: within the accepted sizes this cavity reaches only {lowest_hz:.2} to {highest_hz:.2} Hz")]
    TargetUnreachable {
        what: &'static str,
        target_hz: f64,
        lowest_hz: f64,
        highest_hz: f64,
    },
    /// Coupled correction: f− must be below f+.
    #[error(
        "the lower coupled resonance {f_minus_hz} Hz must be below the upper one {f_plus_hz} Hz"
    )]
    CoupledPairOutOfOrder { f_minus_hz: f64, f_plus_hz: f64 },
    /// Coupled correction: the sealed-hole plate resonance must lie between
    /// the two coupled resonances (the two-oscillator model requires it).
    #[error("the sealed-hole plate resonance {f_sealed_hz} Hz must lie between the coupled resonances {f_minus_hz} and {f_plus_hz} Hz for the two-oscillator model")]
    SealedOutsidePair {
        f_sealed_hz: f64,
        f_minus_hz: f64,
        f_plus_hz: f64,
    },
}

/// Checks that a user-given frequency is finite and within 1 Hz – 20 kHz.
pub(crate) fn check_frequency_hz(what: &'static str, value_hz: f64) -> Result<f64, AcousticsError> {
    if value_hz.is_finite() && (1.0..=20_000.0).contains(&value_hz) {
        Ok(value_hz)
    } else {
        Err(AcousticsError::FrequencyOutOfRange { what, value_hz })
    }
}
