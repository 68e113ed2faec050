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

use super::numbers::{num, number_text};
use super::sentences::sentence;
use super::typed::{read_number, NumberProblem};

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
    /// "metric", "imperial", or "mixed" when the kinds differ: for a
    /// button or a heading.
    pub fn name(self) -> &'static str {
        if self == Self::metric() {
            "metric"
        } else if self == Self::imperial() {
            "imperial"
        } else {
            "mixed"
        }
    }

    /// Millimetres, grams, °C and litres.
    pub fn metric() -> Self {
        Self::default()
    }

    /// "300.0 × 25.0 × 10.0 mm, 33.75 g" / "11.81 × 0.98 × 0.39 in,
    /// 1.190 oz": a sample bar's sizes and mass.
    pub fn bar_text(
        self,
        (length_mm, width_mm, thickness_mm): (f64, f64, f64),
        mass_g: f64,
    ) -> String {
        let length = self.length;
        let size = |mm: f64| num(length.from_mm(mm), length.size_decimals());
        format!(
            "{} × {} × {} {}, {}",
            size(length_mm),
            size(width_mm),
            size(thickness_mm),
            length.symbol(),
            self.mass.text(mass_g)
        )
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

/// One kind of unit: how a value shown or typed in it relates to the value
/// a build file keeps (mm, g, °C or m³).
pub trait Unit: Copy + PartialEq {
    /// "mm", "oz", "°F", "in³".
    fn symbol(self) -> &'static str;
    /// A value in this unit as the stored value.
    fn to_stored(self, value: f64) -> f64;
    /// A stored value in this unit.
    fn shown_from_stored(self, stored: f64) -> f64;
}

impl Unit for LengthUnit {
    fn symbol(self) -> &'static str {
        LengthUnit::symbol(self)
    }
    fn to_stored(self, value: f64) -> f64 {
        self.to_mm(value)
    }
    fn shown_from_stored(self, stored: f64) -> f64 {
        self.from_mm(stored)
    }
}

impl Unit for MassUnit {
    fn symbol(self) -> &'static str {
        MassUnit::symbol(self)
    }
    fn to_stored(self, value: f64) -> f64 {
        self.to_g(value)
    }
    fn shown_from_stored(self, stored: f64) -> f64 {
        self.from_g(stored)
    }
}

impl Unit for TemperatureUnit {
    fn symbol(self) -> &'static str {
        TemperatureUnit::symbol(self)
    }
    fn to_stored(self, value: f64) -> f64 {
        self.to_c(value)
    }
    fn shown_from_stored(self, stored: f64) -> f64 {
        self.from_c(stored)
    }
}

impl Unit for VolumeUnit {
    fn symbol(self) -> &'static str {
        VolumeUnit::symbol(self)
    }
    fn to_stored(self, value: f64) -> f64 {
        self.to_m3(value)
    }
    fn shown_from_stored(self, stored: f64) -> f64 {
        self.from_m3(stored)
    }
}

/// The significant digits of a typed number ("0.0120" has 3).
fn significant_digits(text: &str) -> usize {
    let digits: String = text.chars().filter(char::is_ascii_digit).collect();
    digits.trim_start_matches('0').len()
}

/// `value` to `digits` significant digits (fixed notation).
fn significant_text(value: f64, digits: usize) -> String {
    if value == 0.0 || !value.is_finite() {
        return "0".to_owned();
    }
    let magnitude = value.abs().log10().floor() as i32;
    let decimals = (digits as i32 - 1 - magnitude).clamp(0, 15) as usize;
    format!("{value:.decimals$}")
}

/// "86.00" → "86", "8.50" → "8.5".
fn without_trailing_zeros(text: String) -> String {
    if text.contains('.') {
        text.trim_end_matches('0').trim_end_matches('.').to_owned()
    } else {
        text
    }
}

/// A stored value as a maker would type it in `unit` (six significant
/// digits, no trailing zeros: 70 mm is "70" or "2.75591" in): what a field
/// is filled with. Read back, it is the stored value to six significant
/// digits.
pub fn field_text<U: Unit>(unit: U, stored: f64) -> String {
    number_text(unit.shown_from_stored(stored))
}

/// A number typed in `unit` into the field `what`, by the one rule of
/// `text::typed`, as the stored value; or one sentence naming the field
/// ("The mass \"abc\" is not a number.").
pub fn parse_in<U: Unit>(unit: U, what: &str, text: &str) -> Result<f64, String> {
    parse_optional_in(unit, what, text)?
        .ok_or_else(|| sentence(&format!("{what} {}", NumberProblem::Empty.describe(text))))
}

/// Like [`parse_in`], but an empty field is no value (None) rather than a
/// problem.
pub fn parse_optional_in<U: Unit>(unit: U, what: &str, text: &str) -> Result<Option<f64>, String> {
    match read_number(text) {
        Ok(value) => Ok(Some(unit.to_stored(value))),
        Err(NumberProblem::Empty) => Ok(None),
        Err(problem) => Err(sentence(&format!("{what} {}", problem.describe(text)))),
    }
}

/// Rewrites a number typed in `from` as the same quantity in `to` (a field
/// whose unit the maker just changed), with the fewest decimals that bring
/// back the same number when the unit is changed back (86 mm becomes
/// "3.385827" in, which becomes "86" mm again); text that is not a number
/// is left as it is, for the maker to finish.
pub fn convert_typed<U: Unit>(text: &mut String, from: U, to: U) {
    if from == to {
        return;
    }
    let Ok(value) = read_number(text) else {
        return;
    };
    let stored = from.to_stored(value);
    // As many significant digits as were typed, six at least.
    let digits = significant_digits(text).max(6);
    let as_typed = significant_text(value, digits);
    let comes_back = |candidate: &String| {
        read_number(candidate).is_ok_and(|v| {
            significant_text(from.shown_from_stored(to.to_stored(v)), digits) == as_typed
        })
    };
    *text = (0..=9)
        .map(|decimals| {
            without_trailing_zeros(format!("{:.decimals$}", to.shown_from_stored(stored)))
        })
        .find(comes_back)
        .unwrap_or_else(|| field_text(to, stored));
}

impl LengthUnit {
    /// Decimals for a part's outline: whole millimetres, or 0.01 in.
    pub fn outline_decimals(self) -> usize {
        match self {
            LengthUnit::Millimetre => 0,
            LengthUnit::Inch => 2,
        }
    }

    /// "356 × 207 mm" / "14.02 × 8.15 in".
    pub fn outline_text(self, length_mm: f64, width_mm: f64) -> String {
        let decimals = self.outline_decimals();
        format!(
            "{} × {} {}",
            num(self.from_mm(length_mm), decimals),
            num(self.from_mm(width_mm), decimals),
            self.symbol()
        )
    }

    /// "cm²" or "in²".
    pub fn area_symbol(self) -> &'static str {
        match self {
            LengthUnit::Millimetre => "cm²",
            LengthUnit::Inch => "in²",
        }
    }

    /// An area stored in m² in cm² or in².
    pub fn area_from_m2(self, m2: f64) -> f64 {
        match self {
            LengthUnit::Millimetre => m2 * 1e4,
            LengthUnit::Inch => m2 / (MM_PER_INCH * 1e-3).powi(2),
        }
    }

    /// Decimals for an area: 0.01 cm², 0.001 in².
    pub fn area_decimals(self) -> usize {
        match self {
            LengthUnit::Millimetre => 2,
            LengthUnit::Inch => 3,
        }
    }

    /// "5.60 cm²" / "0.868 in²": an opening's area (stored in m²).
    pub fn area_text(self, m2: f64) -> String {
        format!(
            "{} {}",
            num(self.area_from_m2(m2), self.area_decimals()),
            self.area_symbol()
        )
    }

    /// An opening's sizes as a maker writes them: "Ø 86 mm", "70 × 8 mm",
    /// "Ø 3.386 in", "2.756 × 0.315 in" (to 0.01 mm or 0.001 in, trailing
    /// zeros dropped). `diameter` puts "Ø" in front.
    pub fn opening_text(self, diameter: bool, sizes_mm: &[f64]) -> String {
        let decimals = match self {
            LengthUnit::Millimetre => 2,
            LengthUnit::Inch => 3,
        };
        let sizes: Vec<String> = sizes_mm
            .iter()
            .map(|mm| without_trailing_zeros(num(self.from_mm(*mm), decimals)))
            .collect();
        let prefix = if diameter { "Ø " } else { "" };
        format!("{prefix}{} {}", sizes.join(" × "), self.symbol())
    }

    /// The step a slope is given per ("mm", or "0.1 in": 2.54 mm, a step a
    /// maker in inches would take), with its size in mm.
    pub fn slope_step(self) -> (f64, &'static str) {
        match self {
            LengthUnit::Millimetre => (1.0, "mm"),
            LengthUnit::Inch => (0.1 * MM_PER_INCH, "0.1 in"),
        }
    }
}

impl MassUnit {
    /// "grams" or "ounces", for sentences.
    pub fn plural_name(self) -> &'static str {
        match self {
            MassUnit::Gram => "grams",
            MassUnit::Ounce => "ounces",
        }
    }

    /// Decimals for an estimate (a forecast's mass): 0.1 g or 0.001 oz.
    pub fn estimate_decimals(self) -> usize {
        match self {
            MassUnit::Gram => 1,
            MassUnit::Ounce => 3,
        }
    }

    /// "1.5 g" / "0.053 oz": an estimated mass.
    pub fn estimate_text(self, g: f64) -> String {
        format!(
            "{} {}",
            num(self.from_g(g), self.estimate_decimals()),
            self.symbol()
        )
    }
}

impl TemperatureUnit {
    /// A change per °C as the same change per degree of this unit (a
    /// Fahrenheit degree is 5/9 of a Celsius one).
    pub fn per_degree(self, per_degree_c: f64) -> f64 {
        match self {
            TemperatureUnit::Celsius => per_degree_c,
            TemperatureUnit::Fahrenheit => per_degree_c * 5.0 / 9.0,
        }
    }
}

impl VolumeUnit {
    /// The step a slope is given per, with its size in litres: a litre, or
    /// 10 in³ (0.16 L).
    pub fn slope_step(self) -> (f64, &'static str) {
        match self {
            VolumeUnit::Litre => (1.0, "litre"),
            VolumeUnit::CubicInch => (10.0 * LITRES_PER_CUBIC_INCH, "10 in³"),
        }
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
    fn typed_values_are_read_in_their_unit_and_refused_in_one_sentence() {
        assert_eq!(parse_in(LengthUnit::Inch, "The thickness", "0,1"), Ok(2.54));
        assert_eq!(
            parse_in(MassUnit::Ounce, "The mass", " 2 "),
            Ok(2.0 * GRAMS_PER_OUNCE)
        );
        assert_eq!(
            parse_optional_in(TemperatureUnit::Fahrenheit, "The air temperature", ""),
            Ok(None)
        );
        assert_eq!(
            parse_in(LengthUnit::Inch, "The thickness", "thin").unwrap_err(),
            "The thickness \"thin\" is not a number."
        );
        assert_eq!(
            parse_in(MassUnit::Gram, "The mass", "").unwrap_err(),
            "The mass is empty: type a number."
        );
    }

    #[test]
    fn a_field_follows_a_change_of_unit_and_keeps_unfinished_text() {
        let mut text = "0.118".to_owned();
        convert_typed(&mut text, LengthUnit::Inch, LengthUnit::Millimetre);
        assert_eq!(text, "2.9972"); // 0.118 × 25.4 exactly
        convert_typed(&mut text, LengthUnit::Millimetre, LengthUnit::Inch);
        assert_eq!(text, "0.118");
        let mut text = "2,".to_owned();
        convert_typed(&mut text, MassUnit::Gram, MassUnit::Ounce);
        // "2," reads as 2 (a decimal comma), 2 g = 0.070548 oz to the
        // digits that bring 2 g back.
        assert_eq!(text, "0.070548");
        let mut unfinished = "abc".to_owned();
        convert_typed(&mut unfinished, MassUnit::Gram, MassUnit::Ounce);
        assert_eq!(unfinished, "abc");
        // Back and forth: the number typed comes back as typed.
        for typed in ["86", "70", "2.5", "356", "0.01"] {
            let mut text = typed.to_owned();
            convert_typed(&mut text, LengthUnit::Millimetre, LengthUnit::Inch);
            convert_typed(&mut text, LengthUnit::Inch, LengthUnit::Millimetre);
            assert_eq!(text, typed);
        }
        let mut text = "86".to_owned();
        convert_typed(&mut text, LengthUnit::Millimetre, LengthUnit::Inch);
        assert_eq!(text, "3.385827");
        let mut text = "20".to_owned();
        convert_typed(
            &mut text,
            TemperatureUnit::Celsius,
            TemperatureUnit::Fahrenheit,
        );
        assert_eq!(text, "68");
        // 70 mm shown in inches and read back: the same to six digits.
        let shown = field_text(LengthUnit::Inch, 70.0);
        assert_eq!(shown, "2.75591");
        let back = parse_in(LengthUnit::Inch, "x", &shown).expect("a number");
        assert!((back - 70.0).abs() / 70.0 < 5e-6, "{back}");
    }

    #[test]
    fn derived_quantities_follow_the_length_unit() {
        // 1 in² = 6.4516 cm² exactly (from 1 in = 2.54 cm).
        assert_eq!(LengthUnit::Millimetre.area_text(6.4516e-4), "6.45 cm²");
        assert_eq!(LengthUnit::Inch.area_text(6.4516e-4), "1.000 in²");
        assert_eq!(
            LengthUnit::Millimetre.opening_text(true, &[86.0]),
            "Ø 86 mm"
        );
        assert_eq!(
            LengthUnit::Inch.opening_text(false, &[70.0, 8.0]),
            "2.756 × 0.315 in"
        );
        assert_eq!(
            LengthUnit::Inch.outline_text(355.6, 203.2),
            "14.00 × 8.00 in"
        );
        assert_eq!(
            LengthUnit::Millimetre.outline_text(355.6, 203.2),
            "356 × 203 mm"
        );
        assert!((TemperatureUnit::Fahrenheit.per_degree(0.9) - 0.5).abs() < 1e-12);
        assert_eq!(Units::imperial().name(), "imperial");
        assert_eq!(
            Units::metric().bar_text((300.0, 25.0, 10.0), 33.75),
            "300.0 × 25.0 × 10.0 mm, 33.75 g"
        );
        // 300 mm = 11.81 in, 33.75 g = 1.190 oz.
        assert_eq!(
            Units::imperial().bar_text((300.0, 25.4, 10.0), 33.75),
            "11.81 × 1.00 × 0.39 in, 1.190 oz"
        );
        let mixed = Units {
            mass: MassUnit::Gram,
            ..Units::imperial()
        };
        assert_eq!(mixed.name(), "mixed");
    }

    #[test]
    fn metric_text_keeps_the_window_s_decimals() {
        assert_eq!(LengthUnit::Millimetre.thickness_text(2.6), "2.60 mm");
        assert_eq!(MassUnit::Gram.text(68.2), "68.20 g");
        assert_eq!(VolumeUnit::Litre.text(0.002_05), "2.05 L");
    }
}
