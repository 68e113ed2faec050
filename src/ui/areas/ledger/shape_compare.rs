//! Two passes' shape maps side by side: the same mode's shape and nodal
//! lines before and after a change to the wood. The maker chooses the two
//! passes (of those that keep a map) and the mode (by label, or by
//! frequency when neither map is labelled).

use std::collections::HashMap;

use eframe::egui::{self, TextureHandle, TextureOptions};

use crate::ledger::{Part, Pass, StoredModeShape, StoredShapeMap};
use crate::report::shapes::stored_mode_drawing;
use crate::shapes::{ModeDrawing, Outline};
use crate::text::num;
use crate::ui::context::AreaContext;
use crate::ui::widgets::plate_view::{field_image, legend, value_markers, Palette, PlateView};

/// A map's mode counts as the same as one chosen by frequency within this
/// relative distance (a pass of thinning moves a mode by a few per cent).
const SAME_MODE_REACH: f64 = 0.15;

/// Which mode to show in both maps.
#[derive(Clone, Debug, PartialEq)]
enum ModeChoice {
    /// The mode with this label in each map.
    Label(String),
    /// The mode nearest this frequency in each map.
    Frequency(f64),
}

impl ModeChoice {
    fn text(&self) -> String {
        match self {
            ModeChoice::Label(label) => label.clone(),
            ModeChoice::Frequency(hz) => format!("near {} Hz", num(*hz, 1)),
        }
    }

    /// The map's mode for this choice.
    fn find<'m>(&self, map: &'m StoredShapeMap) -> Option<(usize, &'m StoredModeShape)> {
        match self {
            ModeChoice::Label(label) => map
                .modes
                .iter()
                .enumerate()
                .find(|(_, m)| m.label.as_deref() == Some(label.as_str())),
            ModeChoice::Frequency(hz) => map
                .modes
                .iter()
                .enumerate()
                .map(|(i, m)| (i, m, (m.frequency_hz / hz).ln().abs()))
                .filter(|(_, _, d)| *d <= SAME_MODE_REACH.ln_1p())
                .min_by(|a, b| a.2.total_cmp(&b.2))
                .map(|(i, m, _)| (i, m)),
        }
    }
}

/// One mode of one pass, drawn: (part, pass, mode index, a fingerprint
/// of the mode's numbers, so a map kept again is drawn again).
type DrawingKey = (String, u32, usize, u64);

fn fingerprint(mode: &StoredModeShape) -> u64 {
    use std::hash::{Hash, Hasher};
    let mut hasher = std::collections::hash_map::DefaultHasher::new();
    for value in std::iter::once(&mode.frequency_hz)
        .chain(&mode.values)
        .chain(&mode.uncertainties)
    {
        value.to_bits().hash(&mut hasher);
    }
    hasher.finish()
}

/// What the side-by-side view remembers.
#[derive(Default)]
pub struct ShapeCompare {
    left: Option<u32>,
    right: Option<u32>,
    mode: Option<ModeChoice>,
    drawings: HashMap<DrawingKey, Result<(ModeDrawing, TextureHandle), String>>,
}

impl std::fmt::Debug for ShapeCompare {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.debug_struct("ShapeCompare")
            .field("left", &self.left)
            .field("right", &self.right)
            .field("mode", &self.mode)
            .finish_non_exhaustive()
    }
}

/// The passes of `part` that keep a map, oldest first.
fn mapped_passes(part: &Part) -> Vec<&Pass> {
    part.passes()
        .iter()
        .filter(|p| p.shape_map.is_some())
        .collect()
}

/// Draws the view when the part has a pass with a map (nothing otherwise).
pub fn side_by_side(ui: &mut egui::Ui, compare: &mut ShapeCompare, part: &Part, ctx: &AreaContext) {
    let passes = mapped_passes(part);
    if passes.is_empty() {
        return;
    }
    ui.separator();
    ui.heading("Shapes, pass against pass");
    keep_choices_valid(compare, &passes);
    let numbers: Vec<u32> = passes.iter().map(|p| p.number()).collect();
    let choices = mode_choices(&passes, compare.left, compare.right);
    if compare.mode.as_ref().is_none_or(|m| !choices.contains(m)) {
        compare.mode = choices
            .iter()
            .find(|c| matches!(c, ModeChoice::Label(l) if l == "mode 5"))
            .or(choices.first())
            .cloned();
    }
    ui.horizontal_wrapped(|ui| {
        pass_picker(ui, "Left pass", &mut compare.left, &numbers);
        pass_picker(ui, "Right pass", &mut compare.right, &numbers);
        let selected = compare
            .mode
            .as_ref()
            .map_or_else(String::new, ModeChoice::text);
        egui::ComboBox::from_label("Mode shown")
            .selected_text(selected)
            .show_ui(ui, |ui| {
                for choice in &choices {
                    ui.selectable_value(&mut compare.mode, Some(choice.clone()), choice.text());
                }
            });
    });
    if passes.len() == 1 {
        ui.weak(
            "Only one pass keeps a map so far; keep one with a later pass (Shapes) to compare.",
        );
    }
    let unit = ctx.units.length;
    let width = ((ui.available_width() - 30.0) / 2.0).clamp(200.0, 420.0);
    let size = egui::vec2(width, 380.0);
    ui.horizontal_top(|ui| {
        let shown = if passes.len() == 1 {
            vec![compare.left]
        } else {
            vec![compare.left, compare.right]
        };
        for number in shown.into_iter().flatten() {
            let Some(pass) = part.pass(number) else {
                continue;
            };
            ui.vertical(|ui| {
                ui.set_width(width);
                one_pass(ui, compare, part.name(), pass, unit, size);
            });
        }
    });
    legend(
        ui,
        Palette::Shape,
        "one way",
        "White: still; black lines: nodal lines; hollow grey dots: sign not certain.",
        "the other way",
    );
}

/// Picks the first and the latest mapped passes when the chosen ones
/// are gone or not yet chosen.
fn keep_choices_valid(compare: &mut ShapeCompare, passes: &[&Pass]) {
    let known = |n: Option<u32>| n.is_some_and(|n| passes.iter().any(|p| p.number() == n));
    if !known(compare.left) {
        compare.left = passes.first().map(|p| p.number());
    }
    if !known(compare.right) {
        compare.right = passes.last().map(|p| p.number());
    }
}

/// The modes to offer: every label used in either chosen map; without
/// labels, the left map's modes by frequency.
fn mode_choices(passes: &[&Pass], left: Option<u32>, right: Option<u32>) -> Vec<ModeChoice> {
    let maps: Vec<&StoredShapeMap> = [left, right]
        .into_iter()
        .flatten()
        .filter_map(|n| passes.iter().find(|p| p.number() == n)?.shape_map.as_ref())
        .collect();
    let mut choices: Vec<ModeChoice> = Vec::new();
    for map in &maps {
        for label in map.modes.iter().filter_map(|m| m.label.clone()) {
            let choice = ModeChoice::Label(label);
            if !choices.contains(&choice) {
                choices.push(choice);
            }
        }
    }
    if choices.is_empty() {
        if let Some(map) = maps.first() {
            choices = map
                .modes
                .iter()
                .map(|m| ModeChoice::Frequency(m.frequency_hz))
                .collect();
        }
    }
    choices
}

fn pass_picker(ui: &mut egui::Ui, label: &str, chosen: &mut Option<u32>, numbers: &[u32]) {
    egui::ComboBox::from_label(label)
        .selected_text(chosen.map_or_else(String::new, |n| format!("pass {n}")))
        .show_ui(ui, |ui| {
            for &n in numbers {
                ui.selectable_value(chosen, Some(n), format!("pass {n}"));
            }
        });
}

fn one_pass(
    ui: &mut egui::Ui,
    compare: &mut ShapeCompare,
    part: &str,
    pass: &Pass,
    unit: crate::text::LengthUnit,
    size: egui::Vec2,
) {
    let number = pass.number();
    let Some(map) = &pass.shape_map else {
        return;
    };
    let Some((index, mode)) = compare.mode.as_ref().and_then(|c| c.find(map)) else {
        ui.strong(format!("Pass {number}"));
        ui.weak(format!(
            "Pass {number}'s map has no mode {}.",
            compare
                .mode
                .as_ref()
                .map_or_else(String::new, ModeChoice::text)
        ));
        return;
    };
    ui.strong(format!(
        "Pass {number} · {} Hz · quality {}",
        num(mode.frequency_hz, 1),
        num(mode.quality, 2)
    ));
    let key = (part.to_owned(), number, index, fingerprint(mode));
    let drawn = compare
        .drawings
        .entry(key)
        .or_insert_with(|| draw(ui.ctx(), map, mode, number, index));
    let (drawing, texture) = match drawn {
        Ok((drawing, texture)) => (drawing, texture),
        Err(problem) => {
            ui.colored_label(ui.visuals().error_fg_color, problem.clone());
            return;
        }
    };
    let outline = match Outline::new(map.outline) {
        Ok(outline) => outline,
        Err(problem) => {
            ui.colored_label(
                ui.visuals().error_fg_color,
                crate::text::sentence(&problem.to_string()),
            );
            return;
        }
    };
    let taps: Vec<usize> = map.points.iter().map(|p| p.taps as usize).collect();
    let markers = value_markers(
        &map.tap_points(),
        &mode.values,
        &mode.spreads,
        &mode.uncertainties,
        Some(&taps),
        unit,
    );
    PlateView {
        outline: &outline,
        field: Some(texture),
        lines: &drawing.nodal_lines,
        markers: &markers,
        palette: Palette::Shape,
        description: format!("Pass {number}: shape at {} Hz", num(mode.frequency_hz, 1)),
    }
    .show(ui, size);
}

/// Fits a stored mode's surface and makes its image.
fn draw(
    ctx: &egui::Context,
    map: &StoredShapeMap,
    mode: &StoredModeShape,
    pass: u32,
    index: usize,
) -> Result<(ModeDrawing, TextureHandle), String> {
    let (outline, drawing) = stored_mode_drawing(map, mode)
        .map_err(|e| crate::text::sentence(&format!("pass {pass}'s map cannot be drawn: {e}")))?;
    let image = field_image(
        &outline,
        &drawing.raster,
        Palette::Shape,
        drawing.raster.peak_inside(),
    );
    let texture = ctx.load_texture(
        format!("ledger shape {pass} {index}"),
        image,
        TextureOptions::LINEAR,
    );
    Ok((drawing, texture))
}
