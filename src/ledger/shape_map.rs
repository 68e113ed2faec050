//! Shape maps kept in a pass (since schema version 4): the outline and the
//! tap points, and for each mode its frequency, Q, label if any, signed
//! values, spreads, uncertainties and quality. Made from a
//! [`crate::shapes::ShapeMap`]; checked on load and save.
//!
//! The outline is stored as [`OutlineShape`] itself: a change to that type
//! is a change of the build-file layout and needs a new schema version.

use serde::{Deserialize, Serialize};

use super::LedgerError;
use crate::shapes::{ModeShape, Outline, OutlineShape, ShapeMap, TapPoint};

/// One tap point of a stored map.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct StoredTapPoint {
    /// The point's name ("3B").
    pub name: String,
    /// Across the part, mm (0 on the centre line).
    pub x_mm: f64,
    /// Along the part, mm (0 at the lower end).
    pub y_mm: f64,
    /// Taps used at the point.
    pub taps: u32,
}

/// One mode of a stored map.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct StoredModeShape {
    /// Hz.
    pub frequency_hz: f64,
    /// Quality factor.
    pub q: f64,
    /// One of the part's labels, if the maker named the mode.
    pub label: Option<String>,
    /// Signed value at each point (in point order), largest magnitude 1.
    pub values: Vec<f64>,
    /// Spread of each point's value over its taps.
    pub spreads: Vec<f64>,
    /// Standard uncertainty of each point's value.
    pub uncertainties: Vec<f64>,
    /// How well the shape is determined, 0 to 1.
    pub quality: f64,
}

/// A pass's shape map.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct StoredShapeMap {
    /// The part's outline, kind and size.
    pub outline: OutlineShape,
    /// The tap points, in the map's order.
    pub points: Vec<StoredTapPoint>,
    /// The modes, lowest first.
    pub modes: Vec<StoredModeShape>,
}

impl StoredShapeMap {
    /// The record of a measured map over `outline` (no labels yet).
    pub fn from_map(outline: OutlineShape, map: &ShapeMap) -> Self {
        Self {
            outline,
            points: map
                .points
                .iter()
                .map(|p| StoredTapPoint {
                    name: p.point.name.clone(),
                    x_mm: p.point.x_mm,
                    y_mm: p.point.y_mm,
                    taps: u32::try_from(p.taps_used()).unwrap_or(u32::MAX),
                })
                .collect(),
            modes: map.modes.iter().map(StoredModeShape::from_shape).collect(),
        }
    }

    /// The tap points as the shapes code takes them.
    pub fn tap_points(&self) -> Vec<TapPoint> {
        self.points
            .iter()
            .map(|p| TapPoint::new(p.name.clone(), p.x_mm, p.y_mm))
            .collect()
    }

    /// The mode labelled `label`, if any.
    pub fn mode_labelled(&self, label: &str) -> Option<&StoredModeShape> {
        self.modes
            .iter()
            .find(|m| m.label.as_deref() == Some(label))
    }

    /// Checks the map: a drawable outline; at least two points with
    /// distinct non-empty names, finite positions and at least one tap;
    /// per mode a positive frequency and Q, one value, spread and
    /// uncertainty per point (values within ±1, the others not negative),
    /// a quality from 0 to 1, and a label from `labels` used once at most.
    pub fn validate(&self, where_: &str, labels: &[String]) -> Result<(), LedgerError> {
        let invalid =
            |what: String| Err(LedgerError::Invalid(format!("{where_}: shape map: {what}")));
        if let Err(problem) = Outline::new(self.outline) {
            return invalid(problem.to_string());
        }
        if self.points.len() < 2 {
            return invalid(format!(
                "{} tap points; a map needs at least two",
                self.points.len()
            ));
        }
        for (index, point) in self.points.iter().enumerate() {
            if point.name.trim().is_empty() {
                return invalid(format!("tap point {} has no name", index + 1));
            }
            if self.points[..index].iter().any(|p| p.name == point.name) {
                return invalid(format!("tap point \"{}\" is listed twice", point.name));
            }
            if !(point.x_mm.is_finite() && point.y_mm.is_finite()) {
                return invalid(format!(
                    "tap point \"{}\" has no usable position",
                    point.name
                ));
            }
            if point.taps == 0 {
                return invalid(format!("tap point \"{}\" has no taps", point.name));
            }
        }
        for (index, mode) in self.modes.iter().enumerate() {
            let which = format!("mode {} ({} Hz)", index + 1, mode.frequency_hz);
            if let Some(problem) = mode.problem(self.points.len()) {
                return invalid(format!("{which}: {problem}"));
            }
            if let Some(label) = &mode.label {
                if !labels.contains(label) {
                    return invalid(format!(
                        "{which}: \"{label}\" is not one of the part's labels"
                    ));
                }
                if self.modes[..index]
                    .iter()
                    .any(|m| m.label.as_ref() == Some(label))
                {
                    return invalid(format!("label \"{label}\" is on two modes"));
                }
            }
        }
        Ok(())
    }
}

impl StoredModeShape {
    /// The record of one measured mode (no label).
    pub fn from_shape(shape: &ModeShape) -> Self {
        Self {
            frequency_hz: shape.frequency_hz,
            q: shape.q,
            label: None,
            values: shape.values.clone(),
            spreads: shape.spreads.clone(),
            uncertainties: shape.uncertainties.clone(),
            quality: shape.quality,
        }
    }

    /// What is wrong with the mode's numbers, if anything.
    fn problem(&self, points: usize) -> Option<String> {
        let positive = |v: f64| v.is_finite() && v > 0.0;
        if !positive(self.frequency_hz) {
            return Some("the frequency must be a positive number".into());
        }
        if !positive(self.q) {
            return Some(format!("Q is {}; it must be a positive number", self.q));
        }
        for (what, list) in [
            ("values", &self.values),
            ("spreads", &self.spreads),
            ("uncertainties", &self.uncertainties),
        ] {
            if list.len() != points {
                return Some(format!("{} {what} for {points} tap points", list.len()));
            }
        }
        if let Some(v) = self
            .values
            .iter()
            .find(|v| !(v.is_finite() && v.abs() <= 1.0 + 1e-9))
        {
            return Some(format!("a value is {v}; values lie from −1 to 1"));
        }
        let not_negative = |v: &f64| v.is_finite() && *v >= 0.0;
        if let Some(s) = self
            .spreads
            .iter()
            .chain(&self.uncertainties)
            .find(|v| !not_negative(v))
        {
            return Some(format!(
                "a spread or uncertainty is {s}; they must be numbers of 0 or more"
            ));
        }
        if !(0.0..=1.0).contains(&self.quality) {
            return Some(format!(
                "the quality is {}; it lies from 0 to 1",
                self.quality
            ));
        }
        None
    }
}
