//! The maker's units: lengths and thicknesses in millimetres or inches,
//! masses in grams or ounces, temperatures in °C or °F, volumes in litres
//! or cubic inches. Build files always keep SI-style units (mm, g, °C,
//! m³); these functions only turn a stored value into what a person reads
//! and a typed value back into the stored unit.
//!
//! Conversion factors are the exact definitions of the international yard
//! and pound agreement of 1959 (1 in = 25.4 mm, 1 avoirdupois oz =
//! 28.349 523 125 g) and the Celsius–Fahrenheit relation
//! (°F = °C × 9/5 + 32); 1 in³ = 2.54³ cm³ exactly.

use serde::{Deserialize, Serialize};

use super::numbers::num;

/// Millimetres in one inch (exact, 1959 agreement).
pub const MM_PER_INCH: f64 = 25.4;
/// Grams in one avoirdupois ounce (exact, 1959 agreement).
pub const GRAMS_PER_OUNCE: f64 = 28.349_523_125;
/// Litres in one cubic inch (exactly 2.54³ cm³).
pub const LITRES_PER_CUBIC_INCH: f64 = 0.016_387_064;

/// How lengths and thicknesses are shown and typed.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq, Serialize, Deserialize)]
pub enum LengthUnit {
    #[default]
    Millimetre,
    Inch,
}

/// How masses are shown and typed.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq, Serialize, Deserialize)]
pub enum MassUnit {
    #[default]
    Gram,
    Ounce,
}

/// How temperatures are shown and typed.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq, Serialize, Deserialize)]
pub enum TemperatureUnit {
    #[default]
    Celsius,
    Fahrenheit,
}

/// How volumes are shown and typed.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq, Serialize, Deserialize)]
pub enum VolumeUnit {
    #[default]
    Litre,
    CubicInch,
}

/// The maker's choice of units, one per kind of quantity.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq, Serialize, Deserialize)]
#[serde(default)]
pub struct Units {
    pub length: LengthUnit,
    pub mass: MassUnit,
    pub temperature: TemperatureUnit,
    pub volume: VolumeUnit,
}

impl Units {
    /// Millimetres, grams, °C and litres.
    pub fn metric() -> Self {
        Self::default()
    }

    /// Inches, ounces, °F and cubic inches.
    pub fn imperial() -> Self {
        Self {
            length: LengthUnit::Inch,
            mass: MassUnit::Ounce,
            temperature: TemperatureUnit::Fahrenheit,
            volume: VolumeUnit::CubicInch,
        }
    }
}

impl LengthUnit {
    pub const ALL: [LengthUnit; 2] = [LengthUnit::Millimetre, LengthUnit::Inch];

    /// "mm" or "in".
    pub fn symbol(self) -> &'static str {
        match self {
            LengthUnit::Millimetre => "mm",
            LengthUnit::Inch => "in",
        }
    }

    /// A stored length (mm) in this unit.
    pub fn from_mm(self, mm: f64) -> f64 {
        match self {
            LengthUnit::Millimetre => mm,
            LengthUnit::Inch => mm / MM_PER_INCH,
        }
    }

    /// A length typed in this unit as the stored mm.
    pub fn to_mm(self, value: f64) -> f64 {
        match self {
            LengthUnit::Millimetre => value,
            LengthUnit::Inch => value * MM_PER_INCH,
        }
    }

    /// Decimals shown for a thickness (and other small lengths): 0.01 mm
    /// or 0.001 in, the resolution of a good thickness caliper in either
    /// unit (common practice, no source).
    pub fn thickness_decimals(self) -> usize {
        match self {
            LengthUnit::Millimetre => 2,
            LengthUnit::Inch => 3,
        }
    }

    /// Decimals shown for an outline size or a position (0.1 mm, 0.01 in).
    pub fn size_decimals(self) -> usize {
        match self {
            LengthUnit::Millimetre => 1,
            LengthUnit::Inch => 2,
        }
    }

    /// "2.60 mm" / "0.102 in": a stored thickness for reading.
    pub fn thickness_text(self, mm: f64) -> String {
        format!(
            "{} {}",
            num(self.from_mm(mm), self.thickness_decimals()),
            self.symbol()
        )
    }

    /// "356.0 mm" / "14.02 in": a stored size or position for reading.
    pub fn size_text(self, mm: f64) -> String {
        format!(
            "{} {}",
            num(self.from_mm(mm), self.size_decimals()),
            self.symbol()
        )
    }
}

impl MassUnit {
    pub const ALL: [MassUnit; 2] = [MassUnit::Gram, MassUnit::Ounce];

    /// "g" or "oz".
    pub fn symbol(self) -> &'static str {
        match self {
            MassUnit::Gram => "g",
            MassUnit::Ounce => "oz",
        }
    }

    /// A stored mass (g) in this unit.
    pub fn from_g(self, g: f64) -> f64 {
        match self {
            MassUnit::Gram => g,
            MassUnit::Ounce => g / GRAMS_PER_OUNCE,
        }
    }

    /// A mass typed in this unit as the stored grams.
    pub fn to_g(self, value: f64) -> f64 {
        match self {
            MassUnit::Gram => value,
            MassUnit::Ounce => value * GRAMS_PER_OUNCE,
        }
    }

    /// Decimals shown: 0.01 g or 0.001 oz (a jeweller's scale reads 0.01 g
    /// ≈ 0.0004 oz; common practice, no source).
    pub fn decimals(self) -> usize {
        match self {
            MassUnit::Gram => 2,
            MassUnit::Ounce => 3,
        }
    }

    /// "68.20 g" / "2.406 oz".
    pub fn text(self, g: f64) -> String {
        format!("{} {}", num(self.from_g(g), self.decimals()), self.symbol())
    }
}

impl TemperatureUnit {
    pub const ALL: [TemperatureUnit; 2] = [TemperatureUnit::Celsius, TemperatureUnit::Fahrenheit];

    /// "°C" or "°F".
    pub fn symbol(self) -> &'static str {
        match self {
            TemperatureUnit::Celsius => "°C",
            TemperatureUnit::Fahrenheit => "°F",
        }
    }

    /// A stored temperature (°C) in this unit.
    pub fn from_c(self, c: f64) -> f64 {
        match self {
            TemperatureUnit::Celsius => c,
            TemperatureUnit::Fahrenheit => c * 9.0 / 5.0 + 32.0,
        }
    }

    /// A temperature typed in this unit as the stored °C.
    pub fn to_c(self, value: f64) -> f64 {
        match self {
            TemperatureUnit::Celsius => value,
            TemperatureUnit::Fahrenheit => (value - 32.0) * 5.0 / 9.0,
        }
    }

    /// "21.0 °C" / "69.8 °F".
    pub fn text(self, c: f64) -> String {
        format!("{} {}", num(self.from_c(c), 1), self.symbol())
    }
}

impl VolumeUnit {
    pub const ALL: [VolumeUnit; 2] = [VolumeUnit::Litre, VolumeUnit::CubicInch];

    /// "L" or "in³".
    pub fn symbol(self) -> &'static str {
        match self {
            VolumeUnit::Litre => "L",
            VolumeUnit::CubicInch => "in³",
        }
    }

    /// A stored volume (m³) in this unit.
    pub fn from_m3(self, m3: f64) -> f64 {
        match self {
            VolumeUnit::Litre => m3 * 1e3,
            VolumeUnit::CubicInch => m3 * 1e3 / LITRES_PER_CUBIC_INCH,
        }
    }

    /// A volume typed in this unit as the stored m³. Litres divide by an
    /// exact power of ten, so 13 L is stored as 0.013.
    pub fn to_m3(self, value: f64) -> f64 {
        match self {
            VolumeUnit::Litre => value / 1e3,
            VolumeUnit::CubicInch => value * LITRES_PER_CUBIC_INCH / 1e3,
        }
    }

    /// Decimals shown: 0.01 L or 1 in³.
    pub fn decimals(self) -> usize {
        match self {
            VolumeUnit::Litre => 2,
            VolumeUnit::CubicInch => 0,
        }
    }

    /// "2.05 L" / "125 in³".
    pub fn text(self, m3: f64) -> String {
        format!(
            "{} {}",
            num(self.from_m3(m3), self.decimals()),
            self.symbol()
        )
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn inches_and_ounces_are_the_1959_definitions() {
        // 1 in = 25.4 mm and 1 oz = 28.349523125 g exactly (international
        // yard and pound agreement, 1959).
        assert_eq!(LengthUnit::Inch.to_mm(1.0), 25.4);
        assert_eq!(MassUnit::Ounce.to_g(16.0), 453.592_37); // 1 lb = 453.59237 g
        assert!((VolumeUnit::CubicInch.to_m3(1.0) - 2.54e-2_f64.powi(3)).abs() < 1e-18);
    }

    #[test]
    fn fahrenheit_meets_celsius_at_minus_forty_and_water_points() {
        // Water freezes at 32 °F and boils at 212 °F (standard pressure).
        let f = TemperatureUnit::Fahrenheit;
        assert!((f.from_c(0.0) - 32.0).abs() < 1e-12);
        assert!((f.from_c(100.0) - 212.0).abs() < 1e-12);
        assert!((f.to_c(-40.0) + 40.0).abs() < 1e-12);
    }

    #[test]
    fn a_typed_value_reads_back_as_typed() {
        // Typed in inches, stored in mm, shown in inches again: the same
        // three decimals.
        for typed in [0.098, 0.118, 0.125, 14.0] {
            let mm = LengthUnit::Inch.to_mm(typed);
            let shown = LengthUnit::Inch.thickness_text(mm);
            assert_eq!(shown, format!("{typed:.3} in"));
        }
        let g = MassUnit::Ounce.to_g(2.406);
        assert_eq!(MassUnit::Ounce.text(g), "2.406 oz");
        let c = TemperatureUnit::Fahrenheit.to_c(69.8);
        assert_eq!(TemperatureUnit::Fahrenheit.text(c), "69.8 °F");
    }

    #[test]
    fn metric_text_keeps_the_window_s_decimals() {
        assert_eq!(LengthUnit::Millimetre.thickness_text(2.6), "2.60 mm");
        assert_eq!(MassUnit::Gram.text(68.2), "68.20 g");
        assert_eq!(VolumeUnit::Litre.text(0.002_05), "2.05 L");
    }
}
