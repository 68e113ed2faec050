//! A map on screen: the list of its modes (frequency, Q, how well each
//! shape is determined, label) and the chosen mode's shape as a coloured
//! map over the outline, its nodal lines, and the values at the tap points
//! with their spread and the points whose sign is not certain.

use std::collections::HashMap;

use eframe::egui::{self, TextureHandle, TextureOptions};

use super::work::DrawnMap;
use crate::text::{num, LengthUnit};
use crate::ui::widgets::plate_view::{field_image, legend, value_markers, Palette, PlateView};

/// Quality at or above which a shape is called well determined, and
/// above which fair (our own wording of the estimate's quality figure).
const QUALITY_WELL: f64 = 0.95;
const QUALITY_FAIR: f64 = 0.8;

/// How a carving guide combines the chosen mode with another.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum GuideKind {
    /// Where thinning moves the chosen mode and spares the other.
    Spare,
    /// How thinning moves the ratio of the two frequencies.
    Ratio,
}

/// A map on screen and the choices made on it.
pub struct MapShown {
    pub map: DrawnMap,
    /// The mode shown.
    pub chosen: usize,
    /// One label per mode (the part's labels; placed from its latest pass
    /// where a mode is near a labelled one, changed by the maker).
    pub labels: Vec<Option<String>>,
    /// The mode the carving guide spares, if any.
    pub spare: Option<usize>,
    pub guide: GuideKind,
    /// Field images already made: the shapes per mode, the latest guide.
    shape_textures: HashMap<usize, TextureHandle>,
    pub(super) guide_texture: Option<(GuideKey, TextureHandle, f64)>,
}

/// What a guide image shows: (mode, spared mode, kind).
pub(super) type GuideKey = (usize, Option<usize>, GuideKind);

impl std::fmt::Debug for MapShown {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.debug_struct("MapShown")
            .field("modes", &self.map.modes.len())
            .field("chosen", &self.chosen)
            .field("labels", &self.labels)
            .finish_non_exhaustive()
    }
}

impl MapShown {
    /// A new map on screen, showing the mode labelled "mode 5" (the ring
    /// mode makers watch most) if there is one, else the lowest.
    pub fn new(map: DrawnMap, labels: Vec<Option<String>>) -> Self {
        let chosen = labels
            .iter()
            .position(|l| l.as_deref() == Some("mode 5"))
            .unwrap_or(0);
        Self {
            chosen: chosen.min(map.modes.len().saturating_sub(1)),
            labels,
            map,
            spare: None,
            guide: GuideKind::Spare,
            shape_textures: HashMap::new(),
            guide_texture: None,
        }
    }

    /// "333.4 Hz" or "333.4 Hz (mode 5)".
    pub fn mode_name(&self, index: usize) -> String {
        let Some(mode) = self.map.modes.get(index) else {
            return String::new();
        };
        let hz = format!("{} Hz", num(mode.shape.frequency_hz, 1));
        match self.labels.get(index).cloned().flatten() {
            Some(label) => format!("{hz} ({label})"),
            None => hz,
        }
    }

    fn shape_texture(&mut self, ctx: &egui::Context, index: usize) -> Option<&TextureHandle> {
        if !self.shape_textures.contains_key(&index) {
            let drawing = self.map.modes.get(index)?.drawing.as_ref().ok()?;
            let scale = drawing.raster.peak_inside();
            let image = field_image(&self.map.outline, &drawing.raster, Palette::Shape, scale);
            let texture =
                ctx.load_texture(format!("shape map {index}"), image, TextureOptions::LINEAR);
            self.shape_textures.insert(index, texture);
        }
        self.shape_textures.get(&index)
    }
}

/// Words for a quality figure.
pub fn quality_words(quality: f64) -> &'static str {
    if quality >= QUALITY_WELL {
        "well determined"
    } else if quality >= QUALITY_FAIR {
        "fair"
    } else {
        "poorly determined: a rough sketch"
    }
}

/// The list of modes; a click on a frequency shows that mode. Labels are
/// chosen from `label_choices`.
pub fn mode_list(ui: &mut egui::Ui, shown: &mut MapShown, label_choices: &[String]) {
    let points = shown.map.points.len();
    egui::Grid::new("shapes mode list")
        .num_columns(4)
        .striped(true)
        .spacing([10.0, 3.0])
        .show(ui, |ui| {
            ui.strong("Mode");
            ui.strong("Q");
            ui.strong("Quality");
            ui.strong("Label");
            ui.end_row();
            for index in 0..shown.map.modes.len() {
                let shape = &shown.map.modes[index].shape;
                let text = format!("{} Hz", num(shape.frequency_hz, 1));
                let (q, quality, seen) = (shape.q, shape.quality, shape.points_seen);
                if ui.selectable_label(shown.chosen == index, text).clicked() {
                    shown.chosen = index;
                }
                ui.label(num(q, 0));
                ui.label(num(quality, 2)).on_hover_text(format!(
                    "{}: {} of the mode's energy over all taps is one repeatable shape; the mode showed at {seen} of {points} points",
                    quality_words(quality),
                    num(quality, 3)
                ));
                label_picker(ui, index, shape.frequency_hz, &mut shown.labels, label_choices);
                ui.end_row();
            }
        });
}

fn label_picker(
    ui: &mut egui::Ui,
    index: usize,
    frequency_hz: f64,
    labels: &mut [Option<String>],
    choices: &[String],
) {
    let current = labels.get(index).cloned().flatten();
    let mut picked = current.clone();
    let response = egui::ComboBox::from_id_salt(("shapes mode label", index))
        .width(96.0)
        .selected_text(current.as_deref().unwrap_or("–"))
        .show_ui(ui, |ui| {
            ui.selectable_value(&mut picked, None, "no label");
            for choice in choices {
                ui.selectable_value(&mut picked, Some(choice.clone()), choice);
            }
        });
    let _ = response
        .response
        .accessible_name(format!("Label of the shape at {} Hz", num(frequency_hz, 1)));
    if picked != current {
        // A label names one mode: take it off any other.
        if picked.is_some() {
            for label in labels.iter_mut() {
                if *label == picked {
                    *label = None;
                }
            }
        }
        if let Some(slot) = labels.get_mut(index) {
            *slot = picked;
        }
    }
}

/// The chosen mode's shape: the coloured map, nodal lines and points, its
/// legend and what its figures mean.
pub fn shape_panel(
    ui: &mut egui::Ui,
    shown: &mut MapShown,
    unit: LengthUnit,
    max_size: egui::Vec2,
) {
    let index = shown.chosen;
    let name = shown.mode_name(index);
    ui.strong(format!("Shape at {name}"));
    let texture = shown.shape_texture(ui.ctx(), index).cloned();
    let map = &shown.map;
    let Some(mode) = map.modes.get(index) else {
        return;
    };
    let drawing = match &mode.drawing {
        Ok(drawing) => drawing,
        Err(problem) => {
            ui.colored_label(
                ui.visuals().error_fg_color,
                format!("No surface could be fitted: {problem}"),
            );
            return;
        }
    };
    let shape = &mode.shape;
    let markers = value_markers(
        &map.points,
        &shape.values,
        &shape.spreads,
        &shape.uncertainties,
        Some(&map.taps_used),
        unit,
    );
    let uncertain = markers
        .iter()
        .filter(|m| {
            matches!(
                m.kind,
                crate::ui::widgets::plate_view::MarkerKind::Value { certain: false, .. }
            )
        })
        .count();
    PlateView {
        outline: &map.outline,
        field: texture.as_ref(),
        lines: &drawing.nodal_lines,
        markers: &markers,
        palette: Palette::Shape,
        description: format!(
            "Shape map at {name}: {} nodal line{}",
            drawing.nodal_lines.len(),
            if drawing.nodal_lines.len() == 1 {
                ""
            } else {
                "s"
            }
        ),
    }
    .show(ui, max_size);
    legend(
        ui,
        Palette::Shape,
        "one way",
        "White: still; black lines: nodal lines. Which colour moves which way is arbitrary.",
        "the other way",
    );
    ui.label(format!(
        "Q {} · shape {} ({}) · showed at {} of {} points",
        num(shape.q, 0),
        num(shape.quality, 2),
        quality_words(shape.quality),
        shape.points_seen,
        map.points.len()
    ));
    let uncertain_text = match uncertain {
        0 => "Every point's sign is certain.".to_owned(),
        1 => "The hollow grey dot lies near a nodal line: its sign is not certain.".to_owned(),
        n => format!("{n} hollow grey dots lie near a nodal line: their sign is not certain."),
    };
    ui.weak(format!(
        "Dots: the value at each tap point (size) and its spread over the taps (ring). {uncertain_text}"
    ));
}
