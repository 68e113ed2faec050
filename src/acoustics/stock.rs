//! Grading tonewood from bar taps: Young's modulus, density, speed of sound,
//! radiation ratio and specific modulus of a rectangular sample bar.
//!
//! Two ways to make a bar ring, each with its own formula:
//!
//! - **Flexural, free–free** (held at the nodes, 0.224 L from each end,
//!   tapped at the centre). ASTM E1876, "Standard Test Method for Dynamic
//!   Young's Modulus, Shear Modulus, and Poisson's Ratio by Impulse
//!   Excitation of Vibration", rectangular bar:
//!
//!   ```text
//!   E = 0.9465 (m f² / b) (L³ / t³) T1,
//!   ```
//!
//!   with m in g, b, L, t in mm, f in Hz and E in Pa (g/mm is kg/m, so the
//!   units close), and the correction factor for the bar's thickness
//!
//!   ```text
//!   T1 = 1 + 6.585 (1 + 0.0752 μ + 0.8109 μ²)(t/L)² − 0.868 (t/L)⁴
//!          − 8.340 (1 + 0.2023 μ + 2.173 μ²)(t/L)⁴
//!            / (1 + 6.338 (1 + 0.1408 μ + 1.536 μ²)(t/L)²).
//!   ```
//!
//!   The standard allows T1 = 1 + 6.585 (t/L)² for L/t ≥ 20; tapwright
//!   always uses the full expression, which needs a Poisson's ratio μ. The
//!   standard assumes an isotropic material; wood is orthotropic (three
//!   moduli, six Poisson's ratios), so the figure is an approximation,
//!   good for slender bars where T1 is close to 1 whatever μ is.
//!   [`WOOD_POISSON_RATIO`] is the value assumed.
//!
//!   The constant 0.9465 is Euler–Bernoulli beam theory's 48π² / (β₁L)⁴
//!   with β₁L = 4.7300 for the first free–free mode; the second mode has
//!   β₂L = 7.8532, so on a slender bar it rings
//!   (7.8532 / 4.7300)² ≈ 2.757 times higher ([`SLENDER_SECOND_TO_FIRST`]),
//!   less on a thick one (shear and rotary inertia). A measured second mode
//!   is used as a check of the first.
//!
//! - **Longitudinal** (held at the middle, tapped on an end): the first
//!   longitudinal mode of a free bar has half a wavelength along its length,
//!   f = c / 2L with c = √(E/ρ), so E = 4 ρ L² f².
//!
//! From E and the density ρ: speed of sound c = √(E/ρ), radiation ratio
//! c/ρ (m⁴ kg⁻¹ s⁻¹) and specific modulus E/ρ (here in GPa per g/cm³,
//! which is MN·m/kg).
//!
//! Pure: no files, no window. Lengths in mm, mass in g, frequencies in Hz
//! at the edges; SI inside.

use serde::{Deserialize, Serialize};

/// Poisson's ratio assumed for wood in ASTM E1876's T1 correction. 0.37 is
/// about the μ_LR of Sitka spruce listed in the USDA Forest Products
/// Laboratory's Wood Handbook (FPL-GTR-190, 2010), ch. 5, Table 5-2 (value
/// from memory, not checked against the table); hardwoods list 0.4–0.5.
/// On a bar with L/t ≥ 10 the choice between 0.3 and 0.45 moves T1 by less
/// than 0.7 % (see the tests).
pub const WOOD_POISSON_RATIO: f64 = 0.37;

/// Second over first free–free flexural frequency of a slender
/// (Euler–Bernoulli) bar: (7.853204 / 4.730041)².
pub const SLENDER_SECOND_TO_FIRST: f64 = 2.756_538_5;

/// Name of the flexural formula, as shown and written to JSON.
pub const FLEXURAL_FORMULA: &str = "ASTM E1876 flexural, rectangular bar, with T1";
/// Name of the longitudinal formula, as shown and written to JSON.
pub const LONGITUDINAL_FORMULA: &str = "longitudinal bar, E = 4 rho L^2 f^2";

/// Node positions of the first free–free flexural mode, as a fraction of
/// the length from each end (Euler–Bernoulli beam theory).
pub const FLEXURAL_NODE_FRACTION: f64 = 0.224;

/// Largest accepted bar size, mm.
pub const MAX_BAR_SIZE_MM: f64 = 2000.0;
/// Largest accepted bar mass, g.
pub const MAX_BAR_MASS_G: f64 = 20_000.0;
/// Accepted frequencies, Hz.
pub const BAR_FREQUENCY_RANGE_HZ: (f64, f64) = (1.0, 50_000.0);
/// Accepted densities, kg/m³ (the lightest balsa to the heaviest
/// lignum vitae, with room to spare).
pub const DENSITY_RANGE_KG_M3: (f64, f64) = (50.0, 2000.0);
/// How far (as a fraction) a measured second-to-first ratio may sit from
/// the slender-bar value before it is flagged.
pub const SECOND_MODE_TOLERANCE: f64 = 0.06;

/// One sample bar as measured: sizes, mass and whichever frequencies were
/// heard. The bar vibrates in flexure across its thickness (tapped on its
/// wide face), so thickness must not exceed width.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct BarSample {
    /// Length, mm.
    pub length_mm: f64,
    /// Width (the tapped face), mm.
    pub width_mm: f64,
    /// Thickness (the direction of the flexural motion), mm.
    pub thickness_mm: f64,
    /// Mass, g.
    pub mass_g: f64,
    /// First free–free flexural frequency, Hz.
    pub flexural_hz: Option<f64>,
    /// Second free–free flexural frequency, Hz (a check of the first).
    pub second_flexural_hz: Option<f64>,
    /// First longitudinal frequency, Hz.
    pub longitudinal_hz: Option<f64>,
}

/// What a bar's figures can be refused for, each as one sentence naming the
/// value.
#[derive(Clone, Debug, PartialEq, thiserror::Error)]
pub enum StockError {
    /// A size that is zero, negative, not a number or absurd.
    #[error("the bar's {dimension} {value_mm} mm is outside the accepted 0 to {MAX_BAR_SIZE_MM} mm (it must be a positive number)")]
    SizeOutOfRange {
        /// "length", "width" or "thickness".
        dimension: &'static str,
        /// The value given.
        value_mm: f64,
    },
    /// A mass that is zero, negative, not a number or absurd.
    #[error("the bar's mass {mass_g} g is outside the accepted 0 to {MAX_BAR_MASS_G} g (it must be a positive number)")]
    MassOutOfRange {
        /// The value given.
        mass_g: f64,
    },
    /// A frequency that is not a positive finite number or is absurd.
    #[error("the {what} frequency {value_hz} Hz is outside the accepted 1 to 50 000 Hz")]
    FrequencyOutOfRange {
        /// Which frequency ("first flexural").
        what: &'static str,
        /// The value given.
        value_hz: f64,
    },
    /// Thicker than wide: ASTM E1876's flexural formula is for a bar
    /// bending across its thickness.
    #[error("the bar is {thickness_mm} mm thick but only {width_mm} mm wide; the flexural formula needs the thickness (the direction it bends) no larger than the width, so swap the two")]
    ThickerThanWide {
        /// Thickness given, mm.
        thickness_mm: f64,
        /// Width given, mm.
        width_mm: f64,
    },
    /// Not longer than wide: not a bar.
    #[error("the bar is {length_mm} mm long but {width_mm} mm wide; a sample bar must be longer than it is wide")]
    NotABar {
        /// Length given, mm.
        length_mm: f64,
        /// Width given, mm.
        width_mm: f64,
    },
    /// Mass and sizes give a density no wood has.
    #[error("a mass of {mass_g} g in a bar of {volume_cm3:.2} cm³ is a density of {density_kg_m3:.0} kg/m³, outside the 50 to 2000 kg/m³ of any wood; check the mass and the sizes")]
    ImplausibleDensity {
        /// Mass given, g.
        mass_g: f64,
        /// Volume from the sizes, cm³.
        volume_cm3: f64,
        /// The density that gives, kg/m³.
        density_kg_m3: f64,
    },
    /// Neither a flexural nor a longitudinal frequency.
    #[error("the bar has neither a flexural nor a longitudinal frequency; give at least one")]
    NoFrequency,
    /// A second flexural mode without the first.
    #[error("a second flexural frequency ({second_hz} Hz) is only a check of the first; give the first flexural frequency too")]
    SecondWithoutFirst {
        /// The second mode given, Hz.
        second_hz: f64,
    },
    /// Second flexural mode not above the first.
    #[error("the second flexural frequency {second_hz} Hz must be above the first, {first_hz} Hz")]
    SecondNotAboveFirst {
        /// First mode, Hz.
        first_hz: f64,
        /// Second mode, Hz.
        second_hz: f64,
    },
}

/// E from the first flexural mode.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct FlexuralModulus {
    /// Young's modulus, Pa.
    pub youngs_modulus_pa: f64,
    /// ASTM E1876's correction factor T1 used.
    pub t1_correction: f64,
    /// The Poisson's ratio T1 was computed with.
    pub poisson_ratio: f64,
    /// [`FLEXURAL_FORMULA`].
    pub formula: &'static str,
}

/// The second flexural mode set against the first.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct SecondModeCheck {
    /// Measured second / first.
    pub ratio: f64,
    /// The slender-bar ratio, [`SLENDER_SECOND_TO_FIRST`].
    pub slender_ratio: f64,
    /// (ratio / slender ratio − 1), %.
    pub deviation_pct: f64,
    /// True when the deviation is within [`SECOND_MODE_TOLERANCE`].
    pub consistent: bool,
}

/// E from the first longitudinal mode.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct LongitudinalModulus {
    /// Young's modulus, Pa.
    pub youngs_modulus_pa: f64,
    /// [`LONGITUDINAL_FORMULA`].
    pub formula: &'static str,
}

/// Everything worked out for one bar.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct BarFigures {
    /// Density, kg/m³.
    pub density_kg_m3: f64,
    /// From the flexural mode, if given.
    pub flexural: Option<FlexuralModulus>,
    /// The second flexural mode check, if given.
    pub second_mode: Option<SecondModeCheck>,
    /// From the longitudinal mode, if given.
    pub longitudinal: Option<LongitudinalModulus>,
    /// The modulus the other figures use (flexural when there is one,
    /// otherwise longitudinal), Pa.
    pub youngs_modulus_pa: f64,
    /// c = √(E/ρ), m/s.
    pub speed_of_sound_m_s: f64,
    /// c/ρ, m⁴ kg⁻¹ s⁻¹.
    pub radiation_ratio: f64,
    /// E/ρ, GPa per g/cm³ (MN·m/kg).
    pub specific_modulus: f64,
}

impl BarFigures {
    /// Young's modulus, GPa.
    pub fn youngs_modulus_gpa(&self) -> f64 {
        self.youngs_modulus_pa * 1e-9
    }
}

/// ASTM E1876's correction factor T1 for a rectangular bar of thickness
/// over length `t_over_l`, Poisson's ratio `poisson_ratio` (the full
/// expression, valid for any L/t).
pub fn astm_e1876_t1(t_over_l: f64, poisson_ratio: f64) -> f64 {
    let mu = poisson_ratio;
    let r2 = t_over_l * t_over_l;
    let r4 = r2 * r2;
    1.0 + 6.585 * (1.0 + 0.0752 * mu + 0.8109 * mu * mu) * r2
        - 0.868 * r4
        - 8.340 * (1.0 + 0.2023 * mu + 2.173 * mu * mu) * r4
            / (1.0 + 6.338 * (1.0 + 0.1408 * mu + 1.536 * mu * mu) * r2)
}

/// ASTM E1876 flexural Young's modulus, Pa, of a rectangular bar (sizes in
/// mm, mass in g, first flexural frequency in Hz), with the full T1 at
/// `poisson_ratio`. Inputs are not checked; see [`bar_figures`].
pub fn flexural_modulus_pa(
    length_mm: f64,
    width_mm: f64,
    thickness_mm: f64,
    mass_g: f64,
    flexural_hz: f64,
    poisson_ratio: f64,
) -> FlexuralModulus {
    let t1 = astm_e1876_t1(thickness_mm / length_mm, poisson_ratio);
    let slenderness_cubed = (length_mm / thickness_mm).powi(3);
    let youngs_modulus_pa =
        0.9465 * (mass_g * flexural_hz * flexural_hz / width_mm) * slenderness_cubed * t1;
    FlexuralModulus {
        youngs_modulus_pa,
        t1_correction: t1,
        poisson_ratio,
        formula: FLEXURAL_FORMULA,
    }
}

/// Longitudinal Young's modulus E = 4 ρ L² f², Pa (density kg/m³, length
/// mm, first longitudinal frequency Hz). Inputs are not checked.
pub fn longitudinal_modulus_pa(density_kg_m3: f64, length_mm: f64, longitudinal_hz: f64) -> f64 {
    let length_m = length_mm * 1e-3;
    4.0 * density_kg_m3 * length_m * length_m * longitudinal_hz * longitudinal_hz
}

/// Density of a bar, kg/m³ (sizes mm, mass g). Inputs are not checked.
pub fn bar_density_kg_m3(length_mm: f64, width_mm: f64, thickness_mm: f64, mass_g: f64) -> f64 {
    let volume_m3 = length_mm * width_mm * thickness_mm * 1e-9;
    mass_g * 1e-3 / volume_m3
}

/// Checks a bar and works out its figures, with ASTM E1876's T1 at
/// [`WOOD_POISSON_RATIO`].
pub fn bar_figures(bar: &BarSample) -> Result<BarFigures, StockError> {
    check_bar(bar)?;
    let density_kg_m3 =
        bar_density_kg_m3(bar.length_mm, bar.width_mm, bar.thickness_mm, bar.mass_g);
    let flexural = bar.flexural_hz.map(|hz| {
        flexural_modulus_pa(
            bar.length_mm,
            bar.width_mm,
            bar.thickness_mm,
            bar.mass_g,
            hz,
            WOOD_POISSON_RATIO,
        )
    });
    let second_mode = match (bar.flexural_hz, bar.second_flexural_hz) {
        (Some(first_hz), Some(second_hz)) => Some(second_mode_check(first_hz, second_hz)),
        _ => None,
    };
    let longitudinal = bar.longitudinal_hz.map(|hz| LongitudinalModulus {
        youngs_modulus_pa: longitudinal_modulus_pa(density_kg_m3, bar.length_mm, hz),
        formula: LONGITUDINAL_FORMULA,
    });
    let youngs_modulus_pa = match (&flexural, &longitudinal) {
        (Some(f), _) => f.youngs_modulus_pa,
        (None, Some(l)) => l.youngs_modulus_pa,
        (None, None) => return Err(StockError::NoFrequency),
    };
    let speed_of_sound_m_s = (youngs_modulus_pa / density_kg_m3).sqrt();
    Ok(BarFigures {
        density_kg_m3,
        flexural,
        second_mode,
        longitudinal,
        youngs_modulus_pa,
        speed_of_sound_m_s,
        radiation_ratio: speed_of_sound_m_s / density_kg_m3,
        // Pa / (kg/m³) = m²/s²; GPa per g/cm³ is 10⁶ of those.
        specific_modulus: youngs_modulus_pa / density_kg_m3 * 1e-6,
    })
}

fn second_mode_check(first_hz: f64, second_hz: f64) -> SecondModeCheck {
    let ratio = second_hz / first_hz;
    let deviation = ratio / SLENDER_SECOND_TO_FIRST - 1.0;
    SecondModeCheck {
        ratio,
        slender_ratio: SLENDER_SECOND_TO_FIRST,
        deviation_pct: 100.0 * deviation,
        consistent: deviation.abs() <= SECOND_MODE_TOLERANCE,
    }
}

/// Every rule a bar must keep, first broken one returned.
pub fn check_bar(bar: &BarSample) -> Result<(), StockError> {
    for (dimension, value_mm) in [
        ("length", bar.length_mm),
        ("width", bar.width_mm),
        ("thickness", bar.thickness_mm),
    ] {
        if !(value_mm.is_finite() && value_mm > 0.0 && value_mm <= MAX_BAR_SIZE_MM) {
            return Err(StockError::SizeOutOfRange {
                dimension,
                value_mm,
            });
        }
    }
    if !(bar.mass_g.is_finite() && bar.mass_g > 0.0 && bar.mass_g <= MAX_BAR_MASS_G) {
        return Err(StockError::MassOutOfRange { mass_g: bar.mass_g });
    }
    if bar.thickness_mm > bar.width_mm {
        return Err(StockError::ThickerThanWide {
            thickness_mm: bar.thickness_mm,
            width_mm: bar.width_mm,
        });
    }
    if bar.length_mm <= bar.width_mm {
        return Err(StockError::NotABar {
            length_mm: bar.length_mm,
            width_mm: bar.width_mm,
        });
    }
    check_density(bar)?;
    check_frequencies(bar)
}

fn check_density(bar: &BarSample) -> Result<(), StockError> {
    let density_kg_m3 =
        bar_density_kg_m3(bar.length_mm, bar.width_mm, bar.thickness_mm, bar.mass_g);
    let (low, high) = DENSITY_RANGE_KG_M3;
    if (low..=high).contains(&density_kg_m3) {
        Ok(())
    } else {
        Err(StockError::ImplausibleDensity {
            mass_g: bar.mass_g,
            volume_cm3: bar.length_mm * bar.width_mm * bar.thickness_mm * 1e-3,
            density_kg_m3,
        })
    }
}

fn check_frequencies(bar: &BarSample) -> Result<(), StockError> {
    let (low, high) = BAR_FREQUENCY_RANGE_HZ;
    for (what, value) in [
        ("first flexural", bar.flexural_hz),
        ("second flexural", bar.second_flexural_hz),
        ("longitudinal", bar.longitudinal_hz),
    ] {
        if let Some(value_hz) = value {
            if !(value_hz.is_finite() && (low..=high).contains(&value_hz)) {
                return Err(StockError::FrequencyOutOfRange { what, value_hz });
            }
        }
    }
    match (bar.flexural_hz, bar.second_flexural_hz, bar.longitudinal_hz) {
        (None, Some(second_hz), _) => Err(StockError::SecondWithoutFirst { second_hz }),
        (Some(first_hz), Some(second_hz), _) if second_hz <= first_hz => {
            Err(StockError::SecondNotAboveFirst {
                first_hz,
                second_hz,
            })
        }
        (None, None, None) => Err(StockError::NoFrequency),
        _ => Ok(()),
    }
}

/// Along-grain over cross-grain modulus of a sample with both bars.
pub fn grain_ratio(along: &BarFigures, across: &BarFigures) -> f64 {
    along.youngs_modulus_pa / across.youngs_modulus_pa
}

/// How to hold and tap a bar for each mode (shown in the window).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum BarMode {
    /// First free–free flexural mode.
    Flexural,
    /// Second free–free flexural mode.
    SecondFlexural,
    /// First longitudinal mode.
    Longitudinal,
}

impl BarMode {
    /// Every mode, in the order shown.
    pub const ALL: [BarMode; 3] = [
        BarMode::Flexural,
        BarMode::SecondFlexural,
        BarMode::Longitudinal,
    ];

    /// Short name ("first flexural").
    pub fn name(self) -> &'static str {
        match self {
            BarMode::Flexural => "first flexural",
            BarMode::SecondFlexural => "second flexural",
            BarMode::Longitudinal => "longitudinal",
        }
    }

    /// Where to hold the bar and where to tap it.
    pub fn tap_instructions(self) -> &'static str {
        match self {
            BarMode::Flexural => {
                "Hold the bar lightly at a node, 0.224 × its length from an end (or rest it on two soft supports at both nodes), wide face up, and tap the centre of that face."
            }
            BarMode::SecondFlexural => {
                "Hold the bar at its centre (a node of the second flexural mode), wide face up, and tap near one end of that face; the second mode rings about 2.76 times higher than the first."
            }
            BarMode::Longitudinal => {
                "Hold the bar at the middle of its length (the node of the first longitudinal mode) and tap one end face squarely, along the bar's length."
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn spruce_bar() -> BarSample {
        BarSample {
            length_mm: 300.0,
            width_mm: 25.0,
            thickness_mm: 10.0,
            mass_g: 33.75,
            flexural_hz: Some(560.0),
            second_flexural_hz: None,
            longitudinal_hz: None,
        }
    }

    #[test]
    fn the_full_t1_tends_to_the_slender_form() {
        // ASTM E1876: T1 = 1 + 6.585 (t/L)² for L/t ≥ 20; at μ = 0 the full
        // form differs from it only by terms in (t/L)⁴.
        let r = 0.01;
        assert!((astm_e1876_t1(r, 0.0) - (1.0 + 6.585 * r * r)).abs() < 1e-6);
    }

    #[test]
    fn refuses_bad_bars_with_a_sentence() {
        let mut bar = spruce_bar();
        bar.thickness_mm = 30.0;
        let error = bar_figures(&bar).unwrap_err();
        assert!(matches!(error, StockError::ThickerThanWide { .. }));
        assert!(error.to_string().contains("30 mm thick"));
        let mut bar = spruce_bar();
        bar.mass_g = -1.0;
        assert!(matches!(
            bar_figures(&bar),
            Err(StockError::MassOutOfRange { .. })
        ));
        let mut bar = spruce_bar();
        bar.flexural_hz = None;
        assert_eq!(bar_figures(&bar), Err(StockError::NoFrequency));
        let mut bar = spruce_bar();
        bar.length_mm = f64::NAN;
        assert!(matches!(
            bar_figures(&bar),
            Err(StockError::SizeOutOfRange { .. })
        ));
    }
}
