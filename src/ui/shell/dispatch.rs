//! Command dispatch: the commands the areas pushed during a frame, applied
//! once after drawing, and the answers of the shell's background jobs.

use super::work::{self, FilePurpose, ShellJob};
use super::{export, TapwrightApp, LABEL_SETS};
use crate::audio::CaptureSettings;
use crate::ui::commands::{AppCommand, ListenCommand};

impl TapwrightApp {
    pub(super) fn apply_commands(&mut self) {
        let commands = std::mem::take(&mut self.commands);
        for command in commands {
            self.apply(command);
        }
    }

    fn apply(&mut self, command: AppCommand) {
        match command {
            AppCommand::ShowArea(area) => self.view.area = area,
            AppCommand::NewBuild { name, family } => self.new_build(&name, family),
            AppCommand::OpenBuild(path) => self.open_build(path),
            AppCommand::SaveBuild => self.save_build(),
            AppCommand::SaveBuildAs(path) => self.save_build_as(path),
            AppCommand::CloseBuild => self.close_build(),
            AppCommand::EditBuild { description, edit } => self.edit_build(&description, edit),
            AppCommand::RecordPass {
                part,
                input,
                labels,
            } => self.record_pass(&part, input, &labels),
            AppCommand::SetListenPart(part) => self.pass.listen_part = part,
            AppCommand::ShowMessage(text) => self.set_message(text),
            AppCommand::ShowError(text) => self.set_error(text),
            AppCommand::Listen(command) => self.apply_listen(command),
        }
    }

    fn apply_listen(&mut self, command: ListenCommand) {
        let session = &mut self.pass.session;
        match command {
            ListenCommand::ChooseSource(pick) => {
                session.clear();
                self.start_source(pick);
            }
            ListenCommand::RefreshDevices => self.work.spawn("devices", work::list_devices),
            ListenCommand::SetSettings(settings) => self.set_settings(settings),
            ListenCommand::SetTapsToAverage(count) => session.set_taps_to_average(count),
            ListenCommand::SetTapLeftOut {
                tap_index,
                left_out,
            } => {
                session.set_left_out(tap_index, left_out);
            }
            ListenCommand::SetModeLabel { mode_index, label } => {
                session.set_label(mode_index, label);
            }
            ListenCommand::NewPass => {
                session.clear();
                self.areas.listen.reset_plot = true;
                self.set_message("Started a new pass.".to_owned());
            }
            ListenCommand::OpenRecording(path) => self.open_recording(path),
            ListenCommand::ChooseRecordingFile => self.choose_file(FilePurpose::OpenRecording, ""),
            ListenCommand::ChooseSaveTapsFile => {
                self.choose_file(FilePurpose::SaveTaps, "taps.wav")
            }
            ListenCommand::SaveTaps(path) => match session.kept_taps_as_recording(0.5) {
                Some(recording) => self
                    .work
                    .spawn("save-wav", move || work::save_wav(path, recording)),
                None => self.set_error("There are no kept taps to save yet.".to_owned()),
            },
            ListenCommand::ChooseExportFile => {
                self.choose_file(FilePurpose::ExportPass, "pass.json");
            }
            ListenCommand::ExportPass(path) => match export::pass_json(session, self.pass.a4_hz) {
                Some(text) => self
                    .work
                    .spawn("export", move || work::save_text(path, text, "the pass")),
                None => self
                    .set_error("There is no pass to export yet: tap the plate first.".to_owned()),
            },
            ListenCommand::SetA4(a4_hz) => {
                if a4_hz.is_finite() && (380.0..=480.0).contains(&a4_hz) {
                    self.pass.a4_hz = a4_hz;
                } else {
                    self.set_error(format!("A4 of {a4_hz} Hz is outside 380 to 480 Hz."));
                }
            }
            ListenCommand::SetLabelSet(index) => {
                self.pass.label_set = index.min(LABEL_SETS.len() - 1);
            }
        }
    }

    /// New trigger and analysis settings: the taps already heard are
    /// measured again in a new band; trigger settings only apply to the
    /// taps that follow.
    fn set_settings(&mut self, settings: CaptureSettings) {
        self.pass.session.set_max_modes(settings.analysis.max_modes);
        if settings.analysis != self.input.settings.analysis {
            let records = self.pass.session.measured_records();
            if !records.is_empty() {
                let analysis = settings.analysis.clone();
                self.work
                    .spawn("remeasure", move || work::remeasure_taps(records, analysis));
            }
        }
        if !self.input.pass_settings_on(&settings) {
            self.set_error(
                "The input has stopped; the new settings apply when it starts again.".to_owned(),
            );
        }
        self.input.settings = settings;
    }

    fn choose_file(&mut self, purpose: FilePurpose, suggested_name: &'static str) {
        self.work
            .spawn("dialog", move || work::choose_file(purpose, suggested_name));
    }

    /// The answers of the shell's jobs that have arrived.
    pub(super) fn take_job_results(&mut self) {
        for done in self.work.drain() {
            match done {
                ShellJob::Devices(Ok(devices)) => {
                    self.input.view.devices = devices;
                    self.input.view.devices_problem = None;
                }
                ShellJob::Devices(Err(error)) => {
                    self.input.view.devices.clear();
                    self.input.view.devices_problem =
                        Some(crate::text::sentence(&error.to_string()));
                }
                ShellJob::CaptureStarted { generation, result } => {
                    if self.input.is_current(generation) {
                        self.capture_opened(result);
                    }
                }
                ShellJob::FileChosen { purpose, path } => self.file_chosen(purpose, path),
                ShellJob::RecordingAnalysed { path, result } => {
                    self.recording_analysed(path, result);
                }
                ShellJob::TapsRemeasured(measured) => {
                    self.pass.session.replace_measurements(measured);
                }
                ShellJob::Saved(Ok(text)) => self.set_message(text),
                ShellJob::Saved(Err(problem)) => self.set_error(problem),
                ShellJob::BuildLoaded { path, result } => self.build_loaded(path, result),
            }
        }
    }

    /// The maker chose a file in a dialog of the shell (None: cancelled).
    fn file_chosen(&mut self, purpose: FilePurpose, path: Option<std::path::PathBuf>) {
        let Some(path) = path else {
            if purpose == FilePurpose::SaveBuildCopy {
                self.document.closing.after_save = false;
            }
            return;
        };
        let command = match purpose {
            FilePurpose::OpenRecording => AppCommand::Listen(ListenCommand::OpenRecording(path)),
            FilePurpose::SaveTaps => AppCommand::Listen(ListenCommand::SaveTaps(path)),
            FilePurpose::ExportPass => AppCommand::Listen(ListenCommand::ExportPass(path)),
            FilePurpose::SaveBuildCopy => AppCommand::SaveBuildAs(path),
        };
        self.commands.push(command);
    }
}
