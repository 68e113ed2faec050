//! The input: which source Listen hears (the demo recording, a device, or
//! a recording opened from a file), opening it on the job runner, and the
//! capture worker's events (levels, taps, trouble) turned into the input's
//! state, the pass and the status line.

use std::path::PathBuf;
use std::sync::Arc;
use std::time::{Duration, Instant};

use super::{file_name, work, StartSource, TapwrightApp};
use crate::analysis::Tap;
use crate::audio::{
    AudioError, CaptureEvent, CaptureHandle, CaptureSettings, Notify, SourceChoice,
};
use crate::text::sentence;
use crate::ui::commands::SourcePick;
use crate::ui::context::{InputView, SourceState};

/// Labels shown on the demo plate's modes as an example, if the analysis
/// finds modes there: the invented plate's mode 2 and mode 5 (src/demo/).
const DEMO_LABELS: [(f64, &str); 2] = [(168.0, "mode 2"), (338.0, "mode 5")];

/// Longest wait between news from the capture worker and the frame that
/// shows it. Events closer together than this share one frame.
const NEWS_REPAINT_DELAY: Duration = Duration::from_millis(60);

/// The input source and what the capture worker does with it.
#[derive(Debug)]
pub(super) struct InputState {
    /// What the Listen area shows of it.
    pub view: InputView,
    /// The trigger and analysis settings in force.
    pub settings: CaptureSettings,
    capture: Option<CaptureHandle>,
    /// Counts the sources started, so an opening that answers after the
    /// maker chose another source is ignored.
    generation: u64,
    fell_back_to_demo: bool,
}

impl InputState {
    /// Nothing open yet; `pick` is opened at the first frame.
    pub fn new(pick: SourcePick) -> Self {
        Self {
            view: InputView {
                pick,
                state: SourceState::Starting,
                description: String::new(),
                sample_rate_hz: None,
                level: None,
                clipped_at: None,
                devices: Vec::new(),
                devices_problem: None,
            },
            // Five level readings a second keep the meter alive without
            // repainting more than needed.
            settings: CaptureSettings {
                level_interval_ms: 200.0,
                ..CaptureSettings::default()
            },
            capture: None,
            generation: 0,
            fell_back_to_demo: false,
        }
    }

    /// Stops the capture worker; answers about earlier openings are ignored
    /// from now on.
    pub fn stop(&mut self) {
        self.generation += 1;
        if let Some(mut handle) = self.capture.take() {
            handle.stop();
        }
        self.view.level = None;
    }

    /// True if the opening numbered `generation` is the current one.
    pub fn is_current(&self, generation: u64) -> bool {
        generation == self.generation
    }

    /// Gives the running worker new settings; false when it has stopped.
    pub fn pass_settings_on(&self, settings: &CaptureSettings) -> bool {
        self.capture
            .as_ref()
            .is_none_or(|handle| handle.set_settings(settings.clone()).is_ok())
    }
}

impl TapwrightApp {
    /// Stops the current source and opens `pick` on the job runner.
    pub(super) fn start_source(&mut self, pick: SourcePick) {
        self.input.stop();
        self.input.view.pick = pick.clone();
        self.input.view.state = SourceState::Starting;
        self.input.view.sample_rate_hz = None;
        let source = match &pick {
            SourcePick::Demo => match crate::demo::demo_recording() {
                Ok(recording) => {
                    for (frequency_hz, label) in DEMO_LABELS {
                        self.pass.session.remember_label(frequency_hz, label);
                    }
                    self.input.view.description = "demo recording (invented violin top)".to_owned();
                    SourceChoice::Replay {
                        recording,
                        pacing: self.options.demo_pacing,
                        looped: false,
                    }
                }
                Err(error) => {
                    let text = sentence(&error.to_string());
                    self.input.view.state = SourceState::Failed(text.clone());
                    self.set_error(text);
                    return;
                }
            },
            SourcePick::Device(name) => {
                self.input.view.description =
                    name.clone().unwrap_or_else(|| "default input".to_owned());
                SourceChoice::Device(name.clone())
            }
        };
        let generation = self.input.generation;
        let settings = self.input.settings.clone();
        let notify = self.repaint_hook();
        self.work.spawn("capture", move || {
            work::start_capture(generation, source, settings, notify)
        });
    }

    /// Called by the capture worker after each event: wakes the window
    /// within [`NEWS_REPAINT_DELAY`], so a burst of events costs one frame.
    fn repaint_hook(&self) -> Notify {
        let ctx = self.ctx.clone();
        Arc::new(move || {
            if let Some(ctx) = &ctx {
                ctx.request_repaint_after(NEWS_REPAINT_DELAY);
            }
        })
    }

    /// A source opened (or failed to). A device that cannot be opened at
    /// start makes the window play the demo recording instead, once.
    pub(super) fn capture_opened(&mut self, result: Result<CaptureHandle, AudioError>) {
        match result {
            Ok(handle) => {
                self.input.view.description = handle.description().to_owned();
                self.input.view.sample_rate_hz = Some(handle.sample_rate_hz());
                self.input.view.state = SourceState::Running;
                self.input.capture = Some(handle);
            }
            Err(error) => {
                let problem = sentence(&error.to_string());
                let may_fall_back = matches!(self.options.source, StartSource::Device(_))
                    && !self.input.fell_back_to_demo
                    && matches!(self.input.view.pick, SourcePick::Device(_));
                if may_fall_back {
                    self.input.fell_back_to_demo = true;
                    self.open_sample_build_if_wanted();
                    self.set_message(format!(
                        "No microphone could be opened ({}); playing the bundled demo recording instead.",
                        problem.trim_end_matches('.')
                    ));
                    self.start_source(SourcePick::Demo);
                } else {
                    self.input.view.state = SourceState::Failed(problem.clone());
                    self.set_error(problem);
                }
            }
        }
    }

    pub(super) fn take_capture_events(&mut self) {
        let Some(handle) = &self.input.capture else {
            return;
        };
        let events: Vec<CaptureEvent> = handle.try_events().collect();
        for event in events {
            self.on_capture_event(event);
        }
    }

    fn on_capture_event(&mut self, event: CaptureEvent) {
        let view = &mut self.input.view;
        match event {
            CaptureEvent::SourceStarted {
                description,
                sample_rate_hz,
            } => {
                view.description = description;
                view.sample_rate_hz = Some(sample_rate_hz);
                view.state = SourceState::Running;
            }
            CaptureEvent::Level(level) => {
                if level.clipped {
                    view.clipped_at = Some(Instant::now());
                }
                view.level = Some(level);
            }
            CaptureEvent::TapStarted { .. } => {}
            CaptureEvent::Tap(tap) => self.add_tap(tap),
            CaptureEvent::Overrun {
                dropped_samples_total,
            } => self.set_error(format!(
                "Some sound was lost because the computer fell behind ({dropped_samples_total} samples so far)."
            )),
            CaptureEvent::Status { message } => self.set_message(sentence(&message)),
            CaptureEvent::DeviceLost { message } => {
                let text = sentence(&message);
                view.state = SourceState::Trouble(text.clone());
                self.set_error(text);
            }
            CaptureEvent::Retrying {
                attempt, delay_ms, ..
            } => {
                view.state = SourceState::Trouble(format!(
                    "Trying the input again in {:.1} s (attempt {attempt}).",
                    delay_ms as f64 / 1000.0
                ));
            }
            CaptureEvent::SourceEnded => {
                view.state = SourceState::Ended;
                self.input.stop();
            }
        }
    }

    /// A tap joins the pass; the plot shows the whole band again at the
    /// first kept one.
    fn add_tap(&mut self, tap: Tap) {
        let first = tap.is_accepted() && self.pass.session.pass().is_none();
        self.pass.session.add_tap(tap);
        if first {
            self.areas.listen.reset_plot = true;
        }
    }

    /// Reads a WAV file on the job runner and shows its taps as the pass.
    pub(super) fn open_recording(&mut self, path: PathBuf) {
        if path.as_os_str().is_empty() {
            self.set_error("Type the path of a WAV file first.".to_owned());
            return;
        }
        self.input.stop();
        self.input.view.state = SourceState::Starting;
        self.input.view.description = file_name(&path);
        let trigger = self.input.settings.trigger.clone();
        let analysis = self.input.settings.analysis.clone();
        self.set_message(format!("Reading {} …", path.display()));
        self.work.spawn("open-wav", move || {
            work::analyse_recording(path, trigger, analysis)
        });
    }

    /// A recording opened from a file was read and analysed (or not).
    pub(super) fn recording_analysed(&mut self, path: PathBuf, result: Result<Vec<Tap>, String>) {
        match result {
            Ok(taps) => {
                let kept = taps.iter().filter(|t| t.is_accepted()).count();
                let count = taps.len();
                self.pass.session.replace_taps(taps);
                self.areas.listen.reset_plot = true;
                self.input.view.state = SourceState::File(path.clone());
                self.input.view.description = file_name(&path);
                self.input.view.level = None;
                self.set_message(format!(
                    "Opened {}: {count} taps, {kept} kept.",
                    path.display()
                ));
            }
            Err(problem) => self.set_error(problem),
        }
    }
}
