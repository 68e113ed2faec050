//! The cavity (Helmholtz) model: a rigid-walled volume with openings.
//!
//! f_H = (c/2π)·√(K/V), with K the total conductance of the openings in
//! metres (Lord Rayleigh, The Theory of Sound, vol. II). Conductances of
//! well-separated openings add.
//!
//! # Conductance of one opening
//!
//! Thin wall (Rayleigh, from the capacitance of an elliptic disc):
//!
//! - round, radius a: K₀ = 2a;
//! - oval, semi-axes a ≥ b: K₀ = πa/K(e), e² = 1 − b²/a², K the complete
//!   elliptic integral of the first kind. Computed with the arithmetic–
//!   geometric mean, K(e) = π / (2·AGM(1, b/a)), so K₀ = 2a·AGM(1, b/a);
//! - slot (f-hole approximation), half-length a, half mean width b:
//!   K₀ = πa/ln(4a/b), the slender limit of the oval.
//!
//! Wall of thickness t: the opening is a short neck of area A. Its inertance
//! is the neck itself (t/A) in series with the end effects, so
//!
//! 1/K = t/A + s/K₀,
//!
//! where s scales Rayleigh's thin-wall end effect to the chosen end
//! correction. For a round hole the thin-wall term is πa/2 / (πa²), i.e. an
//! end correction of πa/4 per side, and the formula becomes the
//! textbook K = πa²/(t + 2δ) with δ = s·πa/4:
//!
//! - [`EndCorrection::Flanged`]: δ = 0.8216a (Norris & Sheng, J. Sound Vib.
//!   135:85, 1989), s = 0.8216·4/π ≈ 1.046;
//! - [`EndCorrection::Unflanged`]: δ = 0.6133a (Levine & Schwinger, Phys.
//!   Rev. 73:383, 1948), s ≈ 0.781;
//! - [`EndCorrection::ThinPlate`]: δ = πa/4 (Rayleigh), s = 1, so the
//!   thin-wall limit is exactly K = 2a and K = πa²/(t + πa/2) in general;
//! - [`EndCorrection::AcrossWall`] (the default): s goes from Rayleigh's
//!   orifice value at zero thickness to the flanged-pipe value for a long
//!   neck, s(t) = 1 + (s_flanged − 1)·(1 − e^(−t/r)), where r is the
//!   opening's smaller half-size (the radius of a round hole, the half
//!   width of an oval or slot). The two limits are the sourced values
//!   above; the exponential between them, with its scale of one half-size,
//!   is tapwright's own interpolation (no source): a zero-thickness hole
//!   gives Rayleigh's K = 2a exactly, a neck longer than a few radii the
//!   flanged-pipe end correction on both ends.
//!
//! The same s is applied to ovals and slots: a consistent extension chosen
//! for tapwright (no separate source), exact for round holes. With the
//! flanged or unflanged choice a round hole in a wall of zero thickness
//! gives K = 2a/s (1.91a flanged), not Rayleigh's 2a; those corrections
//! describe the end of a neck. `ThinPlate` keeps Rayleigh's orifice value
//! at every thickness.
//!
//! # What is accepted
//!
//! - volume 1 mL to 1000 L;
//! - each opening size 0.1 mm to 1000 mm; a slot's length larger than its
//!   mean width;
//! - wall thickness 0 to 100 mm;
//! - at least one opening;
//! - the openings' total area at most V^(2/3), the area of one face of a
//!   cube of volume V. Past that the "cavity" is mostly hole and the lumped
//!   Helmholtz model means nothing (tapwright's own rule; common practice
//!   would stop well before it).

use std::f64::consts::PI;

use serde::{Deserialize, Serialize};

use super::speed_of_sound::{speed_of_sound_m_s, AirConditions, SpeedOfSoundModel};
use super::{AcousticsError, M3_PER_LITRE};
use crate::analysis::pitch::{nearest_note, Pitch};

/// Smallest volume accepted, m³ (1 mL).
pub const MIN_VOLUME_M3: f64 = 1e-6;
/// Largest volume accepted, m³ (1000 L).
pub const MAX_VOLUME_M3: f64 = 1.0;
/// Smallest opening size accepted, mm.
pub const MIN_OPENING_SIZE_MM: f64 = 0.1;
/// Largest opening size accepted, mm.
pub const MAX_OPENING_SIZE_MM: f64 = 1000.0;
/// Largest wall thickness accepted, mm.
pub const MAX_THICKNESS_MM: f64 = 100.0;

/// One hole in the body. Sizes in millimetres.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
pub enum Opening {
    /// A round hole.
    Round {
        /// Diameter, mm.
        diameter_mm: f64,
    },
    /// An elliptical hole (the order of the two axes does not matter).
    Oval {
        /// Length (one full axis), mm.
        length_mm: f64,
        /// Width (the other full axis), mm.
        width_mm: f64,
    },
    /// A slender slot: an f-hole approximated by its length and mean width.
    Slot {
        /// Length along the slot, mm.
        length_mm: f64,
        /// Mean width across the slot, mm.
        mean_width_mm: f64,
    },
}

impl Opening {
    /// "round", "oval" or "slot".
    pub fn kind(&self) -> &'static str {
        match self {
            Opening::Round { .. } => "round",
            Opening::Oval { .. } => "oval",
            Opening::Slot { .. } => "slot",
        }
    }

    /// The size the sensitivity and the inverse solve work on: the diameter
    /// of a round hole, the length of an oval or a slot, mm.
    pub fn main_size_mm(&self) -> f64 {
        match *self {
            Opening::Round { diameter_mm } => diameter_mm,
            Opening::Oval { length_mm, .. } | Opening::Slot { length_mm, .. } => length_mm,
        }
    }

    /// The same opening with its main size replaced.
    pub fn with_main_size_mm(&self, size_mm: f64) -> Opening {
        match *self {
            Opening::Round { .. } => Opening::Round {
                diameter_mm: size_mm,
            },
            Opening::Oval { width_mm, .. } => Opening::Oval {
                length_mm: size_mm,
                width_mm,
            },
            Opening::Slot { mean_width_mm, .. } => Opening::Slot {
                length_mm: size_mm,
                mean_width_mm,
            },
        }
    }

    /// Size as a maker writes it: "Ø 86 mm", "90 × 60 mm" (at most two
    /// decimals).
    pub fn size_text(&self) -> String {
        let mm = |value: f64| (value * 100.0).round() / 100.0;
        match *self {
            Opening::Round { diameter_mm } => format!("Ø {} mm", mm(diameter_mm)),
            Opening::Oval {
                length_mm,
                width_mm,
            } => format!("{} × {} mm", mm(length_mm), mm(width_mm)),
            Opening::Slot {
                length_mm,
                mean_width_mm,
            } => format!("{} × {} mm", mm(length_mm), mm(mean_width_mm)),
        }
    }

    /// Open area, m². A slot counts as length × mean width.
    pub fn area_m2(&self) -> f64 {
        match *self {
            Opening::Round { diameter_mm } => {
                let radius_m = diameter_mm * 0.5e-3;
                PI * radius_m * radius_m
            }
            Opening::Oval {
                length_mm,
                width_mm,
            } => PI * (length_mm * 0.5e-3) * (width_mm * 0.5e-3),
            Opening::Slot {
                length_mm,
                mean_width_mm,
            } => length_mm * 1e-3 * mean_width_mm * 1e-3,
        }
    }

    /// Half the opening's smaller size, metres: the radius of a round hole,
    /// the half width of an oval or a slot.
    pub fn smaller_half_size_m(&self) -> f64 {
        match *self {
            Opening::Round { diameter_mm } => 0.5e-3 * diameter_mm,
            Opening::Oval {
                length_mm,
                width_mm,
            } => 0.5e-3 * length_mm.min(width_mm),
            Opening::Slot { mean_width_mm, .. } => 0.5e-3 * mean_width_mm,
        }
    }

    /// Conductance in a wall of zero thickness with Rayleigh's end effects,
    /// metres (see the module notes).
    pub fn thin_wall_conductance_m(&self) -> f64 {
        match *self {
            Opening::Round { diameter_mm } => diameter_mm * 1e-3,
            Opening::Oval {
                length_mm,
                width_mm,
            } => {
                let semi_major_m = 0.5e-3 * length_mm.max(width_mm);
                let semi_minor_m = 0.5e-3 * length_mm.min(width_mm);
                2.0 * semi_major_m * arithmetic_geometric_mean(1.0, semi_minor_m / semi_major_m)
            }
            Opening::Slot {
                length_mm,
                mean_width_mm,
            } => {
                let half_length_m = 0.5e-3 * length_mm;
                PI * half_length_m / (4.0 * length_mm / mean_width_mm).ln()
            }
        }
    }

    /// Checks the sizes; `position` is the 1-based place in the list.
    fn validate(&self, position: usize) -> Result<(), AcousticsError> {
        let check = |dimension: &'static str, value_mm: f64| {
            if value_mm.is_finite()
                && (MIN_OPENING_SIZE_MM..=MAX_OPENING_SIZE_MM).contains(&value_mm)
            {
                Ok(())
            } else {
                Err(AcousticsError::OpeningSizeOutOfRange {
                    opening: position,
                    dimension,
                    value_mm,
                })
            }
        };
        match *self {
            Opening::Round { diameter_mm } => check("diameter", diameter_mm),
            Opening::Oval {
                length_mm,
                width_mm,
            } => check("length", length_mm).and(check("width", width_mm)),
            Opening::Slot {
                length_mm,
                mean_width_mm,
            } => {
                check("length", length_mm)?;
                check("mean width", mean_width_mm)?;
                if mean_width_mm >= length_mm {
                    return Err(AcousticsError::SlotNotSlender {
                        opening: position,
                        length_mm,
                        mean_width_mm,
                    });
                }
                Ok(())
            }
        }
    }
}

/// Arithmetic–geometric mean of two positive numbers.
fn arithmetic_geometric_mean(mut x: f64, mut y: f64) -> f64 {
    for _ in 0..64 {
        if (x - y).abs() <= 1e-15 * x {
            break;
        }
        let next_x = 0.5 * (x + y);
        y = (x * y).sqrt();
        x = next_x;
    }
    x
}

/// The end correction used at the openings (see the module notes).
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq, Serialize, Deserialize)]
pub enum EndCorrection {
    /// Rayleigh's orifice value at zero wall thickness, moving to the
    /// flanged-pipe value (Norris & Sheng 1989) as the wall grows past the
    /// opening's half-size: right for a thin top and for a thick one.
    #[default]
    AcrossWall,
    /// 0.8216a per side (Norris & Sheng 1989): the opening sits in a wide
    /// plate on both faces, as a sound hole in a top does.
    Flanged,
    /// 0.6133a per side (Levine & Schwinger 1948): the opening ends in free
    /// air, like the end of a tube.
    Unflanged,
    /// πa/4 per side (Rayleigh): the orifice value; returns K = 2a exactly
    /// for a round hole in a wall of zero thickness.
    ThinPlate,
}

/// Flanged-pipe end correction per side over the radius (Norris & Sheng,
/// J. Sound Vib. 135:85, 1989).
const FLANGED_PER_SIDE_OVER_RADIUS: f64 = 0.8216;

impl EndCorrection {
    /// Every choice, in the order the window and the command line list them.
    pub const ALL: [EndCorrection; 4] = [
        EndCorrection::AcrossWall,
        EndCorrection::Flanged,
        EndCorrection::Unflanged,
        EndCorrection::ThinPlate,
    ];

    /// End correction per side as a multiple of the radius a, for a wall
    /// `thickness_over_radius` radii thick.
    pub fn per_side_over_radius(self, thickness_over_radius: f64) -> f64 {
        match self {
            EndCorrection::AcrossWall => {
                let thick = 1.0 - (-thickness_over_radius.max(0.0)).exp();
                PI / 4.0 + (FLANGED_PER_SIDE_OVER_RADIUS - PI / 4.0) * thick
            }
            EndCorrection::Flanged => FLANGED_PER_SIDE_OVER_RADIUS,
            EndCorrection::Unflanged => 0.6133,
            EndCorrection::ThinPlate => PI / 4.0,
        }
    }

    /// Short name used on the command line: "across-wall", "flanged",
    /// "unflanged", "thin-plate".
    pub fn name(self) -> &'static str {
        match self {
            EndCorrection::AcrossWall => "across-wall",
            EndCorrection::Flanged => "flanged",
            EndCorrection::Unflanged => "unflanged",
            EndCorrection::ThinPlate => "thin-plate",
        }
    }

    /// The choice with this command-line name.
    pub fn from_name(name: &str) -> Option<EndCorrection> {
        EndCorrection::ALL.into_iter().find(|c| c.name() == name)
    }

    /// Ratio of this end correction to Rayleigh's orifice value πa/4.
    fn scale(self, thickness_over_radius: f64) -> f64 {
        self.per_side_over_radius(thickness_over_radius) / (PI / 4.0)
    }
}

/// Conductance of one opening in a wall `thickness_mm` thick, metres:
/// 1/K = t/A + s/K₀ (see the module notes). No range checks.
pub fn opening_conductance_m(
    opening: &Opening,
    thickness_mm: f64,
    end_correction: EndCorrection,
) -> f64 {
    let area_m2 = opening.area_m2();
    let thickness_m = thickness_mm * 1e-3;
    let scale = end_correction.scale(thickness_m / opening.smaller_half_size_m());
    area_m2 / (thickness_m + scale * area_m2 / opening.thin_wall_conductance_m())
}

/// Rigid-wall Helmholtz frequency f = (c/2π)·√(K/V), Hz.
pub fn helmholtz_frequency_hz(speed_of_sound_m_s: f64, conductance_m: f64, volume_m3: f64) -> f64 {
    speed_of_sound_m_s / (2.0 * PI) * (conductance_m / volume_m3).sqrt()
}

/// Everything that sets the air resonance of a body: plain data, stored with
/// each build.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct CavityGeometry {
    /// Air volume inside the body, m³.
    pub volume_m3: f64,
    /// The openings; conductances add.
    #[serde(default)]
    pub openings: Vec<Opening>,
    /// Wall (top) thickness at the openings, mm. Zero means a thin wall.
    #[serde(default)]
    pub wall_thickness_mm: f64,
    /// End correction model at the openings.
    #[serde(default)]
    pub end_correction: EndCorrection,
    /// Air conditions for the speed of sound.
    #[serde(default)]
    pub air: AirConditions,
    /// Speed-of-sound formula.
    #[serde(default)]
    pub sound_model: SpeedOfSoundModel,
}

impl CavityGeometry {
    /// A geometry with thin walls, the across-wall end correction and default air
    /// (20 °C, 50 % RH, 101 325 Pa, Cramer).
    pub fn new(volume_m3: f64, openings: Vec<Opening>) -> Self {
        CavityGeometry {
            volume_m3,
            openings,
            wall_thickness_mm: 0.0,
            end_correction: EndCorrection::default(),
            air: AirConditions::default(),
            sound_model: SpeedOfSoundModel::default(),
        }
    }

    /// Volume in litres.
    pub fn volume_l(&self) -> f64 {
        self.volume_m3 / M3_PER_LITRE
    }

    /// Total open area, m².
    pub fn total_area_m2(&self) -> f64 {
        self.openings.iter().map(Opening::area_m2).sum()
    }

    /// Largest total opening area a body of this volume may have, m²:
    /// V^(2/3), one face of a cube of that volume.
    pub fn area_limit_m2(&self) -> f64 {
        self.volume_m3.powf(2.0 / 3.0)
    }

    /// Total conductance of the openings, m. No range checks.
    pub fn total_conductance_m(&self) -> f64 {
        self.openings
            .iter()
            .map(|opening| {
                opening_conductance_m(opening, self.wall_thickness_mm, self.end_correction)
            })
            .sum()
    }

    /// Checks volume, thickness and the air; not the openings.
    pub(crate) fn validate_body(&self) -> Result<(), AcousticsError> {
        if !(self.volume_m3.is_finite()
            && (MIN_VOLUME_M3..=MAX_VOLUME_M3).contains(&self.volume_m3))
        {
            return Err(AcousticsError::VolumeOutOfRange {
                volume_l: self.volume_l(),
            });
        }
        if !(self.wall_thickness_mm.is_finite()
            && (0.0..=MAX_THICKNESS_MM).contains(&self.wall_thickness_mm))
        {
            return Err(AcousticsError::ThicknessOutOfRange {
                thickness_mm: self.wall_thickness_mm,
            });
        }
        self.air.validate(self.sound_model)
    }

    /// Checks each opening's sizes (not the count, not the area rule).
    pub(crate) fn validate_openings(&self) -> Result<(), AcousticsError> {
        for (index, opening) in self.openings.iter().enumerate() {
            opening.validate(index + 1)?;
        }
        Ok(())
    }

    /// Checks the area rule.
    pub(crate) fn validate_area(&self) -> Result<(), AcousticsError> {
        let total_area_m2 = self.total_area_m2();
        let limit_m2 = self.area_limit_m2();
        if total_area_m2 > limit_m2 {
            return Err(AcousticsError::OpeningsTooLarge {
                total_area_cm2: total_area_m2 * 1e4,
                limit_cm2: limit_m2 * 1e4,
                volume_l: self.volume_l(),
            });
        }
        Ok(())
    }

    /// Every check [`estimate_cavity`] makes, in the order it makes them.
    pub fn validate(&self) -> Result<(), AcousticsError> {
        self.validate_body()?;
        if self.openings.is_empty() {
            return Err(AcousticsError::NoOpenings);
        }
        self.validate_openings()?;
        self.validate_area()
    }
}

/// One opening's share of the estimate.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct OpeningEstimate {
    /// The opening as given.
    pub opening: Opening,
    /// Open area, m².
    pub area_m2: f64,
    /// Conductance, m.
    pub conductance_m: f64,
}

/// How the Helmholtz frequency moves with each input (local slopes).
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Sensitivities {
    /// Hz per mm of each opening's main size (diameter, or length), in the
    /// order of the openings.
    pub hz_per_mm_of_opening: Vec<f64>,
    /// Hz per litre of volume (negative: a bigger body sounds lower).
    pub hz_per_litre: f64,
    /// Hz per °C of air temperature, through the speed of sound.
    pub hz_per_degree_c: f64,
    /// Hz per mm of wall thickness at the openings.
    pub hz_per_mm_of_thickness: f64,
}

/// The rigid-wall estimate for a cavity.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct CavityEstimate {
    /// Speed of sound used, m/s.
    pub speed_of_sound_m_s: f64,
    /// Per-opening conductances, in the order given.
    pub openings: Vec<OpeningEstimate>,
    /// Total conductance, m.
    pub conductance_m: f64,
    /// Rigid-wall Helmholtz frequency, Hz.
    pub helmholtz_hz: f64,
    /// Local slopes of the frequency.
    pub sensitivities: Sensitivities,
}

impl CavityEstimate {
    /// Nearest equal-tempered note of the Helmholtz frequency.
    pub fn pitch(&self, a4_hz: f64) -> Option<Pitch> {
        nearest_note(self.helmholtz_hz, a4_hz)
    }
}

/// Validates the geometry and computes conductances, the rigid-wall
/// Helmholtz frequency and its sensitivities.
pub fn estimate_cavity(geometry: &CavityGeometry) -> Result<CavityEstimate, AcousticsError> {
    geometry.validate()?;
    let speed_m_s = speed_of_sound_m_s(&geometry.air, geometry.sound_model)?;
    let openings: Vec<OpeningEstimate> = geometry
        .openings
        .iter()
        .map(|opening| OpeningEstimate {
            opening: *opening,
            area_m2: opening.area_m2(),
            conductance_m: opening_conductance_m(
                opening,
                geometry.wall_thickness_mm,
                geometry.end_correction,
            ),
        })
        .collect();
    let conductance_m: f64 = openings.iter().map(|o| o.conductance_m).sum();
    let helmholtz_hz = helmholtz_frequency_hz(speed_m_s, conductance_m, geometry.volume_m3);
    let sensitivities = sensitivities(geometry, speed_m_s, helmholtz_hz)?;
    Ok(CavityEstimate {
        speed_of_sound_m_s: speed_m_s,
        openings,
        conductance_m,
        helmholtz_hz,
        sensitivities,
    })
}

/// Frequency of the geometry at a given speed of sound, without checks.
fn frequency_at(geometry: &CavityGeometry, speed_m_s: f64) -> f64 {
    helmholtz_frequency_hz(
        speed_m_s,
        geometry.total_conductance_m(),
        geometry.volume_m3,
    )
}

/// Local slopes: central differences for sizes and temperature (one-sided
/// at the edge of a range), exact for volume (f ∝ V^(−1/2)).
fn sensitivities(
    geometry: &CavityGeometry,
    speed_m_s: f64,
    helmholtz_hz: f64,
) -> Result<Sensitivities, AcousticsError> {
    let hz_per_mm_of_opening = (0..geometry.openings.len())
        .map(|index| {
            let size_mm = geometry.openings[index].main_size_mm();
            let step_mm = 1e-4 * size_mm;
            let at = |size_mm: f64| {
                let mut changed = geometry.clone();
                changed.openings[index] = changed.openings[index].with_main_size_mm(size_mm);
                frequency_at(&changed, speed_m_s)
            };
            (at(size_mm + step_mm) - at(size_mm - step_mm)) / (2.0 * step_mm)
        })
        .collect();

    let hz_per_litre = -helmholtz_hz / (2.0 * geometry.volume_l());

    let (low_c, high_c) = geometry.sound_model.temp_range_c();
    let temp_c = geometry.air.temp_c;
    let (cold_c, warm_c) = ((temp_c - 0.5).max(low_c), (temp_c + 0.5).min(high_c));
    let speed_at = |temp_c: f64| {
        let air = AirConditions {
            temp_c,
            ..geometry.air.clone()
        };
        speed_of_sound_m_s(&air, geometry.sound_model)
    };
    let speed_slope = (speed_at(warm_c)? - speed_at(cold_c)?) / (warm_c - cold_c);
    let hz_per_degree_c = helmholtz_hz / speed_m_s * speed_slope;

    let thickness_mm = geometry.wall_thickness_mm;
    let step_mm = 0.01;
    let (thin_mm, thick_mm) = ((thickness_mm - step_mm).max(0.0), thickness_mm + step_mm);
    let at_thickness = |thickness_mm: f64| {
        let changed = CavityGeometry {
            wall_thickness_mm: thickness_mm,
            ..geometry.clone()
        };
        frequency_at(&changed, speed_m_s)
    };
    let hz_per_mm_of_thickness =
        (at_thickness(thick_mm) - at_thickness(thin_mm)) / (thick_mm - thin_mm);

    Ok(Sensitivities {
        hz_per_mm_of_opening,
        hz_per_litre,
        hz_per_degree_c,
        hz_per_mm_of_thickness,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn agm_gives_elliptic_integral() {
        // K(k = sin 45°) = 1.854 074 677 (Abramowitz & Stegun, table 17.1;
        // from memory).
        let k_prime = (0.5f64).sqrt();
        let k = PI / (2.0 * arithmetic_geometric_mean(1.0, k_prime));
        assert!((k - 1.854_074_677).abs() < 1e-8, "{k}");
    }

    #[test]
    fn round_thin_plate_is_rayleigh_2a() {
        // Rayleigh, The Theory of Sound II: K = 2a for a thin-wall circular hole.
        let hole = Opening::Round { diameter_mm: 50.0 };
        let k = opening_conductance_m(&hole, 0.0, EndCorrection::ThinPlate);
        assert!((k - 0.05).abs() < 1e-15);
    }

    #[test]
    fn across_wall_default_has_both_limits() {
        // Rayleigh, The Theory of Sound II: K = 2a for a circular hole in a
        // wall of zero thickness.
        let hole = Opening::Round { diameter_mm: 40.0 };
        let thin = opening_conductance_m(&hole, 0.0, EndCorrection::default());
        assert!((thin - 0.040).abs() < 1e-15, "{thin}");
        // A long neck (t = 20a): the flanged-pipe end correction 0.8216a on
        // each end (Norris & Sheng, J. Sound Vib. 135:85, 1989), within the
        // e^(−20) left of the interpolation.
        let (a, t) = (0.020, 0.400);
        let flanged = PI * a * a / (t + 2.0 * 0.8216 * a);
        let long = opening_conductance_m(&hole, 400.0, EndCorrection::AcrossWall);
        assert!((long / flanged - 1.0).abs() < 1e-8, "{long} vs {flanged}");
        // In between, the end correction lies between the two limits and
        // grows with the wall.
        let per_side: Vec<f64> = [0.0, 0.1, 0.5, 1.0, 3.0]
            .iter()
            .map(|&x| EndCorrection::AcrossWall.per_side_over_radius(x))
            .collect();
        assert!(per_side.windows(2).all(|w| w[0] < w[1]), "{per_side:?}");
        assert!(per_side[0] == PI / 4.0 && per_side[4] < 0.8216);
    }

    #[test]
    fn round_with_thickness_matches_textbook_form() {
        // DEVELOPERS.md, "Sources": K = πa²/(t + 2δ), δ = 0.8216a flanged, 0.6133a unflanged.
        let a = 0.043;
        let t = 0.0025;
        let hole = Opening::Round { diameter_mm: 86.0 };
        for (choice, delta_over_a) in [
            (EndCorrection::Flanged, 0.8216),
            (EndCorrection::Unflanged, 0.6133),
            (EndCorrection::ThinPlate, PI / 4.0),
        ] {
            let expected = PI * a * a / (t + 2.0 * delta_over_a * a);
            let k = opening_conductance_m(&hole, 2.5, choice);
            assert!((k - expected).abs() < 1e-12 * expected, "{choice:?}");
        }
    }

    #[test]
    fn sensitivities_agree_with_a_small_step() {
        let mut g = CavityGeometry::new(
            2.0e-3,
            vec![
                Opening::Slot {
                    length_mm: 70.0,
                    mean_width_mm: 8.0,
                },
                Opening::Round { diameter_mm: 20.0 },
            ],
        );
        g.wall_thickness_mm = 3.0;
        let base = estimate_cavity(&g).unwrap();
        let s = &base.sensitivities;
        assert!(s.hz_per_litre < 0.0 && s.hz_per_degree_c > 0.0 && s.hz_per_mm_of_thickness < 0.0);
        assert!(s.hz_per_mm_of_opening.iter().all(|&d| d > 0.0));
        // One millimetre more slot length: the slope predicts the change to
        // within a few per cent.
        let mut longer = g.clone();
        longer.openings[0] = longer.openings[0].with_main_size_mm(71.0);
        let moved = estimate_cavity(&longer).unwrap().helmholtz_hz - base.helmholtz_hz;
        assert!(
            (moved - s.hz_per_mm_of_opening[0]).abs() < 0.03 * moved.abs(),
            "{moved}"
        );
        let mut warmer = g.clone();
        warmer.air.temp_c += 1.0;
        let moved = estimate_cavity(&warmer).unwrap().helmholtz_hz - base.helmholtz_hz;
        assert!(
            (moved - s.hz_per_degree_c).abs() < 0.02 * moved.abs(),
            "{moved}"
        );
    }

    #[test]
    fn validation_names_the_value() {
        let hole = || vec![Opening::Round { diameter_mm: 86.0 }];
        for volume_m3 in [0.0, -1.0, f64::NAN, 2.0, 1e-7] {
            let e = estimate_cavity(&CavityGeometry::new(volume_m3, hole())).unwrap_err();
            assert!(
                matches!(e, AcousticsError::VolumeOutOfRange { .. }),
                "{volume_m3}"
            );
        }
        let e = estimate_cavity(&CavityGeometry::new(13e-3, vec![])).unwrap_err();
        assert_eq!(e, AcousticsError::NoOpenings);
        let e = estimate_cavity(&CavityGeometry::new(
            13e-3,
            vec![Opening::Round {
                diameter_mm: 1500.0,
            }],
        ))
        .unwrap_err();
        assert!(e.to_string().contains("1500 mm"), "{e}");
        let e = estimate_cavity(&CavityGeometry::new(
            1e-3,
            vec![Opening::Round { diameter_mm: 200.0 }],
        ))
        .unwrap_err();
        assert!(matches!(e, AcousticsError::OpeningsTooLarge { .. }), "{e}");
        let e = estimate_cavity(&CavityGeometry::new(
            2e-3,
            vec![Opening::Slot {
                length_mm: 8.0,
                mean_width_mm: 70.0,
            }],
        ))
        .unwrap_err();
        assert!(matches!(e, AcousticsError::SlotNotSlender { .. }), "{e}");
        let mut g = CavityGeometry::new(13e-3, hole());
        g.wall_thickness_mm = -1.0;
        assert!(matches!(
            estimate_cavity(&g),
            Err(AcousticsError::ThicknessOutOfRange { .. })
        ));
    }

    #[test]
    fn geometry_round_trips_through_ron_with_defaults() {
        let text = "(volume_m3: 0.002, openings: [Slot(length_mm: 70.0, mean_width_mm: 8.0)])";
        let g: CavityGeometry = ron::from_str(text).unwrap();
        assert_eq!(
            g,
            CavityGeometry::new(
                0.002,
                vec![Opening::Slot {
                    length_mm: 70.0,
                    mean_width_mm: 8.0
                }]
            )
        );
        let back: CavityGeometry = ron::from_str(&ron::to_string(&g).unwrap()).unwrap();
        assert_eq!(back, g);
    }
}
