//! The Drive area: a tone at a mode's frequency through a loudspeaker, to
//! see the plate's nodal lines (Chladni patterns) in sand or tea leaves.
//!
//! Pick a mode from the current Listen result or from the pass chosen in
//! the Ledger, or type a frequency; fine-tune it, sweep slowly around it,
//! set the level (never above the cap), Start and Stop. Escape stops the
//! tone from anywhere in the window; closing the window fades it out.
//!
//! The output is opened on the window's job runner when Start is pressed
//! and closed (after the fade-out and a short tail) on a helper thread when
//! the tone has stopped, so nothing on the UI thread waits for the device. Settings reach the
//! playing tone through [`ToneControls`] (atomics).

use std::sync::Arc;
use std::time::Duration;

use eframe::egui;

use crate::audio::tone::{
    highest_hz, ToneControls, ToneSettings, ToneState, HIGHEST_LEVEL_CAP_DB, LOWEST_HZ,
    LOWEST_LEVEL_DB, SWEEP_PERIOD_RANGE_S, WIDEST_FINE_TUNE_HZ, WIDEST_SWEEP_HZ,
};
use crate::audio::{open_output, AudioError, OutputChoice, ToneOutput};
use crate::ledger::Build;
use crate::text::{note_text, read_number, sentence};

use crate::ui::context::AreaContext;
use crate::ui::jobs::{Inbox, Jobs};

/// The caution shown beside the controls (and, shorter, on the command line).
pub const DRIVE_CAUTION: &str = "Loud tones damage hearing and loudspeakers. Start at a low \
     level and raise it slowly; a plate at resonance can be much louder than the speaker \
     alone. Protect your ears for long sessions, keep the speaker within its rated power, \
     and follow your local rules.";

/// How often the readout is refreshed while a tone sounds.
const READOUT_REPAINT: Duration = Duration::from_millis(100);

/// What the Drive area remembers between frames. Owned by the app; dropping
/// it fades any tone out and closes the output.
pub struct DriveAreaState {
    choice: OutputChoice,
    settings: ToneSettings,
    /// The frequency as typed.
    frequency_text: String,
    /// What is wrong with the typed frequency, if anything.
    frequency_problem: Option<String>,
    /// Where the frequency came from ("mode 5 from Listen").
    picked_from: Option<String>,
    output: Option<ToneOutput>,
    /// The settings last given to the playing output.
    sent: Option<ToneSettings>,
    /// The output being opened on the job runner (Start pressed).
    opening: Option<Inbox<Result<ToneOutput, AudioError>>>,
    /// True while the tone should sound (a Start not yet stopped).
    wanted: bool,
    note: Option<(String, bool)>,
}

impl std::fmt::Debug for DriveAreaState {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.debug_struct("DriveAreaState")
            .field("settings", &self.settings)
            .field("wanted", &self.wanted)
            .finish_non_exhaustive()
    }
}

impl DriveAreaState {
    /// A silent drive that will play through `choice`.
    pub fn new(choice: OutputChoice) -> Self {
        let settings = ToneSettings::default();
        Self {
            choice,
            frequency_text: format!("{:.2}", settings.frequency_hz),
            frequency_problem: None,
            settings,
            picked_from: None,
            output: None,
            sent: None,
            opening: None,
            wanted: false,
            note: None,
        }
    }

    /// The settings as chosen on screen.
    pub fn settings(&self) -> &ToneSettings {
        &self.settings
    }

    /// What the tone is doing, None when no output is open.
    pub fn tone_state(&self) -> Option<ToneState> {
        self.output.as_ref().map(|o| o.controls().state())
    }

    /// The sentence shown under the controls (a problem, or "Stopped").
    pub fn note(&self) -> Option<&str> {
        self.note.as_ref().map(|(text, _)| text.as_str())
    }

    /// True while a Start is waiting for the output to open.
    pub fn is_opening(&self) -> bool {
        self.opening.is_some()
    }

    /// The controls of the open output (tests keep them to watch a tone
    /// fade out after the window has gone).
    pub fn controls(&self) -> Option<Arc<ToneControls>> {
        self.output.as_ref().map(|o| o.shared_controls())
    }

    /// Fades the tone out (Stop, Escape).
    pub fn stop(&mut self) {
        let was_sounding = self.wanted;
        self.wanted = false;
        if let Some(output) = &self.output {
            output.controls().stop();
        }
        if was_sounding {
            self.note = Some(("Stopped: the tone fades out.".to_owned(), false));
        }
    }

    /// Stops now and waits for the fade-out (the window is closing).
    pub fn stop_and_close(&mut self) {
        self.wanted = false;
        self.opening = None;
        // Dropping fades out, plays the tail and closes the stream.
        self.output = None;
    }

    fn start(&mut self, jobs: &Jobs) {
        if let Some(problem) = &self.frequency_problem {
            self.note = Some((problem.clone(), true));
            return;
        }
        let rate = self.output.as_ref().map(|o| o.sample_rate_hz());
        if let Err(error) = self.settings.check(rate) {
            self.note = Some((sentence(&error.to_string()), true));
            return;
        }
        self.wanted = true;
        self.note = None;
        if let Some(output) = &self.output {
            output.controls().set_settings(&self.settings);
            self.sent = Some(self.settings);
            output.controls().play();
            return;
        }
        if self.opening.is_some() {
            return;
        }
        let choice = self.choice.clone();
        let settings = self.settings;
        let mut opening = jobs.inbox();
        opening.spawn("open-output", move || open_output(&choice, &settings));
        self.opening = Some(opening);
    }

    /// Takes a finished opening, passes new settings on, reports device
    /// trouble, and closes an output whose tone has ended.
    fn follow(&mut self, ctx: &egui::Context, jobs: &Jobs) {
        self.take_opened(jobs);
        let Some(output) = self.output.as_mut() else {
            return;
        };
        if let Some(problem) = output.problem() {
            self.note = Some((sentence(&problem), true));
            self.wanted = false;
            close_in_background(jobs, self.output.take());
            return;
        }
        if self.sent != Some(self.settings)
            && self.settings.check(Some(output.sample_rate_hz())).is_ok()
        {
            output.controls().set_settings(&self.settings);
            self.sent = Some(self.settings);
        }
        let finished = !self.wanted && output.controls().is_finished();
        if finished {
            close_in_background(jobs, self.output.take());
        } else {
            ctx.request_repaint_after(READOUT_REPAINT);
        }
    }

    fn take_opened(&mut self, jobs: &Jobs) {
        let Some(opening) = &mut self.opening else {
            return;
        };
        let Some(opened) = opening.drain().pop() else {
            return;
        };
        self.opening = None;
        match opened {
            Ok(output) => {
                if let Err(error) = self.settings.check(Some(output.sample_rate_hz())) {
                    self.wanted = false;
                    self.note = Some((sentence(&error.to_string()), true));
                    close_in_background(jobs, Some(output));
                } else if self.wanted {
                    output.controls().set_settings(&self.settings);
                    self.sent = Some(self.settings);
                    output.controls().play();
                    self.output = Some(output);
                } else {
                    // Stopped (Escape) while the device was opening.
                    close_in_background(jobs, Some(output));
                }
            }
            Err(error) => {
                self.wanted = false;
                self.note = Some((sentence(&error.to_string()), true));
            }
        }
    }
}

impl Drop for DriveAreaState {
    fn drop(&mut self) {
        self.stop_and_close();
    }
}

/// Closing waits for the fade-out and the tail: do it off the UI thread.
fn close_in_background(jobs: &Jobs, output: Option<ToneOutput>) {
    if let Some(output) = output {
        jobs.detach("close-output", move || drop(output));
    }
}

/// What runs every frame whatever the area shown (called by the app):
/// Escape stops the tone; a finished opening is taken, device trouble
/// reported, and an output whose tone has ended closed.
pub fn each_frame(ui: &egui::Ui, state: &mut DriveAreaState, jobs: &Jobs) {
    if ui.input(|i| i.key_pressed(egui::Key::Escape)) {
        state.stop();
    }
    state.follow(ui.ctx(), jobs);
}

/// A mode offered for driving: frequency and what to call it.
struct Offer {
    frequency_hz: f64,
    label: Option<String>,
}

/// Draws the Drive area. `ledger_pick` is the part chosen in the Ledger and
/// the pass chosen in its table (None: the part's latest pass).
pub fn show(
    ui: &mut egui::Ui,
    state: &mut DriveAreaState,
    ctx: &mut AreaContext,
    ledger_pick: (Option<&str>, Option<u32>),
) {
    egui::ScrollArea::both()
        .id_salt("drive scroll")
        .auto_shrink([false, false])
        .show(ui, |ui| {
            ui.horizontal(|ui| {
                ui.heading("Drive");
                ui.weak("A tone at a mode's frequency through a loudspeaker, to see the plate's nodal lines in sand or tea leaves.");
            });
            ui.add_space(4.0);
            let total = ui.available_width().max(1000.0) - 40.0;
            ui.horizontal_top(|ui| {
                ui.vertical(|ui| {
                    ui.set_width((0.36 * total).floor());
                    mode_lists(ui, state, ctx, ledger_pick);
                });
                ui.separator();
                ui.vertical(|ui| {
                    ui.set_width((0.34 * total).floor());
                    controls(ui, state, ctx.jobs);
                });
                ui.separator();
                ui.vertical(|ui| {
                    ui.set_width((0.30 * total).floor());
                    caution(ui);
                });
            });
        });
}

fn mode_lists(
    ui: &mut egui::Ui,
    state: &mut DriveAreaState,
    ctx: &AreaContext,
    ledger_pick: (Option<&str>, Option<u32>),
) {
    ui.strong("Modes from Listen");
    let listen: Vec<Offer> = ctx
        .pass
        .map(|pass| {
            pass.modes
                .iter()
                .enumerate()
                .map(|(i, m)| Offer {
                    frequency_hz: m.frequency_hz,
                    label: ctx.pass_labels.get(i).cloned().flatten(),
                })
                .collect()
        })
        .unwrap_or_default();
    if listen.is_empty() {
        ui.weak("No modes yet: tap the part in the Listen area first.");
    }
    offer_buttons(ui, state, &listen, "Listen", ctx.a4_hz);
    ui.add_space(8.0);
    ui.separator();
    ui.strong("Modes from the Ledger");
    match ledger_offers(ctx.build, ledger_pick) {
        Some((title, offers)) => {
            ui.label(&title);
            if offers.is_empty() {
                ui.weak("This pass has no modes.");
            }
            offer_buttons(ui, state, &offers, &title, ctx.a4_hz);
        }
        None => {
            ui.weak("Choose a part with a recorded pass in the Ledger area to drive its modes.");
        }
    }
}

/// The modes of the Ledger's chosen pass (else the chosen part's latest;
/// no part chosen yet: the first), under a title naming the part and pass.
fn ledger_offers(
    build: Option<&Build>,
    (part_name, pass_number): (Option<&str>, Option<u32>),
) -> Option<(String, Vec<Offer>)> {
    let build = build?;
    // Before the Ledger has been shown, its first part (as it would show).
    let part = match part_name {
        Some(name) => build.part(name)?,
        None => build.parts().first()?,
    };
    let pass = match pass_number {
        Some(number) => part.pass(number)?,
        None => part.passes().last()?,
    };
    let offers = pass
        .modes()
        .iter()
        .map(|m| Offer {
            frequency_hz: m.frequency_hz,
            label: m.label_name().map(str::to_owned),
        })
        .collect();
    Some((format!("{}, pass {}", part.name(), pass.number()), offers))
}

fn offer_buttons(
    ui: &mut egui::Ui,
    state: &mut DriveAreaState,
    offers: &[Offer],
    source: &str,
    a4_hz: f64,
) {
    for offer in offers {
        let name = match &offer.label {
            Some(label) => format!("Drive at {:.1} Hz ({label})", offer.frequency_hz),
            None => format!("Drive at {:.1} Hz", offer.frequency_hz),
        };
        ui.horizontal(|ui| {
            if ui
                .button(&name)
                .on_hover_text("Use this mode's frequency for the tone")
                .clicked()
            {
                state.settings.frequency_hz = offer.frequency_hz;
                state.settings.fine_tune_hz = 0.0;
                state.frequency_text = format!("{:.2}", offer.frequency_hz);
                state.frequency_problem = None;
                let what = offer.label.as_deref().unwrap_or("a mode");
                state.picked_from = Some(format!("{what} from {source}"));
            }
            ui.weak(note_text(offer.frequency_hz, a4_hz));
        });
    }
}

fn controls(ui: &mut egui::Ui, state: &mut DriveAreaState, jobs: &Jobs) {
    ui.strong("Tone");
    egui::Grid::new("drive controls")
        .num_columns(2)
        .spacing([12.0, 8.0])
        .show(ui, |ui| {
            frequency_row(ui, state);
            let s = &mut state.settings;
            let label = ui.label("Fine tune");
            ui.add(
                egui::DragValue::new(&mut s.fine_tune_hz)
                    .range(-WIDEST_FINE_TUNE_HZ..=WIDEST_FINE_TUNE_HZ)
                    .speed(0.01)
                    .fixed_decimals(2)
                    .suffix(" Hz"),
            )
            .labelled_by(label.id)
            .on_hover_text("Added to the frequency: drag, or type a value");
            ui.end_row();
            let label = ui.label("Sweep width");
            ui.add(
                egui::DragValue::new(&mut s.sweep_hz)
                    .range(0.0..=WIDEST_SWEEP_HZ)
                    .speed(0.05)
                    .fixed_decimals(1)
                    .prefix("± ")
                    .suffix(" Hz"),
            )
            .labelled_by(label.id)
            .on_hover_text("Sweep slowly up and down around the frequency (0: a steady tone)");
            ui.end_row();
            let label = ui.label("Sweep period");
            ui.add(
                egui::DragValue::new(&mut s.sweep_period_s)
                    .range(SWEEP_PERIOD_RANGE_S.0..=SWEEP_PERIOD_RANGE_S.1)
                    .speed(0.2)
                    .fixed_decimals(0)
                    .suffix(" s"),
            )
            .labelled_by(label.id)
            .on_hover_text("Time for one sweep down and up");
            ui.end_row();
            let label = ui.label("Level cap");
            ui.add(
                egui::DragValue::new(&mut s.level_cap_db)
                    .range(LOWEST_LEVEL_DB..=HIGHEST_LEVEL_CAP_DB)
                    .speed(0.2)
                    .fixed_decimals(0)
                    .suffix(" dBFS"),
            )
            .labelled_by(label.id)
            .on_hover_text("The level can never be set above this");
            ui.end_row();
            s.level_db = s.level_db.min(s.level_cap_db);
            let label = ui.label("Level");
            ui.add(
                egui::Slider::new(&mut s.level_db, LOWEST_LEVEL_DB..=s.level_cap_db)
                    .fixed_decimals(1)
                    .suffix(" dBFS"),
            )
            .labelled_by(label.id)
            .on_hover_text("Peak level of the tone (0 dBFS is a full-scale sine); start low");
            ui.end_row();
        });
    if let Some(from) = &state.picked_from {
        ui.weak(format!("Frequency: {from}."));
    }
    ui.add_space(6.0);
    ui.horizontal(|ui| {
        let start = ui
            .add_enabled(!state.wanted, egui::Button::new("Start"))
            .on_hover_text("Fade the tone in");
        if start.clicked() {
            state.start(jobs);
        }
        let stop = ui
            .add_enabled(
                state.wanted || state.output.is_some(),
                egui::Button::new("Stop"),
            )
            .on_hover_text("Fade the tone out (Escape does the same from anywhere)");
        if stop.clicked() {
            state.stop();
        }
    });
    readout(ui, state);
    if let Some((text, is_error)) = &state.note {
        if *is_error {
            ui.colored_label(ui.visuals().error_fg_color, text);
        } else {
            ui.label(text);
        }
    }
}

fn frequency_row(ui: &mut egui::Ui, state: &mut DriveAreaState) {
    let label = ui.label("Frequency");
    ui.horizontal(|ui| {
        let edit = ui
            .add(egui::TextEdit::singleline(&mut state.frequency_text).desired_width(90.0))
            .labelled_by(label.id);
        ui.label("Hz");
        if edit.changed() {
            // Only a typed change is read back: a picked mode keeps its
            // full precision, not the two decimals shown.
            state.picked_from = None;
            match parse_hz(&state.frequency_text) {
                Ok(hz) => {
                    state.settings.frequency_hz = hz;
                    state.frequency_problem = None;
                }
                Err(problem) => state.frequency_problem = Some(problem),
            }
        }
    });
    ui.end_row();
    if let Some(problem) = &state.frequency_problem {
        ui.label("");
        ui.colored_label(ui.visuals().error_fg_color, problem);
        ui.end_row();
    }
}

/// A typed frequency (a trailing "Hz" allowed), or one sentence saying
/// what is wrong with it.
fn parse_hz(text: &str) -> Result<f64, String> {
    let text = text.trim().trim_end_matches("Hz").trim();
    let value = read_number(text).map_err(|_| format!("\"{text}\" is not a frequency in Hz."))?;
    let highest = highest_hz(None);
    if !(LOWEST_HZ..=highest).contains(&value) {
        return Err(format!(
            "A drive frequency of {value} Hz is outside {LOWEST_HZ} to {highest} Hz."
        ));
    }
    Ok(value)
}

fn readout(ui: &mut egui::Ui, state: &DriveAreaState) {
    let line = match (&state.output, state.opening.is_some()) {
        (Some(output), _) => {
            let controls = output.controls();
            let level = controls.current_level_db();
            let level_text = if level.is_finite() {
                format!("{level:.1} dBFS")
            } else {
                "silent".to_owned()
            };
            let doing = match controls.state() {
                ToneState::Silent => "Silent",
                ToneState::FadingIn => "Fading in",
                ToneState::Steady => "Playing",
                ToneState::FadingOut => "Fading out",
            };
            format!(
                "{doing}: {:.2} Hz, {level_text}, on {}",
                controls.current_frequency_hz(),
                output.description()
            )
            .replace('-', "\u{2212}")
        }
        (None, true) => "Opening the output …".to_owned(),
        (None, false) => "No tone.".to_owned(),
    };
    ui.label(line);
}

fn caution(ui: &mut egui::Ui) {
    // Room for the frame's margin and stroke inside the column.
    let text_width = ui.available_width() - 20.0;
    egui::Frame::group(ui.style())
        .stroke(egui::Stroke::new(1.5, ui.visuals().warn_fg_color))
        .show(ui, |ui| {
            ui.set_max_width(text_width);
            ui.colored_label(ui.visuals().warn_fg_color, "Caution");
            ui.label(DRIVE_CAUTION);
        });
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn typed_frequencies_are_read_or_refused_with_a_sentence() {
        assert_eq!(parse_hz(" 233.3 ").expect("number"), 233.3);
        assert_eq!(parse_hz("233,3 Hz").expect("comma"), 233.3);
        for bad in ["", "abc", "5", "30000", "nan"] {
            let problem = parse_hz(bad).expect_err(bad);
            assert!(
                problem.ends_with('.') && !problem.contains('\n'),
                "{problem}"
            );
        }
    }
}
