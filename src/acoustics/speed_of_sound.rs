//! Speed of sound in air from temperature, humidity, pressure and CO2.
//!
//! Two models:
//!
//! - [`SpeedOfSoundModel::Cramer`]: O. Cramer, J. Acoust. Soc. Am. 93(5):
//!   2510–2516, 1993, the 16-coefficient polynomial (valid 0–30 °C). The
//!   water-vapour mole fraction comes from the relative humidity through the
//!   saturation vapour pressure of R. S. Davis, Metrologia 29:67–70, 1992
//!   (the revised Giacomo equation) and the enhancement factor
//!   f = 1.00062 + 3.14e-8·p + 5.6e-7·t² used in Cramer's appendix.
//! - [`SpeedOfSoundModel::Iso9613`]: ISO 9613-1:1993, c = 343.2·√(T/293.15).
//!   Temperature only; humidity and pressure are ignored.
//!
//! Outside 0–30 °C the Cramer model refuses with
//! [`AcousticsError::TemperatureOutOfRange`] rather than quietly switching
//! model: the caller (window or command line) names the ISO model as the way
//! out, and the user chooses.

use serde::{Deserialize, Serialize};

use super::AcousticsError;

/// 0 °C in kelvin.
pub const ZERO_CELSIUS_K: f64 = 273.15;

/// Standard atmosphere, pascals.
pub const STANDARD_PRESSURE_PA: f64 = 101_325.0;

/// CO2 mole fraction assumed when none is given: 400 ppm (the value the
/// reference check values in DEVELOPERS.md, "Sources" are computed with).
pub const DEFAULT_CO2_PPM: f64 = 400.0;

/// Temperature range of Cramer's polynomial, °C.
pub const CRAMER_TEMP_RANGE_C: (f64, f64) = (0.0, 30.0);

/// Temperature range accepted for the ISO 9613-1 form, °C (the range ISO
/// 9613-1 tabulates its atmospheric data for).
pub const ISO9613_TEMP_RANGE_C: (f64, f64) = (-20.0, 50.0);

/// Pressure range accepted, pascals. Cramer states 75–102 kPa; his pressure
/// terms are tiny (about 0.02 m/s over the whole range), so tapwright accepts
/// 50–120 kPa, which covers any workshop from high altitude to a deep valley.
pub const PRESSURE_RANGE_PA: (f64, f64) = (50_000.0, 120_000.0);

/// Cramer 1993, coefficients a0…a15 (as listed in DEVELOPERS.md, "Sources").
const CRAMER_A: [f64; 16] = [
    331.5024, 0.603055, -5.28e-4, 51.471935, 0.1495874, -7.82e-4, -1.82e-7, 3.73e-8, -2.93e-10,
    -85.20931, -0.228525, 5.91e-5, -2.835149, -2.15e-13, 29.179762, 4.86e-4,
];

/// Which formula gives the speed of sound.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq, Serialize, Deserialize)]
pub enum SpeedOfSoundModel {
    /// Cramer 1993: temperature, humidity, pressure and CO2; 0–30 °C.
    #[default]
    Cramer,
    /// ISO 9613-1 simple form: temperature only.
    Iso9613,
}

impl SpeedOfSoundModel {
    /// Short name used on the command line and in messages.
    pub fn name(self) -> &'static str {
        match self {
            SpeedOfSoundModel::Cramer => "cramer",
            SpeedOfSoundModel::Iso9613 => "iso9613",
        }
    }

    /// Temperature range (°C, inclusive) this model accepts.
    pub fn temp_range_c(self) -> (f64, f64) {
        match self {
            SpeedOfSoundModel::Cramer => CRAMER_TEMP_RANGE_C,
            SpeedOfSoundModel::Iso9613 => ISO9613_TEMP_RANGE_C,
        }
    }
}

/// The state of the air in (and around) the body.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(default)]
pub struct AirConditions {
    /// Air temperature, °C.
    pub temp_c: f64,
    /// Relative humidity, percent (0–100).
    pub relative_humidity_pct: f64,
    /// Barometric pressure, pascals.
    pub pressure_pa: f64,
    /// CO2 mole fraction in parts per million.
    pub co2_ppm: f64,
}

impl Default for AirConditions {
    /// 20 °C, 50 % RH, 101 325 Pa, 400 ppm CO2.
    fn default() -> Self {
        AirConditions {
            temp_c: 20.0,
            relative_humidity_pct: 50.0,
            pressure_pa: STANDARD_PRESSURE_PA,
            co2_ppm: DEFAULT_CO2_PPM,
        }
    }
}

impl AirConditions {
    /// Checks every field against the range the model accepts.
    pub fn validate(&self, model: SpeedOfSoundModel) -> Result<(), AcousticsError> {
        let (low_c, high_c) = model.temp_range_c();
        if !(self.temp_c.is_finite() && (low_c..=high_c).contains(&self.temp_c)) {
            return Err(AcousticsError::TemperatureOutOfRange {
                temp_c: self.temp_c,
                model: model.name(),
                min_c: low_c,
                max_c: high_c,
            });
        }
        if !(self.relative_humidity_pct.is_finite()
            && (0.0..=100.0).contains(&self.relative_humidity_pct))
        {
            return Err(AcousticsError::HumidityOutOfRange {
                relative_humidity_pct: self.relative_humidity_pct,
            });
        }
        let (low_pa, high_pa) = PRESSURE_RANGE_PA;
        if !(self.pressure_pa.is_finite() && (low_pa..=high_pa).contains(&self.pressure_pa)) {
            return Err(AcousticsError::PressureOutOfRange {
                pressure_pa: self.pressure_pa,
            });
        }
        if !(self.co2_ppm.is_finite() && (0.0..=10_000.0).contains(&self.co2_ppm)) {
            return Err(AcousticsError::Co2OutOfRange {
                co2_ppm: self.co2_ppm,
            });
        }
        Ok(())
    }
}

/// Saturation vapour pressure of water over a plane liquid surface, pascals,
/// at absolute temperature `temp_k` (Davis 1992, after Giacomo 1982).
pub fn saturation_vapour_pressure_pa(temp_k: f64) -> f64 {
    (1.237_884_7e-5 * temp_k * temp_k - 1.912_131_6e-2 * temp_k + 33.937_110_47
        - 6.343_164_5e3 / temp_k)
        .exp()
}

/// Enhancement factor of water vapour in air (Cramer 1993, appendix):
/// f = 1.00062 + 3.14e-8·p + 5.6e-7·t².
pub fn enhancement_factor(pressure_pa: f64, temp_c: f64) -> f64 {
    1.00062 + 3.14e-8 * pressure_pa + 5.6e-7 * temp_c * temp_c
}

/// Water-vapour mole fraction x_w = h·f·p_sv/p, with h the relative humidity
/// as a fraction.
pub fn water_vapour_mole_fraction(air: &AirConditions) -> f64 {
    let temp_k = air.temp_c + ZERO_CELSIUS_K;
    let humidity = air.relative_humidity_pct / 100.0;
    humidity
        * enhancement_factor(air.pressure_pa, air.temp_c)
        * saturation_vapour_pressure_pa(temp_k)
        / air.pressure_pa
}

/// Speed of sound in m/s for the given air and model. Fails with one clear
/// sentence when any input is outside the range the model accepts.
pub fn speed_of_sound_m_s(
    air: &AirConditions,
    model: SpeedOfSoundModel,
) -> Result<f64, AcousticsError> {
    air.validate(model)?;
    Ok(match model {
        SpeedOfSoundModel::Cramer => cramer_m_s(air),
        SpeedOfSoundModel::Iso9613 => iso9613_m_s(air.temp_c),
    })
}

/// ISO 9613-1: c = 343.2·√(T/293.15), T in kelvin. No range check.
pub fn iso9613_m_s(temp_c: f64) -> f64 {
    343.2 * ((temp_c + ZERO_CELSIUS_K) / 293.15).sqrt()
}

/// Cramer's polynomial, no range check (callers validate first).
fn cramer_m_s(air: &AirConditions) -> f64 {
    let a = &CRAMER_A;
    let t = air.temp_c;
    let p = air.pressure_pa;
    let x_w = water_vapour_mole_fraction(air);
    let x_c = air.co2_ppm * 1e-6;
    a[0] + a[1] * t
        + a[2] * t * t
        + (a[3] + a[4] * t + a[5] * t * t) * x_w
        + (a[6] + a[7] * t + a[8] * t * t) * p
        + (a[9] + a[10] * t + a[11] * t * t) * x_c
        + a[12] * x_w * x_w
        + a[13] * p * p
        + a[14] * x_c * x_c
        + a[15] * x_w * p * x_c
}

#[cfg(test)]
mod tests {
    use super::*;

    fn air(temp_c: f64, rh: f64) -> AirConditions {
        AirConditions {
            temp_c,
            relative_humidity_pct: rh,
            ..AirConditions::default()
        }
    }

    #[test]
    fn saturation_pressure_near_table_value() {
        // Saturation vapour pressure of water at 20 °C is about 2339 Pa
        // (steam tables; from memory).
        let p = saturation_vapour_pressure_pa(293.15);
        assert!((p - 2339.0).abs() < 5.0, "{p}");
    }

    #[test]
    fn humidity_raises_speed() {
        // Water vapour is lighter than air: humid air carries sound faster
        // (Cramer 1993, a3 > 0).
        let dry = speed_of_sound_m_s(&air(25.0, 0.0), SpeedOfSoundModel::Cramer).unwrap();
        let wet = speed_of_sound_m_s(&air(25.0, 90.0), SpeedOfSoundModel::Cramer).unwrap();
        assert!(wet > dry + 0.5);
    }

    #[test]
    fn refuses_out_of_range_air() {
        let cold = speed_of_sound_m_s(&air(-5.0, 50.0), SpeedOfSoundModel::Cramer);
        assert!(matches!(
            cold,
            Err(AcousticsError::TemperatureOutOfRange { .. })
        ));
        assert!(speed_of_sound_m_s(&air(-5.0, 50.0), SpeedOfSoundModel::Iso9613).is_ok());
        for rh in [-1.0, 100.5, f64::NAN] {
            let r = speed_of_sound_m_s(&air(20.0, rh), SpeedOfSoundModel::Cramer);
            assert!(matches!(r, Err(AcousticsError::HumidityOutOfRange { .. })));
        }
        let thin = AirConditions {
            pressure_pa: 1000.0,
            ..AirConditions::default()
        };
        assert!(speed_of_sound_m_s(&thin, SpeedOfSoundModel::Cramer).is_err());
        let nan = air(f64::NAN, 50.0);
        assert!(speed_of_sound_m_s(&nan, SpeedOfSoundModel::Iso9613).is_err());
    }
}
