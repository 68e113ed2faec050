//! The Listen area: input and trigger settings on the left, the spectrum of
//! the pass in the middle, the mode list and the tap list below it. Every
//! change is pushed as a [`ListenCommand`]; nothing here changes the pass.

use std::path::PathBuf;

use eframe::egui;

use crate::audio::CaptureSettings;
use crate::text::note_text;

use crate::ui::commands::{AppCommand, ListenCommand, SourcePick};
use crate::ui::context::{AreaContext, InputView, SourceState};
use crate::ui::session::ListenSession;
use crate::ui::widgets::level_meter::level_meter;
use crate::ui::widgets::spectrum_plot::{self, CursorReadout};

/// What the Listen area remembers between frames (view state only).
#[derive(Debug)]
pub struct ListenView {
    /// Reset the plot's zoom and pan on the next frame.
    pub reset_plot: bool,
    /// The path typed in the "Recording file" field.
    pub typed_path: String,
    /// Settings being edited (sent when changed).
    pub draft: CaptureSettings,
    /// Taps to average, as edited.
    pub taps_to_average: usize,
    /// A4 as edited.
    pub a4_hz: f64,
    /// Own label being typed, per mode index.
    pub typed_labels: std::collections::HashMap<usize, String>,
    /// What the pointer is over in the plot.
    pub cursor: Option<CursorReadout>,
    /// The plot's curves, remade only when the pass or band changes.
    pub curves: Option<spectrum_plot::Curves>,
}

impl ListenView {
    /// A fresh view for these settings.
    pub fn new(settings: &CaptureSettings) -> Self {
        Self {
            reset_plot: true,
            typed_path: String::new(),
            draft: settings.clone(),
            taps_to_average: ListenSession::default().taps_to_average(),
            a4_hz: crate::analysis::DEFAULT_A4_HZ,
            typed_labels: Default::default(),
            cursor: None,
            curves: None,
        }
    }
}

/// What the app lends the Listen area to draw.
pub struct ListenFacts<'a> {
    /// The pass being measured.
    pub session: &'a ListenSession,
    /// The input source.
    pub input: &'a InputView,
    /// The settings in force.
    pub settings: &'a CaptureSettings,
    /// True for a while after the input clipped.
    pub clip_warning: bool,
    /// Labels to offer for modes.
    pub label_choices: &'a [String],
    /// Names of the preset label sets.
    pub label_sets: &'a [&'a str],
    /// The preset set chosen.
    pub label_set: usize,
    /// True while background work runs.
    pub busy: bool,
}

/// Draws the Listen area: side panel, then the central panel.
pub fn show(ui: &mut egui::Ui, view: &mut ListenView, facts: &ListenFacts, ctx: &mut AreaContext) {
    egui::Panel::left("listen settings")
        .resizable(true)
        .default_size(290.0)
        .size_range(250.0..=420.0)
        .show(ui, |ui| {
            egui::ScrollArea::vertical()
                .id_salt("settings scroll")
                .show(ui, |ui| {
                    settings_panel(ui, view, facts, ctx);
                });
        });
    egui::CentralPanel::default().show(ui, |ui| {
        central(ui, view, facts, ctx);
    });
}

fn listen(ctx: &mut AreaContext, command: ListenCommand) {
    ctx.push(AppCommand::Listen(command));
}

// ----- the side panel ------------------------------------------------------

fn settings_panel(
    ui: &mut egui::Ui,
    view: &mut ListenView,
    facts: &ListenFacts,
    ctx: &mut AreaContext,
) {
    ui.add_space(4.0);
    ui.strong("Input");
    source_picker(ui, facts, ctx);
    source_state_line(ui, facts, ctx);
    level_meter(ui, facts.input.level.as_ref(), facts.clip_warning);
    ui.add_space(6.0);

    ui.separator();
    ui.strong("Trigger");
    let mut changed = false;
    changed |= ui
        .add(
            egui::Slider::new(&mut view.draft.trigger.margin_db, 6.0..=50.0)
                .text("Trigger margin")
                .suffix(" dB")
                .fixed_decimals(0),
        )
        .on_hover_text("How far above the room noise a strike must rise to count as a tap")
        .changed();
    changed |= ui
        .add(
            egui::Slider::new(&mut view.draft.trigger.record_ms, 200.0..=3000.0)
                .text("Record length")
                .suffix(" ms")
                .fixed_decimals(0),
        )
        .on_hover_text("How much of each tap's ring is kept after the strike")
        .changed();
    if ui
        .add(egui::Slider::new(&mut view.taps_to_average, 1..=32).text("Taps to average"))
        .on_hover_text("The pass averages this many of the latest kept taps")
        .changed()
    {
        listen(ctx, ListenCommand::SetTapsToAverage(view.taps_to_average));
    }

    ui.add_space(6.0);
    ui.strong("Frequency band");
    ui.horizontal(|ui| {
        let low = ui.label("From");
        changed |= ui
            .add(
                egui::DragValue::new(&mut view.draft.analysis.band_low_hz)
                    .range(10.0..=2000.0)
                    .speed(1.0)
                    .suffix(" Hz"),
            )
            .labelled_by(low.id)
            .changed();
        let high = ui.label("to");
        changed |= ui
            .add(
                egui::DragValue::new(&mut view.draft.analysis.band_high_hz)
                    .range(100.0..=20000.0)
                    .speed(10.0)
                    .suffix(" Hz"),
            )
            .labelled_by(high.id)
            .changed();
    });
    if view.draft.analysis.band_high_hz <= view.draft.analysis.band_low_hz * 1.5 {
        view.draft.analysis.band_high_hz = view.draft.analysis.band_low_hz * 1.5;
    }
    ui.horizontal(|ui| {
        let a4 = ui.label("A4 reference");
        if ui
            .add(
                egui::DragValue::new(&mut view.a4_hz)
                    .range(380.0..=480.0)
                    .speed(0.1)
                    .suffix(" Hz"),
            )
            .labelled_by(a4.id)
            .changed()
        {
            listen(ctx, ListenCommand::SetA4(view.a4_hz));
        }
    });
    ui.weak("A new band or mode count measures the taps again; trigger settings apply to the taps that follow.");
    if changed && view.draft != *facts.settings {
        listen(ctx, ListenCommand::SetSettings(view.draft.clone()));
    }

    ui.separator();
    ui.strong("Recording file");
    ui.horizontal(|ui| {
        let label = ui.label("Path");
        let field = ui
            .add(
                egui::TextEdit::singleline(&mut view.typed_path)
                    .hint_text("/path/to/taps.wav")
                    .desired_width(ui.available_width() - 60.0),
            )
            .labelled_by(label.id);
        let entered = field.lost_focus() && ui.input(|i| i.key_pressed(egui::Key::Enter));
        if ui
            .button("Open")
            .on_hover_text("Open the WAV file typed at the left")
            .clicked()
            || entered
        {
            listen(
                ctx,
                ListenCommand::OpenRecording(PathBuf::from(view.typed_path.trim())),
            );
        }
    });
    ui.horizontal_wrapped(|ui| {
        if ui.button("Choose a recording…").clicked() {
            listen(ctx, ListenCommand::ChooseRecordingFile);
        }
        if ui
            .add_enabled(
                facts.session.pass().is_some(),
                egui::Button::new("Save taps as WAV…"),
            )
            .clicked()
        {
            listen(ctx, ListenCommand::ChooseSaveTapsFile);
        }
    });
    ui.weak("Or drop a WAV file on the window.");

    ui.separator();
    ui.strong("Pass");
    ui.horizontal_wrapped(|ui| {
        if ui
            .button("New pass")
            .on_hover_text("Forget the taps and start again")
            .clicked()
        {
            listen(ctx, ListenCommand::NewPass);
        }
        if ui
            .add_enabled(
                facts.session.pass().is_some(),
                egui::Button::new("Export pass as JSON…"),
            )
            .clicked()
        {
            listen(ctx, ListenCommand::ChooseExportFile);
        }
    });
    if ctx.build.is_some() {
        ui.weak("To keep the pass in the build, record it in the Ledger area.");
    }
    label_set_picker(ui, facts, ctx);
}

fn source_picker(ui: &mut egui::Ui, facts: &ListenFacts, ctx: &mut AreaContext) {
    let input = facts.input;
    let current = match (&input.state, &input.pick) {
        (SourceState::File(path), _) => format!(
            "File: {}",
            path.file_name()
                .map_or_else(String::new, |n| n.to_string_lossy().into_owned())
        ),
        (_, SourcePick::Demo) => "Demo recording".to_owned(),
        (_, SourcePick::Device(None)) => "Default input".to_owned(),
        (_, SourcePick::Device(Some(name))) => name.clone(),
    };
    let mut chosen: Option<SourcePick> = None;
    egui::ComboBox::from_label("Source")
        .selected_text(current)
        .width(200.0)
        .show_ui(ui, |ui| {
            if ui
                .selectable_label(input.pick == SourcePick::Demo, "Demo recording")
                .clicked()
            {
                chosen = Some(SourcePick::Demo);
            }
            if ui
                .selectable_label(input.pick == SourcePick::Device(None), "Default input")
                .clicked()
            {
                chosen = Some(SourcePick::Device(None));
            }
            for device in &input.devices {
                let pick = SourcePick::Device(Some(device.id.clone()));
                let text = if device.is_default {
                    format!("{} (default)", device.name)
                } else {
                    device.name.clone()
                };
                if ui.selectable_label(input.pick == pick, text).clicked() {
                    chosen = Some(pick);
                }
            }
        });
    if let Some(pick) = chosen {
        listen(ctx, ListenCommand::ChooseSource(pick));
    }
    ui.horizontal(|ui| {
        match input.sample_rate_hz {
            Some(rate) => ui.label(format!("Sample rate: {rate} Hz")),
            None => ui.weak("Sample rate: –"),
        };
        if ui.small_button("Refresh devices").clicked() {
            listen(ctx, ListenCommand::RefreshDevices);
        }
    });
    if let Some(problem) = &input.devices_problem {
        ui.weak(problem);
    } else if input.devices.is_empty() {
        ui.weak("No input devices found.");
    }
}

fn source_state_line(ui: &mut egui::Ui, facts: &ListenFacts, ctx: &mut AreaContext) {
    let input = facts.input;
    match &input.state {
        SourceState::Starting => {
            ui.horizontal(|ui| {
                ui.spinner();
                ui.label(format!("Opening {} …", input.description));
            });
        }
        SourceState::Running => {
            ui.label(format!("Listening: {}", input.description));
        }
        SourceState::Trouble(text) | SourceState::Failed(text) => {
            ui.colored_label(ui.visuals().error_fg_color, text);
        }
        SourceState::Ended => {
            ui.horizontal_wrapped(|ui| {
                ui.label("The demo recording has ended.");
                if ui.button("Play the demo again").clicked() {
                    listen(ctx, ListenCommand::ChooseSource(SourcePick::Demo));
                }
            });
        }
        SourceState::File(path) => {
            ui.label(format!("Showing the taps of {}", path.display()));
        }
    }
}

fn label_set_picker(ui: &mut egui::Ui, facts: &ListenFacts, ctx: &mut AreaContext) {
    ui.add_space(6.0);
    if let (Some(build), Some(part)) = (ctx.build, ctx.listen_part) {
        ui.label(format!("Labels from {}: {}", build.name, part));
        return;
    }
    let mut chosen = None;
    egui::ComboBox::from_label("Label set")
        .selected_text(facts.label_sets.get(facts.label_set).copied().unwrap_or(""))
        .width(200.0)
        .show_ui(ui, |ui| {
            for (i, name) in facts.label_sets.iter().enumerate() {
                if ui.selectable_label(i == facts.label_set, *name).clicked() {
                    chosen = Some(i);
                }
            }
        });
    if let Some(i) = chosen {
        listen(ctx, ListenCommand::SetLabelSet(i));
    }
}

// ----- the central panel ---------------------------------------------------

fn central(ui: &mut egui::Ui, view: &mut ListenView, facts: &ListenFacts, ctx: &mut AreaContext) {
    let pass = facts.session.pass();
    ui.horizontal(|ui| {
        ui.heading("Spectrum of the pass");
        match pass {
            Some(pass) => ui.label(format!("{} taps averaged", pass.taps_used)),
            None => ui.weak("no taps yet"),
        };
        if facts.busy {
            ui.spinner();
        }
        ui.with_layout(egui::Layout::right_to_left(egui::Align::Center), |ui| {
            if ui
                .button("Reset view")
                .on_hover_text("Show the whole band again (or double-click the plot)")
                .clicked()
            {
                view.reset_plot = true;
            }
            let readout = match &view.cursor {
                Some(c) => c.text(),
                None => "Cursor: point at the plot".to_owned(),
            };
            ui.monospace(readout);
        });
    });

    let available = ui.available_height();
    let plot_height = (available * 0.55).max(200.0);
    let low_hz = facts.settings.analysis.band_low_hz.max(1.0);
    let band = (
        low_hz,
        facts.settings.analysis.band_high_hz.max(low_hz * 1.5),
    );
    let key = (
        facts.session.generation(),
        band.0.to_bits(),
        band.1.to_bits(),
    );
    if view.curves.as_ref().is_none_or(|c| c.key != key) {
        view.curves = Some(spectrum_plot::Curves::new(
            key,
            pass,
            facts.session.latest_spectrum(),
            band,
        ));
    }
    let Some(curves) = view.curves.as_ref() else {
        return;
    };
    let plot_input = spectrum_plot::PlotInput {
        pass,
        curves,
        labels: facts.session.mode_labels(),
        band_hz: band,
        a4_hz: ctx.a4_hz,
        height: plot_height,
        reset: std::mem::take(&mut view.reset_plot),
    };
    let hovered = spectrum_plot::show(ui, &plot_input);
    view.cursor = hovered;

    ui.add_space(4.0);
    let width = ui.available_width();
    ui.horizontal_top(|ui| {
        ui.vertical(|ui| {
            ui.set_width(width * 0.56);
            mode_list(ui, view, facts, ctx);
        });
        ui.separator();
        ui.vertical(|ui| {
            tap_list(ui, facts, ctx);
        });
    });
}

fn mode_list(ui: &mut egui::Ui, view: &mut ListenView, facts: &ListenFacts, ctx: &mut AreaContext) {
    ui.strong("Modes");
    let Some(pass) = facts.session.pass() else {
        ui.weak("The modes of the pass appear here once a tap is kept.");
        return;
    };
    if pass.modes.is_empty() {
        ui.weak("No mode stood out in the band; tap again or widen the band.");
        return;
    }
    egui::ScrollArea::vertical()
        .id_salt("mode list")
        .auto_shrink([false, true])
        .show(ui, |ui| {
            egui::Grid::new("mode grid")
                .striped(true)
                .num_columns(7)
                .min_col_width(48.0)
                .show(ui, |ui| {
                    for title in ["Frequency", "Q", "Level", "Note", "Spread", "Taps", "Label"] {
                        ui.strong(title);
                    }
                    ui.end_row();
                    for (i, mode) in pass.modes.iter().enumerate() {
                        ui.monospace(format!("{:.1} Hz", mode.frequency_hz));
                        ui.monospace(format!("{:.0}", mode.q));
                        ui.monospace(format!("{:.1} dB", mode.level_db));
                        ui.monospace(note_text(mode.frequency_hz, ctx.a4_hz));
                        ui.monospace(format!("±{:.2} Hz", mode.spread_hz));
                        ui.monospace(format!("{}/{}", mode.taps_seen, pass.taps_used));
                        let current = facts.session.mode_labels().get(i).cloned().flatten();
                        if let Some(label) = label_picker(
                            ui,
                            view,
                            i,
                            mode.frequency_hz,
                            current,
                            facts.label_choices,
                        ) {
                            listen(
                                ctx,
                                ListenCommand::SetModeLabel {
                                    mode_index: i,
                                    label,
                                },
                            );
                        }
                        ui.end_row();
                    }
                });
        });
}

/// The label chooser of one mode; returns the new label when one is picked
/// (Some(None) to clear).
fn label_picker(
    ui: &mut egui::Ui,
    view: &mut ListenView,
    mode_index: usize,
    frequency_hz: f64,
    current: Option<String>,
    choices: &[String],
) -> Option<Option<String>> {
    let mut picked = None;
    let name = format!("Label of the mode at {frequency_hz:.1} Hz");
    let response = egui::ComboBox::from_id_salt(("mode label", mode_index))
        .selected_text(current.clone().unwrap_or_else(|| "–".to_owned()))
        .width(130.0)
        .show_ui(ui, |ui| {
            if ui.selectable_label(current.is_none(), "no label").clicked() {
                picked = Some(None);
            }
            for choice in choices {
                if ui
                    .selectable_label(current.as_deref() == Some(choice), choice)
                    .clicked()
                {
                    picked = Some(Some(choice.clone()));
                }
            }
            ui.separator();
            let typed = view.typed_labels.entry(mode_index).or_default();
            let own = ui.label("Own label");
            let field = ui
                .add(egui::TextEdit::singleline(typed).desired_width(120.0))
                .labelled_by(own.id);
            let entered = field.lost_focus() && ui.input(|i| i.key_pressed(egui::Key::Enter));
            if (ui.button("Use this label").clicked() || entered) && !typed.trim().is_empty() {
                picked = Some(Some(typed.trim().to_owned()));
            }
        });
    let _ = response.response.accessible_name(name);
    if picked.is_some() {
        view.typed_labels.remove(&mode_index);
    }
    picked
}

fn tap_list(ui: &mut egui::Ui, facts: &ListenFacts, ctx: &mut AreaContext) {
    ui.strong("Taps");
    let taps = facts.session.taps();
    if taps.is_empty() {
        ui.weak("Each tap appears here with its level, and why it was left out if it was.");
        return;
    }
    egui::ScrollArea::vertical()
        .id_salt("tap list")
        .auto_shrink([false, true])
        .stick_to_bottom(true)
        .show(ui, |ui| {
            egui::Grid::new("tap grid")
                .striped(true)
                .num_columns(5)
                .show(ui, |ui| {
                    for title in ["Tap", "Time", "Level", "State", ""] {
                        ui.strong(title);
                    }
                    ui.end_row();
                    for tap in taps {
                        ui.monospace(format!("Tap {}", tap.index));
                        ui.monospace(format!("{:.2} s", tap.onset_s));
                        ui.monospace(format!("{:.1} dB", tap.peak_dbfs));
                        match facts.session.reason_out(tap) {
                            None if facts.session.is_averaged(tap.index) => {
                                ui.label("in the pass");
                            }
                            None => {
                                ui.weak("kept, older than the average");
                            }
                            Some(reason) => {
                                ui.colored_label(ui.visuals().warn_fg_color, reason.short_text())
                                    .on_hover_text(reason.advice());
                            }
                        }
                        if tap.analysis.is_some() && tap.rejected.is_none() {
                            let (text, name, left_out) = if facts.session.is_left_out(tap.index) {
                                ("Take back", format!("Take tap {} back", tap.index), false)
                            } else {
                                ("Leave out", format!("Leave tap {} out", tap.index), true)
                            };
                            if ui.small_button(text).accessible_name(name).clicked() {
                                listen(
                                    ctx,
                                    ListenCommand::SetTapLeftOut {
                                        tap_index: tap.index,
                                        left_out,
                                    },
                                );
                            }
                        } else {
                            ui.label("");
                        }
                        ui.end_row();
                    }
                });
        });
}
