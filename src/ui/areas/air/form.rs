//! What the maker types in the Air area, kept as text in the maker's units
//! (followed when they change), and how it becomes a [`CavityGeometry`] in
//! mm, m³ and °C. No egui here: presets and unit conversion, so they can be
//! tested on their own.
//!
//! Every refusal is one sentence that names the field ("The volume \"abc\"
//! is not a number."), read by the one rule of `text::typed`.

use crate::acoustics::{
    AirConditions, CavityGeometry, EndCorrection, Opening, SpeedOfSoundModel, M3_PER_CM3,
    M3_PER_IN3, M3_PER_LITRE,
};
use crate::text::units::{convert_typed, field_text, parse_in, Unit};
use crate::text::{number_text, parse_number, LengthUnit, TemperatureUnit, Units};

/// The unit the volume is typed in: the maker's (litres or cubic inches),
/// or cubic centimetres, which this field alone offers.
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

    /// The field's unit for the maker's volume unit.
    pub fn of(unit: crate::text::VolumeUnit) -> Self {
        match unit {
            crate::text::VolumeUnit::Litre => VolumeUnit::Litre,
            crate::text::VolumeUnit::CubicInch => VolumeUnit::CubicInch,
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

impl Unit for VolumeUnit {
    fn symbol(self) -> &'static str {
        VolumeUnit::symbol(self)
    }
    fn to_stored(self, value: f64) -> f64 {
        self.to_m3(value)
    }
    fn shown_from_stored(self, stored: f64) -> f64 {
        stored / self.m3_per_unit()
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
    /// Diameter (round) or length (oval, slot), as typed in the draft's
    /// length unit.
    pub first: String,
    /// Width (oval) or mean width (slot), as typed; unused for round.
    pub second: String,
}

impl OpeningDraft {
    /// A round hole of this diameter, typed in `unit`.
    pub fn round(diameter_mm: f64, unit: LengthUnit) -> Self {
        Self::from_opening(&Opening::Round { diameter_mm }, unit)
    }

    /// A slot of this length and mean width, typed in `unit`.
    pub fn slot(length_mm: f64, mean_width_mm: f64, unit: LengthUnit) -> Self {
        Self::from_opening(
            &Opening::Slot {
                length_mm,
                mean_width_mm,
            },
            unit,
        )
    }

    /// The draft of an opening, its sizes written in `unit`.
    pub fn from_opening(opening: &Opening, unit: LengthUnit) -> Self {
        let sizes = opening.sizes_mm();
        let size = |index: usize| {
            sizes
                .get(index)
                .map_or_else(String::new, |mm| field_text(unit, *mm))
        };
        let kind = match opening {
            Opening::Round { .. } => OpeningKind::Round,
            Opening::Oval { .. } => OpeningKind::Oval,
            Opening::Slot { .. } => OpeningKind::Slot,
        };
        OpeningDraft {
            kind,
            first: size(0),
            second: size(1),
        }
    }

    /// Changes the shape, keeping the sizes typed where they still make
    /// sense (a width is offered when the new shape needs one: 8 mm for a
    /// slot, written in `unit`).
    pub fn set_kind(&mut self, kind: OpeningKind, unit: LengthUnit) {
        if kind != OpeningKind::Round && self.second.trim().is_empty() {
            self.second = match kind {
                OpeningKind::Slot => field_text(unit, 8.0),
                _ => self.first.clone(),
            };
        }
        self.kind = kind;
    }

    /// The opening in mm (its sizes typed in `unit`), or one sentence
    /// naming the field that is not a number. `position` is the 1-based
    /// place in the list.
    pub fn to_opening(&self, position: usize, unit: LengthUnit) -> Result<Opening, String> {
        let (first_name, second_name) = self.kind.size_names();
        let first = parse_in(
            unit,
            &format!("the {first_name} of opening {position}"),
            &self.first,
        )?;
        let second = match second_name {
            Some(name) => parse_in(
                unit,
                &format!("the {name} of opening {position}"),
                &self.second,
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
    /// The maker's units the fields follow: opening sizes and the wall in
    /// `units.length`, the air in `units.temperature`; the volume in
    /// `volume_unit`, which starts as `units.volume`.
    pub units: Units,
    /// Volume as typed, in `volume_unit`.
    pub volume: String,
    /// The unit of `volume`.
    pub volume_unit: VolumeUnit,
    /// The openings.
    pub openings: Vec<OpeningDraft>,
    /// Wall thickness at the openings, as typed.
    pub thickness: String,
    /// End correction model.
    pub end_correction: EndCorrection,
    /// Air temperature, as typed.
    pub temp: String,
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
    /// The violin-like body, in default air, in metric units.
    fn default() -> Self {
        let mut draft =
            Self::from_geometry(&CavityGeometry::new(1e-3, Vec::new()), Units::metric());
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
    /// The draft of a stored geometry, written in `units`.
    pub fn from_geometry(geometry: &CavityGeometry, units: Units) -> Self {
        let mut draft = GeometryDraft {
            units,
            volume: String::new(),
            volume_unit: VolumeUnit::of(units.volume),
            openings: geometry
                .openings
                .iter()
                .map(|o| OpeningDraft::from_opening(o, units.length))
                .collect(),
            thickness: field_text(units.length, geometry.wall_thickness_mm),
            end_correction: geometry.end_correction,
            temp: field_text(units.temperature, geometry.air.temp_c),
            relative_humidity_pct: number_text(geometry.air.relative_humidity_pct),
            pressure_kpa: number_text(geometry.air.pressure_pa / 1000.0),
            co2_ppm: geometry.air.co2_ppm,
            sound_model: geometry.sound_model,
        };
        draft.set_volume_m3(geometry.volume_m3);
        draft
    }

    /// Replaces the body and openings with a preset (written in the
    /// draft's units); the air stays.
    pub fn apply_preset(&mut self, preset: Preset) {
        let unit = self.units.length;
        let (volume_l, openings) = match preset {
            Preset::ViolinLike => (
                2.0,
                vec![
                    OpeningDraft::slot(70.0, 8.0, unit),
                    OpeningDraft::slot(70.0, 8.0, unit),
                ],
            ),
            Preset::GuitarLike => (13.0, vec![OpeningDraft::round(86.0, unit)]),
        };
        self.volume_unit = VolumeUnit::of(self.units.volume);
        self.set_volume_m3(volume_l * M3_PER_LITRE);
        self.openings = openings;
        self.thickness = field_text(unit, 2.5);
    }

    /// Follows a change of the maker's units: what is typed is rewritten
    /// in the new units (text that is not a number stays as it is), and
    /// the volume moves to the new volume unit.
    pub fn follow_units(&mut self, units: Units) {
        let old = self.units;
        if old == units {
            return;
        }
        for opening in &mut self.openings {
            convert_typed(&mut opening.first, old.length, units.length);
            convert_typed(&mut opening.second, old.length, units.length);
        }
        convert_typed(&mut self.thickness, old.length, units.length);
        convert_typed(&mut self.temp, old.temperature, units.temperature);
        self.units = units;
        if old.volume != units.volume {
            self.set_volume_unit(VolumeUnit::of(units.volume));
        }
    }

    /// The unit opening sizes and the wall are typed in.
    pub fn length_unit(&self) -> LengthUnit {
        self.units.length
    }

    /// The unit the air temperature is typed in.
    pub fn temperature_unit(&self) -> TemperatureUnit {
        self.units.temperature
    }

    /// Writes a volume into the text, in the chosen unit.
    pub fn set_volume_m3(&mut self, volume_m3: f64) {
        self.volume = number_text(volume_m3 / self.volume_unit.m3_per_unit());
    }

    /// Changes the unit, converting the typed volume when it is a number.
    pub fn set_volume_unit(&mut self, unit: VolumeUnit) {
        convert_typed(&mut self.volume, self.volume_unit, unit);
        self.volume_unit = unit;
    }

    /// The air conditions, or one sentence naming the field.
    pub fn air(&self) -> Result<AirConditions, String> {
        let temp_c = parse_in(self.units.temperature, "the air temperature", &self.temp)?;
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
            .map(|(index, draft)| draft.to_opening(index + 1, self.units.length))
            .collect::<Result<Vec<_>, _>>()?;
        let wall_thickness_mm = parse_in(self.units.length, "the wall thickness", &self.thickness)?;
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

/// True when two geometries agree to the six significant digits a field
/// shows (a geometry shown as text, in inches say, and read back is not
/// bit-for-bit the same).
pub fn same_geometry(a: &CavityGeometry, b: &CavityGeometry) -> bool {
    let close = |x: f64, y: f64| (x - y).abs() <= 1e-5 * x.abs().max(y.abs()).max(1e-12);
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
        let again = GeometryDraft::from_geometry(&geometry, Units::metric())
            .to_geometry()
            .expect("test value");
        assert!(same_geometry(&geometry, &again));
    }

    #[test]
    fn the_fields_follow_the_maker_s_units_and_the_geometry_stays() {
        let mut draft = GeometryDraft::default();
        let before = draft.to_geometry().expect("test value");
        draft.follow_units(Units::imperial());
        // 70 mm = 2.755906 in, 2.5 mm = 0.0984252 in, 20 °C = 68 °F, 2 L =
        // 122.0475 in³ (1 in = 25.4 mm exactly), each to the digits that
        // bring the metric number back.
        assert_eq!(draft.openings[0].first, "2.755906");
        assert_eq!(draft.thickness, "0.0984252");
        assert_eq!(draft.temp, "68");
        assert_eq!(draft.volume_unit, VolumeUnit::CubicInch);
        assert_eq!(draft.volume, "122.0475");
        let after = draft.to_geometry().expect("test value");
        assert!(same_geometry(&before, &after));
        // A preset in inches is the same body.
        draft.apply_preset(Preset::GuitarLike);
        assert_eq!(draft.openings[0].first, "3.38583");
        draft.follow_units(Units::metric());
        assert_eq!(draft.openings[0].first, "86");
        assert_eq!(draft.volume, "13");
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
        draft.openings[1].second = "wide".to_owned();
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
