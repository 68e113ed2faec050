//! Keeping a map in the build, and the labels on its modes.
//!
//! A map is kept with the chosen part's **latest pass**: the pass records
//! the part as it is now (mass, modes from Listen), and the grid is tapped
//! in the same state, before the wood changes again. A map needs no mass
//! or spectrum of its own, so it makes no new pass; to map a new state,
//! record its pass first (Listen, then Ledger), then tap the grid. Keeping
//! a map where one is kept already replaces it, after the maker agrees.
//!
//! Labels: each labelled mode of that latest pass names the map's mode
//! nearest to it in frequency (within [`LABEL_REACH`]); the maker can
//! change any of them before keeping.

use eframe::egui;

use super::map_view::MapShown;
use crate::ledger::{Build, Pass, StoredModeShape, StoredShapeMap, StoredTapPoint};
use crate::text::sentence;
use crate::ui::commands::{AppCommand, Area};
use crate::ui::context::AreaContext;

/// A pass's label names a map's mode within this relative distance in
/// frequency (about half a semitone: the map's frequency comes from the
/// same plate in the same state, measured again).
pub const LABEL_REACH: f64 = 0.03;

/// One label per mode (`frequencies_hz`, ascending): each anchor's label
/// on the mode nearest its frequency within [`LABEL_REACH`]; an anchor
/// nearer to a mode wins it.
pub fn labels_near(frequencies_hz: &[f64], anchors: &[(f64, String)]) -> Vec<Option<String>> {
    let mut labels: Vec<Option<String>> = vec![None; frequencies_hz.len()];
    let mut distance = vec![f64::INFINITY; frequencies_hz.len()];
    for (anchor_hz, label) in anchors {
        let nearest = frequencies_hz
            .iter()
            .enumerate()
            .map(|(i, f)| (i, (f / anchor_hz).ln().abs()))
            .min_by(|a, b| a.1.total_cmp(&b.1));
        if let Some((i, d)) = nearest {
            if d <= LABEL_REACH.ln_1p() && d < distance[i] {
                labels[i] = Some(label.clone());
                distance[i] = d;
            }
        }
    }
    labels
}

/// The labelled modes of a pass as anchors.
pub fn pass_anchors(pass: &Pass) -> Vec<(f64, String)> {
    pass.modes()
        .iter()
        .filter_map(|m| Some((m.frequency_hz, m.label_name()?.to_owned())))
        .collect()
}

/// The map on screen in the build's form, with its labels.
pub fn stored_map(shown: &MapShown) -> StoredShapeMap {
    let map = &shown.map;
    StoredShapeMap {
        outline: map.outline.shape(),
        points: map
            .points
            .iter()
            .zip(&map.taps_used)
            .map(|(p, &taps)| StoredTapPoint {
                name: p.name.clone(),
                x_mm: p.x_mm,
                y_mm: p.y_mm,
                taps: u32::try_from(taps).unwrap_or(u32::MAX),
            })
            .collect(),
        modes: map
            .modes
            .iter()
            .zip(&shown.labels)
            .map(|(m, label)| StoredModeShape {
                label: label.clone(),
                ..StoredModeShape::from_shape(&m.shape)
            })
            .collect(),
    }
}

/// Keeps `map` with pass `pass` of `part` (replacing a map kept there):
/// labels the part does not have yet are added to its set, then the map
/// is checked like any map in a build file. Tried on a copy of the part,
/// so a refusal changes nothing. Returns the sentence for the status line.
pub fn keep_in_pass(
    build: &mut Build,
    part: &str,
    pass: u32,
    map: StoredShapeMap,
) -> Result<String, String> {
    let current = build
        .part(part)
        .ok_or_else(|| format!("The build has no part named \"{part}\"."))?;
    let mut trial = current.clone();
    for label in map.modes.iter().filter_map(|m| m.label.clone()) {
        trial
            .add_label(label)
            .map_err(|e| sentence(&e.to_string()))?;
    }
    map.validate(&format!("part \"{part}\", pass {pass}"), trial.labels())
        .map_err(|e| sentence(&e.to_string()))?;
    let replaced = {
        let slot = trial
            .pass_mut(pass)
            .ok_or_else(|| format!("Part \"{part}\" has no pass {pass}."))?;
        slot.shape_map.replace(map).is_some()
    };
    if let Some(part_mut) = build.part_mut(part) {
        *part_mut = trial;
    }
    Ok(if replaced {
        format!("Replaced the shape map of pass {pass} of \"{part}\".")
    } else {
        format!("Kept the shape map with pass {pass} of \"{part}\".")
    })
}

/// The keep section's own state.
#[derive(Debug, Default)]
pub struct KeepState {
    /// The maker asked to keep over an existing map: waiting for "Replace".
    confirm_replace: bool,
    /// A map sent to the app: (part, pass, map), until the build shows it.
    awaiting: Option<(String, u32, StoredShapeMap)>,
    /// What happened last.
    done: Option<String>,
}

/// Where the map can be kept, and the button that keeps it.
pub fn keep_section(
    ui: &mut egui::Ui,
    keep: &mut KeepState,
    shown: &MapShown,
    part: Option<&str>,
    ctx: &mut AreaContext,
) {
    ui.strong("Keep the map");
    follow_up(keep, ctx);
    let Some(build) = ctx.build else {
        ui.weak(
            "Open or start a build in the Ledger, with the part this map is of, to keep it there.",
        );
        return;
    };
    let Some(part_name) = part else {
        ui.weak("Choose the part this map is of (on the left) to keep it with its latest pass.");
        return;
    };
    let Some(latest) = build.part(part_name).and_then(|p| p.latest_pass()) else {
        ui.weak(format!(
            "\"{part_name}\" has no pass yet. Record the pass first (Listen, then Ledger); the map is kept with the latest pass."
        ));
        return;
    };
    let number = latest.number();
    ui.weak(format!(
        "The map is kept with the latest pass of \"{part_name}\" (pass {number}): tap the grid right after recording that pass, before the wood changes. A map makes no pass of its own; for a new state, record its pass first."
    ));
    let has_map = latest.shape_map.is_some();
    if keep.confirm_replace {
        ui.horizontal_wrapped(|ui| {
            ui.colored_label(
                ui.visuals().warn_fg_color,
                format!("Pass {number} keeps a map already."),
            );
            if ui.button("Replace it").clicked() {
                keep.confirm_replace = false;
                send(keep, shown, part_name, number, ctx);
            }
            if ui.button("Cancel").clicked() {
                keep.confirm_replace = false;
            }
        });
    } else if ui
        .button(format!("Keep with pass {number} of {part_name}"))
        .clicked()
    {
        if has_map {
            keep.confirm_replace = true;
        } else {
            send(keep, shown, part_name, number, ctx);
        }
    }
    if let Some(done) = &keep.done {
        ui.horizontal_wrapped(|ui| {
            ui.label(done);
            if ui.small_button("Show the Ledger").clicked() {
                ctx.push(AppCommand::ShowArea(Area::Ledger));
            }
        });
    }
}

fn send(keep: &mut KeepState, shown: &MapShown, part: &str, pass: u32, ctx: &mut AreaContext) {
    keep.done = None;
    let map = stored_map(shown);
    keep.awaiting = Some((part.to_owned(), pass, map.clone()));
    ctx.push(AppCommand::KeepShapeMap {
        part: part.to_owned(),
        pass,
        map: Box::new(map),
    });
}

/// Once the build shows the map, says so.
fn follow_up(keep: &mut KeepState, ctx: &AreaContext) {
    let Some((part, pass, map)) = &keep.awaiting else {
        return;
    };
    let kept = ctx
        .build
        .and_then(|b| b.part(part))
        .and_then(|p| p.pass(*pass))
        .is_some_and(|p| p.shape_map.as_ref() == Some(map));
    if kept {
        let (part, pass) = (part.clone(), *pass);
        keep.awaiting = None;
        keep.done = Some(format!(
            "Pass {pass} of \"{part}\" keeps this map; the Ledger shows it beside another pass's."
        ));
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn labels_go_to_the_nearest_mode_within_reach() {
        let frequencies = [90.0, 150.7, 243.6, 333.4];
        let anchors = vec![
            (152.0, "mode 2".to_owned()),
            (338.0, "mode 5".to_owned()),
            (120.0, "mode 1".to_owned()),
        ];
        let labels = labels_near(&frequencies, &anchors);
        assert_eq!(labels[1].as_deref(), Some("mode 2"));
        assert_eq!(labels[3].as_deref(), Some("mode 5"));
        // 120 Hz is 25 % from 90 Hz and 20 % from 150.7 Hz: no mode.
        assert_eq!(labels[0], None);
        assert_eq!(labels[2], None);
        // Two anchors near one mode: the nearer wins.
        let labels = labels_near(
            &[100.0],
            &[(102.0, "a".to_owned()), (101.0, "b".to_owned())],
        );
        assert_eq!(labels[0].as_deref(), Some("b"));
    }
}
