//! Where to carve: for the chosen mode, where a small, even thinning moves
//! it most (`shapes::CarvingMap`); with a second mode to spare, where
//! thinning moves the first and leaves the second, or how it moves their
//! ratio (`shapes::TwoModeGuide`). Always beside its caution: a
//! first-order guide for small, even removals, not a rule.

use eframe::egui::{self, TextureOptions};

use super::map_view::{GuideKey, GuideKind, MapShown};
use crate::shapes::{Raster, TwoModeGuide, CARVING_CAUTION};
use crate::text::num;
use crate::ui::widgets::plate_view::{field_image, legend, Marker, MarkerKind, Palette, PlateView};

/// The colour scale reaches full colour at this quantile of the magnitudes
/// over the mapped area, so a few extreme cells near an edge do not wash
/// out the rest.
const SCALE_QUANTILE: f64 = 0.95;

/// What the limits of the guide are, in words.
const GUIDE_LIMITS: &str = "It counts bending only, as for a flat plate with spruce's stiffness along and across the grain: in an arched plate the arch also stiffens, so real changes are smaller. The band between the outermost tap points and the edge is not mapped (grey).";

/// The values the guide shows, on the chosen mode's raster: its own
/// sensitivity, or combined with the spared mode.
fn guide_values(shown: &MapShown, key: GuideKey) -> Option<Raster> {
    let (index, spare, kind) = key;
    let own = shown.map.modes.get(index)?.carving.as_ref()?;
    let values = match spare.and_then(|s| shown.map.modes.get(s)?.carving.as_ref()) {
        None => own.relative_density.clone(),
        Some(other) => {
            let guide = TwoModeGuide::new(own, other)?;
            match kind {
                GuideKind::Spare => guide.selective,
                GuideKind::Ratio => guide.ratio_change,
            }
        }
    };
    Some(Raster {
        values,
        ..own.raster.clone()
    })
}

/// The `SCALE_QUANTILE` quantile of |values| that are numbers (1 if none).
fn colour_scale(values: &[f64]) -> f64 {
    let mut magnitudes: Vec<f64> = values
        .iter()
        .filter(|v| v.is_finite())
        .map(|v| v.abs())
        .collect();
    if magnitudes.is_empty() {
        return 1.0;
    }
    magnitudes.sort_by(f64::total_cmp);
    let at = ((magnitudes.len() - 1) as f64 * SCALE_QUANTILE).round() as usize;
    let scale = magnitudes[at];
    if scale > 0.0 {
        scale
    } else {
        1.0
    }
}

/// The carving guide of the chosen mode, its controls, legend and
/// cautions.
pub fn carving_panel(ui: &mut egui::Ui, shown: &mut MapShown, max_size: egui::Vec2) {
    let index = shown.chosen;
    let name = shown.mode_name(index);
    ui.strong("Where to carve");
    ui.colored_label(ui.visuals().warn_fg_color, CARVING_CAUTION);
    if shown.spare == Some(index) {
        shown.spare = None;
    }
    let mut spare = shown.spare;
    egui::ComboBox::from_label("Mode to spare")
        .selected_text(spare.map_or_else(|| "none".to_owned(), |s| shown.mode_name(s)))
        .show_ui(ui, |ui| {
            ui.selectable_value(&mut spare, None, "none");
            for other in (0..shown.map.modes.len()).filter(|&o| o != index) {
                ui.selectable_value(&mut spare, Some(other), shown.mode_name(other));
            }
        });
    shown.spare = spare;
    let spare_name = spare.map(|s| shown.mode_name(s));
    if let Some(spare_name) = &spare_name {
        ui.horizontal_wrapped(|ui| {
            ui.radio_value(
                &mut shown.guide,
                GuideKind::Spare,
                format!("move {name}, spare {spare_name}"),
            );
            ui.radio_value(&mut shown.guide, GuideKind::Ratio, "change their ratio");
        });
    }
    let key = (index, spare, shown.guide);
    if shown.guide_texture.as_ref().map(|(k, _, _)| *k) != Some(key) {
        shown.guide_texture = guide_values(shown, key).map(|raster| {
            let scale = colour_scale(&raster.values);
            let image = field_image(&shown.map.outline, &raster, Palette::Carving, scale);
            let texture = ui
                .ctx()
                .load_texture("carving guide", image, TextureOptions::LINEAR);
            (key, texture, scale)
        });
    }
    let Some((_, texture, scale)) = shown.guide_texture.clone() else {
        ui.weak("No guide: the shape could not be fitted.");
        return;
    };
    let markers: Vec<Marker> = shown
        .map
        .points
        .iter()
        .map(|p| Marker::at(p, MarkerKind::Plain, p.name.clone()))
        .collect();
    let description = match (&spare_name, shown.guide) {
        (None, _) => format!("Carving guide for {name}"),
        (Some(other), GuideKind::Spare) => format!("Carving guide: move {name}, spare {other}"),
        (Some(other), GuideKind::Ratio) => format!("Carving guide: the ratio of {name} to {other}"),
    };
    PlateView {
        outline: &shown.map.outline,
        field: Some(&texture),
        lines: &[],
        markers: &markers,
        palette: Palette::Carving,
        description,
    }
    .show(ui, max_size);
    let (left, right) = match (&spare_name, shown.guide) {
        (None, _) => ("thinning lowers it", "raises it"),
        (Some(_), GuideKind::Spare) => ("lowers it, spares the other", "raises it"),
        (Some(_), GuideKind::Ratio) => ("narrows the ratio", "widens it"),
    };
    legend(
        ui,
        Palette::Carving,
        left,
        &format!(
            "Full colour: {} times the change from thinning the whole plate evenly, per area.",
            num(scale, 1)
        ),
        right,
    );
    ui.weak(GUIDE_LIMITS);
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_colour_scale_ignores_the_few_extremes_and_the_unmapped() {
        let mut values: Vec<f64> = (0..100).map(|i| -f64::from(i) / 100.0).collect();
        values.push(f64::NAN);
        values.push(-50.0);
        let scale = colour_scale(&values);
        // 101 magnitudes 0, 0.01 … 0.99, 50: the 95 % point is 0.95.
        assert!((scale - 0.95).abs() < 1e-9, "{scale}");
        assert_eq!(colour_scale(&[f64::NAN]), 1.0);
        assert_eq!(colour_scale(&[0.0, 0.0]), 1.0);
    }
}
