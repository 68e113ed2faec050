//! What the maker types in the Air area, kept as text, and how it becomes a
//! [`CavityGeometry`]. No egui here: presets and unit conversion, so they
//! can be tested on their own.
//!
//! Every refusal is one sentence that names the field ("The volume \"abc\"
//! is not a number."), read by the one rule of `text::typed`.

use crate::acoustics::{
    AirConditions, CavityGeometry, EndCorrection, Opening, SpeedOfSoundModel, M3_PER_CM3,
    M3_PER_IN3, M3_PER_LITRE,
};
use crate::text::{number_text, parse_number};

/// The unit the volume is typed in.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub enum VolumeUnit {
    /// Litres.
    #[default]
    Litre,
    /// Cubic centimetres.
    CubicCentimetre,
    /// Cubic inches.
    CubicInch,
}

impl VolumeUnit {
    /// Every unit, in the order of the chooser.
    pub const ALL: [VolumeUnit; 3] = [
        VolumeUnit::Litre,
        VolumeUnit::CubicCentimetre,
        VolumeUnit::CubicInch,
    ];

    /// The unit's symbol on screen.
    pub fn symbol(self) -> &'static str {
        match self {
            VolumeUnit::Litre => "L",
            VolumeUnit::CubicCentimetre => "cm³",
            VolumeUnit::CubicInch => "in³",
        }
    }

    /// The unit's name in the chooser.
    pub fn name(self) -> &'static str {
        match self {
            VolumeUnit::Litre => "litres (L)",
            VolumeUnit::CubicCentimetre => "cubic centimetres (cm³)",
            VolumeUnit::CubicInch => "cubic inches (in³)",
        }
    }

    /// A volume in this unit as cubic metres. Litres and cm³ divide by an
    /// exact power of ten, so 13 L is stored as 0.013, not 0.013000000000000001.
    pub fn to_m3(self, value: f64) -> f64 {
        match self {
            VolumeUnit::Litre => value / 1e3,
            VolumeUnit::CubicCentimetre => value / 1e6,
            VolumeUnit::CubicInch => value * M3_PER_IN3,
        }
    }

    /// Cubic metres in one of this unit.
    pub fn m3_per_unit(self) -> f64 {
        match self {
            VolumeUnit::Litre => M3_PER_LITRE,
            VolumeUnit::CubicCentimetre => M3_PER_CM3,
            VolumeUnit::CubicInch => M3_PER_IN3,
        }
    }
}

/// The three opening shapes.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum OpeningKind {
    /// A round hole: diameter.
    Round,
    /// An elliptical hole: length × width.
    Oval,
    /// A slender slot (an f-hole): length × mean width.
    Slot,
}

impl OpeningKind {
    /// Every kind, in the order of the chooser.
    pub const ALL: [OpeningKind; 3] = [OpeningKind::Round, OpeningKind::Oval, OpeningKind::Slot];

    /// The kind's name on screen.
    pub fn name(self) -> &'static str {
        match self {
            OpeningKind::Round => "round hole",
            OpeningKind::Oval => "oval",
            OpeningKind::Slot => "slot (f-hole)",
        }
    }

    /// Names of the sizes typed for this kind: the first, and the second if
    /// there is one.
    pub fn size_names(self) -> (&'static str, Option<&'static str>) {
        match self {
            OpeningKind::Round => ("diameter", None),
            OpeningKind::Oval => ("length", Some("width")),
            OpeningKind::Slot => ("length", Some("mean width")),
        }
    }
}

/// One opening as typed.
#[derive(Clone, Debug, PartialEq)]
pub struct OpeningDraft {
    /// Its shape.
    pub kind: OpeningKind,
    /// Diameter (round) or length (oval, slot), mm, as typed.
    pub first_mm: String,
    /// Width (oval) or mean width (slot), mm, as typed; unused for round.
    pub second_mm: String,
}

impl OpeningDraft {
    /// A round hole of this diameter.
    pub fn round(diameter_mm: f64) -> Self {
        Self::from_opening(&Opening::Round { diameter_mm })
    }

    /// A slot of this length and mean width.
    pub fn slot(length_mm: f64, mean_width_mm: f64) -> Self {
        Self::from_opening(&Opening::Slot {
            length_mm,
            mean_width_mm,
        })
    }

    /// The draft of an opening.
    pub fn from_opening(opening: &Opening) -> Self {
        match *opening {
            Opening::Round { diameter_mm } => OpeningDraft {
                kind: OpeningKind::Round,
                first_mm: number_text(diameter_mm),
                second_mm: String::new(),
            },
            Opening::Oval {
                length_mm,
                width_mm,
            } => OpeningDraft {
                kind: OpeningKind::Oval,
                first_mm: number_text(length_mm),
                second_mm: number_text(width_mm),
            },
            Opening::Slot {
                length_mm,
                mean_width_mm,
            } => OpeningDraft {
                kind: OpeningKind::Slot,
                first_mm: number_text(length_mm),
                second_mm: number_text(mean_width_mm),
            },
        }
    }

    /// Changes the shape, keeping the sizes typed where they still make
    /// sense (a width is offered when the new shape needs one).
    pub fn set_kind(&mut self, kind: OpeningKind) {
        if kind != OpeningKind::Round && self.second_mm.trim().is_empty() {
            self.second_mm = match kind {
                OpeningKind::Slot => "8".to_owned(),
                _ => self.first_mm.clone(),
            };
        }
        self.kind = kind;
    }

    /// The opening, or one sentence naming the field that is not a number.
    /// `position` is the 1-based place in the list.
    pub fn to_opening(&self, position: usize) -> Result<Opening, String> {
        let (first_name, second_name) = self.kind.size_names();
        let first = parse_number(
            &format!("the {first_name} of opening {position}"),
            &self.first_mm,
        )?;
        let second = match second_name {
            Some(name) => parse_number(
                &format!("the {name} of opening {position}"),
                &self.second_mm,
            )?,
            None => 0.0,
        };
        Ok(match self.kind {
            OpeningKind::Round => Opening::Round { diameter_mm: first },
            OpeningKind::Oval => Opening::Oval {
                length_mm: first,
                width_mm: second,
            },
            OpeningKind::Slot => Opening::Slot {
                length_mm: first,
                mean_width_mm: second,
            },
        })
    }
}

/// The whole cavity as typed.
#[derive(Clone, Debug, PartialEq)]
pub struct GeometryDraft {
    /// Volume as typed, in `volume_unit`.
    pub volume: String,
    /// The unit of `volume`.
    pub volume_unit: VolumeUnit,
    /// The openings.
    pub openings: Vec<OpeningDraft>,
    /// Wall thickness at the openings, mm.
    pub thickness_mm: String,
    /// End correction model.
    pub end_correction: EndCorrection,
    /// Air temperature, °C.
    pub temp_c: String,
    /// Relative humidity, %.
    pub relative_humidity_pct: String,
    /// Air pressure, kPa.
    pub pressure_kpa: String,
    /// CO2, ppm: not shown, kept from a loaded geometry.
    pub co2_ppm: f64,
    /// Speed-of-sound formula.
    pub sound_model: SpeedOfSoundModel,
}

impl Default for GeometryDraft {
    /// The violin-like body, in default air.
    fn default() -> Self {
        let mut draft = Self::from_geometry(&CavityGeometry::new(1e-3, Vec::new()));
        draft.apply_preset(Preset::ViolinLike);
        draft
    }
}

/// Quick starting points: invented, rounded geometry.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Preset {
    /// 2.0 L, two slots 70 × 8 mm, 2.5 mm wall.
    ViolinLike,
    /// 13 L, one round hole Ø 86 mm, 2.5 mm wall.
    GuitarLike,
}

impl Preset {
    /// Both presets, in the order of the buttons.
    pub const ALL: [Preset; 2] = [Preset::ViolinLike, Preset::GuitarLike];

    /// The button text.
    pub fn name(self) -> &'static str {
        match self {
            Preset::ViolinLike => "Violin-like",
            Preset::GuitarLike => "Guitar-like",
        }
    }

    /// What the button does, for its hover text.
    pub fn description(self) -> &'static str {
        match self {
            Preset::ViolinLike => "A 2.0 L body with two slots of 70 × 8 mm in a 2.5 mm top",
            Preset::GuitarLike => "A 13 L body with one round hole of Ø 86 mm in a 2.5 mm top",
        }
    }
}

impl GeometryDraft {
    /// The draft of a stored geometry; the volume is shown in litres.
    pub fn from_geometry(geometry: &CavityGeometry) -> Self {
        let mut draft = GeometryDraft {
            volume: String::new(),
            volume_unit: VolumeUnit::Litre,
            openings: geometry
                .openings
                .iter()
                .map(OpeningDraft::from_opening)
                .collect(),
            thickness_mm: number_text(geometry.wall_thickness_mm),
            end_correction: geometry.end_correction,
            temp_c: number_text(geometry.air.temp_c),
            relative_humidity_pct: number_text(geometry.air.relative_humidity_pct),
            pressure_kpa: number_text(geometry.air.pressure_pa / 1000.0),
            co2_ppm: geometry.air.co2_ppm,
            sound_model: geometry.sound_model,
        };
        draft.set_volume_m3(geometry.volume_m3);
        draft
    }

    /// Replaces the body and openings with a preset; the air stays.
    pub fn apply_preset(&mut self, preset: Preset) {
        let (volume_l, openings) = match preset {
            Preset::ViolinLike => (
                2.0,
                vec![OpeningDraft::slot(70.0, 8.0), OpeningDraft::slot(70.0, 8.0)],
            ),
            Preset::GuitarLike => (13.0, vec![OpeningDraft::round(86.0)]),
        };
        self.volume_unit = VolumeUnit::Litre;
        self.volume = number_text(volume_l);
        self.openings = openings;
        self.thickness_mm = "2.5".to_owned();
    }

    /// Writes a volume into the text, in the chosen unit.
    pub fn set_volume_m3(&mut self, volume_m3: f64) {
        self.volume = number_text(volume_m3 / self.volume_unit.m3_per_unit());
    }

    /// Changes the unit, converting the typed volume when it is a number.
    pub fn set_volume_unit(&mut self, unit: VolumeUnit) {
        let old = self.volume_unit;
        self.volume_unit = unit;
        if let Ok(value) = parse_number("the volume", &self.volume) {
            self.set_volume_m3(old.to_m3(value));
        }
    }

    /// The air conditions, or one sentence naming the field.
    pub fn air(&self) -> Result<AirConditions, String> {
        let temp_c = parse_number("the air temperature", &self.temp_c)?;
        // ISO 9613-1 uses the temperature only: the other fields are not
        // read, so a half-typed humidity does not block the result.
        let (relative_humidity_pct, pressure_pa) = match self.sound_model {
            SpeedOfSoundModel::Iso9613 => {
                let defaults = AirConditions::default();
                (
                    parse_number("the relative humidity", &self.relative_humidity_pct)
                        .unwrap_or(defaults.relative_humidity_pct),
                    parse_number("the air pressure", &self.pressure_kpa)
                        .map_or(defaults.pressure_pa, |kpa| kpa * 1000.0),
                )
            }
            SpeedOfSoundModel::Cramer => (
                parse_number("the relative humidity", &self.relative_humidity_pct)?,
                parse_number("the air pressure", &self.pressure_kpa)? * 1000.0,
            ),
        };
        Ok(AirConditions {
            temp_c,
            relative_humidity_pct,
            pressure_pa,
            co2_ppm: self.co2_ppm,
        })
    }

    /// The geometry as typed (not yet checked by the acoustics layer), or
    /// one sentence naming the field that is not a number.
    pub fn to_geometry(&self) -> Result<CavityGeometry, String> {
        let volume = parse_number("the volume", &self.volume)?;
        let openings = self
            .openings
            .iter()
            .enumerate()
            .map(|(index, draft)| draft.to_opening(index + 1))
            .collect::<Result<Vec<_>, _>>()?;
        let wall_thickness_mm = parse_number("the wall thickness", &self.thickness_mm)?;
        Ok(CavityGeometry {
            volume_m3: self.volume_unit.to_m3(volume),
            openings,
            wall_thickness_mm,
            end_correction: self.end_correction,
            air: self.air()?,
            sound_model: self.sound_model,
        })
    }
}

/// True when two geometries agree to nine significant digits (a geometry
/// shown as text and read back is not bit-for-bit the same).
pub fn same_geometry(a: &CavityGeometry, b: &CavityGeometry) -> bool {
    let close = |x: f64, y: f64| (x - y).abs() <= 1e-9 * x.abs().max(y.abs()).max(1e-12);
    let same_opening = |p: &Opening, q: &Opening| match (*p, *q) {
        (Opening::Round { diameter_mm: d1 }, Opening::Round { diameter_mm: d2 }) => close(d1, d2),
        (
            Opening::Oval {
                length_mm: l1,
                width_mm: w1,
            },
            Opening::Oval {
                length_mm: l2,
                width_mm: w2,
            },
        )
        | (
            Opening::Slot {
                length_mm: l1,
                mean_width_mm: w1,
            },
            Opening::Slot {
                length_mm: l2,
                mean_width_mm: w2,
            },
        ) => close(l1, l2) && close(w1, w2),
        _ => false,
    };
    close(a.volume_m3, b.volume_m3)
        && a.openings.len() == b.openings.len()
        && a.openings
            .iter()
            .zip(&b.openings)
            .all(|(p, q)| same_opening(p, q))
        && close(a.wall_thickness_mm, b.wall_thickness_mm)
        && a.end_correction == b.end_correction
        && a.sound_model == b.sound_model
        && close(a.air.temp_c, b.air.temp_c)
        && close(a.air.relative_humidity_pct, b.air.relative_humidity_pct)
        && close(a.air.pressure_pa, b.air.pressure_pa)
        && close(a.air.co2_ppm, b.air.co2_ppm)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_default_is_the_violin_like_body_and_round_trips() {
        let draft = GeometryDraft::default();
        let geometry = draft.to_geometry().expect("test value");
        assert_eq!(geometry.volume_m3, 2.0e-3);
        assert_eq!(geometry.openings.len(), 2);
        assert_eq!(geometry.wall_thickness_mm, 2.5);
        assert_eq!(geometry.air, AirConditions::default());
        let again = GeometryDraft::from_geometry(&geometry)
            .to_geometry()
            .expect("test value");
        assert!(same_geometry(&geometry, &again));
    }

    #[test]
    fn changing_the_unit_keeps_the_volume() {
        let mut draft = GeometryDraft::default();
        draft.set_volume_unit(VolumeUnit::CubicCentimetre);
        assert_eq!(draft.volume, "2000");
        draft.set_volume_unit(VolumeUnit::CubicInch);
        let volume_m3 = draft.to_geometry().expect("test value").volume_m3;
        assert!((volume_m3 - 2.0e-3).abs() < 1e-8, "{volume_m3}");
    }

    #[test]
    fn a_bad_opening_size_names_the_opening() {
        let mut draft = GeometryDraft::default();
        draft.openings[1].second_mm = "wide".to_owned();
        assert_eq!(
            draft.to_geometry().unwrap_err(),
            "The mean width of opening 2 \"wide\" is not a number."
        );
    }

    #[test]
    fn iso_model_ignores_unfinished_humidity() {
        let mut draft = GeometryDraft {
            relative_humidity_pct: "x".to_owned(),
            ..GeometryDraft::default()
        };
        assert!(draft.to_geometry().is_err());
        draft.sound_model = SpeedOfSoundModel::Iso9613;
        assert!(draft.to_geometry().is_ok());
    }
}
