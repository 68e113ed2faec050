//! The open document: the build, the file it lives in, whether it has
//! unsaved changes, and its saving (through the build saver, see `saver`),
//! with the commands that open, start, change, save and close it and
//! record a pass on it.

use std::path::{Path, PathBuf};

use super::saver::{BuildSaver, SaveCheck, SaveDone, SaveProblem, SaveStamp};
use super::work::{self, FilePurpose};
use super::TapwrightApp;
use crate::ledger::store::DiskFingerprint;
use crate::ledger::{Build, Family, PassInput};
use crate::text::sentence;
use crate::ui::commands::BuildEdit;

/// The open build and everything about its file.
#[derive(Debug)]
pub(super) struct OpenDocument {
    build: Option<Build>,
    path: Option<PathBuf>,
    unsaved: bool,
    /// Counts the builds opened or started (stamps saves, see `SaveStamp`).
    document: u64,
    /// Counts the changes to the open build; the unsaved mark clears only
    /// when a save of the newest one finishes.
    generation: u64,
    /// The file that changed on disk under the open build, while the maker
    /// has not decided what to do about it.
    conflict: Option<PathBuf>,
    /// Where closing the window stands.
    pub closing: Closing,
    saver: BuildSaver,
}

/// Where closing the window stands (see `prompts`).
#[derive(Debug, Default)]
pub(super) struct Closing {
    /// The window was asked to close with unsaved changes.
    pub prompt: bool,
    /// Close once the newest snapshot is saved.
    pub after_save: bool,
    /// The maker agreed to close; the next close request goes through.
    pub confirmed: bool,
}

impl OpenDocument {
    /// No build open; saves go through a build saver answering to `jobs`.
    pub fn new(jobs: &crate::ui::jobs::Jobs) -> Self {
        Self {
            build: None,
            path: None,
            unsaved: false,
            document: 0,
            generation: 0,
            conflict: None,
            closing: Closing::default(),
            saver: BuildSaver::new(jobs),
        }
    }

    /// The open build.
    pub fn build(&self) -> Option<&Build> {
        self.build.as_ref()
    }

    /// Where the open build lives (None until first saved).
    pub fn path(&self) -> Option<&Path> {
        self.path.as_deref()
    }

    /// True when the open build has changes not saved to its file.
    pub fn unsaved(&self) -> bool {
        self.unsaved
    }

    /// The file that changed on disk, while the maker decides.
    pub fn conflict(&self) -> Option<&Path> {
        self.conflict.as_deref()
    }

    /// Forgets the conflict (the maker decided) and gives its file.
    pub fn take_conflict(&mut self) -> Option<PathBuf> {
        self.conflict.take()
    }

    /// Replaces the open build (opened, started, closed): a new document,
    /// so answers to saves of the old one no longer touch the window.
    fn replace(&mut self, build: Option<Build>, path: Option<PathBuf>, unsaved: bool) {
        self.build = build;
        self.path = path;
        self.unsaved = unsaved;
        self.document += 1;
        self.generation = 0;
        self.conflict = None;
    }

    /// The open build changed: it is unsaved until a save of this snapshot
    /// (or a newer one) finishes.
    fn mark_changed(&mut self) {
        self.generation += 1;
        self.unsaved = true;
    }

    /// Queues a save of the open build, as it is now, on the build saver.
    pub fn queue_save(&mut self, path: PathBuf, check: SaveCheck) {
        let Some(build) = self.build.clone() else {
            return;
        };
        let stamp = SaveStamp {
            document: self.document,
            generation: self.generation,
        };
        self.saver.save(path, build, stamp, check);
    }
}

impl TapwrightApp {
    /// Replaces the open build; Listen's labels go back to the presets.
    pub(super) fn replace_build(
        &mut self,
        build: Option<Build>,
        path: Option<PathBuf>,
        unsaved: bool,
    ) {
        self.document.replace(build, path, unsaved);
        self.pass.listen_part = None;
    }

    /// Opens the bundled sample build when the options ask for it and no
    /// build is open or requested.
    pub(super) fn open_sample_build_if_wanted(&mut self) {
        if !self.options.sample_build_with_demo
            || self.options.build.is_some()
            || self.document.build.is_some()
        {
            return;
        }
        match crate::demo::sample_build() {
            Ok(build) => self.replace_build(Some(build), None, false),
            Err(error) => self.set_error(error.to_string()),
        }
    }

    pub(super) fn new_build(&mut self, name: &str, family: Family) {
        let name = name.trim().to_owned();
        if name.is_empty() {
            self.set_error("A new build needs a name.".to_owned());
        } else {
            self.set_message(format!("Started the build \"{name}\"; save it to keep it."));
            self.document.saver.track(None);
            self.replace_build(Some(Build::new(name, family)), None, true);
        }
    }

    pub(super) fn open_build(&mut self, path: PathBuf) {
        self.work
            .spawn("open-build", move || work::load_build(path));
    }

    /// A build file was read (or could not be).
    pub(super) fn build_loaded(
        &mut self,
        path: PathBuf,
        result: Result<(Build, DiskFingerprint), String>,
    ) {
        match result {
            Ok((build, fingerprint)) => {
                self.set_message(format!("Opened the build \"{}\".", build.name));
                self.document.saver.track(Some((path.clone(), fingerprint)));
                self.replace_build(Some(build), Some(path), false);
            }
            Err(problem) => self.set_error(problem),
        }
    }

    pub(super) fn save_build(&mut self) {
        match (&self.document.build, &self.document.path) {
            (Some(_), Some(path)) => {
                let path = path.clone();
                self.document.queue_save(path, SaveCheck::IfUnchanged);
            }
            (Some(_), None) => {
                self.set_error("The build has no file yet: choose where to save it.".to_owned())
            }
            (None, _) => self.set_error("There is no open build to save.".to_owned()),
        }
    }

    pub(super) fn save_build_as(&mut self, path: PathBuf) {
        match &self.document.build {
            Some(_) => self.document.queue_save(path, SaveCheck::IfUnchanged),
            None => self.set_error("There is no open build to save.".to_owned()),
        }
    }

    pub(super) fn close_build(&mut self) {
        self.document.saver.track(None);
        self.replace_build(None, None, false);
    }

    pub(super) fn edit_build(&mut self, description: &str, edit: BuildEdit) {
        let Some(build) = self.document.build.as_mut() else {
            self.set_error("Open or start a build first.".to_owned());
            return;
        };
        match edit(build) {
            Ok(text) => {
                self.document.mark_changed();
                if !text.is_empty() {
                    self.set_message(text);
                }
            }
            Err(error) => self.set_error(format!(
                "While {description}: {}",
                sentence(&error.to_string())
            )),
        }
    }

    /// Records a pass on a part of the open build, puts the labels chosen in
    /// Listen on its modes, and saves the build when it has a file.
    pub(super) fn record_pass(
        &mut self,
        part_name: &str,
        input: PassInput,
        labels: &[Option<String>],
    ) {
        let outcome = match self.record_on_part(part_name, input, labels) {
            Ok(outcome) => outcome,
            Err(problem) => {
                self.set_error(problem);
                return;
            }
        };
        let (pass_number, problems) = outcome;
        self.document.mark_changed();
        let autosave = self.document.path.clone();
        match problems.first() {
            Some(problem) => self.set_error(problem.clone()),
            None if autosave.is_some() => self.set_message(format!(
                "Recorded pass {pass_number} of \"{part_name}\"; saving the build."
            )),
            None => self.set_message(format!(
                "Recorded pass {pass_number} of \"{part_name}\"; save the build to keep it."
            )),
        }
        // Autosave after every recorded pass once the build has a file.
        if let Some(path) = autosave {
            self.document.queue_save(path, SaveCheck::IfUnchanged);
        }
    }

    /// The pass recorded (its number, and the labels that could not be
    /// put on), or why none was.
    fn record_on_part(
        &mut self,
        part_name: &str,
        input: PassInput,
        labels: &[Option<String>],
    ) -> Result<(u32, Vec<String>), String> {
        let build = self
            .document
            .build
            .as_mut()
            .ok_or_else(|| "Open or start a build first.".to_owned())?;
        let part = build
            .part_mut(part_name)
            .ok_or_else(|| format!("The build has no part named \"{part_name}\"."))?;
        let frequencies: Vec<f64> = input.modes.iter().map(|m| m.frequency_hz).collect();
        let outcome = part
            .record_pass(input)
            .map_err(|error| sentence(&error.to_string()))?;
        // The ledger sorts the modes by frequency; find each labelled one.
        let mut problems = Vec::new();
        if let Some(pass) = part.pass(outcome.pass_number) {
            let stored: Vec<f64> = pass.modes().iter().map(|m| m.frequency_hz).collect();
            for (frequency_hz, label) in frequencies.iter().zip(labels) {
                let Some(label) = label else { continue };
                let Some(index) = stored.iter().position(|f| f == frequency_hz) else {
                    continue;
                };
                let added = part.add_label(label.clone());
                if let Err(error) =
                    added.and_then(|()| part.set_label(outcome.pass_number, index, Some(label)))
                {
                    problems.push(sentence(&error.to_string()));
                }
            }
        }
        Ok((outcome.pass_number, problems))
    }

    /// Asks where to save a copy of the open build (after a conflict, or
    /// when closing a build that has no file).
    pub(super) fn choose_copy_path(&mut self) {
        let name = self
            .document
            .build
            .as_ref()
            .map(|b| format!("{} copy.ron", b.name))
            .unwrap_or_else(|| "build.ron".to_owned());
        self.work.spawn("dialog", move || {
            work::choose_file(FilePurpose::SaveBuildCopy, &name)
        });
    }

    /// Takes the saves the build saver finished.
    pub(super) fn take_finished_saves(&mut self) {
        for done in self.document.saver.finished() {
            self.build_saved(done);
        }
    }

    /// A save finished. Only a save of the open build changes the window:
    /// its path is adopted (Save as…), and the unsaved mark clears only if
    /// the snapshot saved is the newest.
    fn build_saved(&mut self, done: SaveDone) {
        let SaveDone {
            path,
            stamp,
            result,
            ..
        } = done;
        if stamp.document != self.document.document {
            if let Err(SaveProblem::Failed(problem) | SaveProblem::ChangedOnDisk(problem)) = result
            {
                self.set_error(problem);
            }
            return;
        }
        match result {
            Ok(()) => {
                self.set_message(format!("Saved the build to {}.", path.display()));
                self.document.path = Some(path);
                self.document.conflict = None;
                if stamp.generation == self.document.generation {
                    self.document.unsaved = false;
                    if self.document.closing.after_save {
                        self.close_window_now();
                    }
                }
            }
            Err(SaveProblem::ChangedOnDisk(problem)) => {
                self.document.unsaved = true;
                self.document.closing.after_save = false;
                self.document.conflict = Some(path);
                self.set_error(problem);
            }
            Err(SaveProblem::Failed(problem)) => {
                self.document.unsaved = true;
                self.document.closing.after_save = false;
                self.set_error(problem);
            }
        }
    }
}
