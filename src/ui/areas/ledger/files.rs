//! File work of the Ledger area that must not hold up the window: file
//! dialogs (they block their thread until the maker answers), the CSV
//! export and the build report (both written atomically, see
//! `atomic_file`). Each runs on the window's job runner and sends one
//! [`FileDone`] back; the area picks the answers up at the start of a frame.

use std::path::PathBuf;

use crate::ledger::{csv, Build};
use crate::report::{build_report_html, ReportSettings};

use super::Note;
use crate::ui::commands::AppCommand;
use crate::ui::context::AreaContext;
use crate::ui::dialogs::{EXPORT_CSV, OPEN_BUILD, SAVE_BUILD_AS, SAVE_REPORT};
use crate::ui::jobs::{Inbox, Jobs};

/// What a file job reports.
#[derive(Debug)]
enum FileDone {
    /// A build file was chosen to open (None: cancelled).
    OpenChosen(Option<PathBuf>),
    /// A path was chosen to save the build to (None: cancelled).
    SaveChosen(Option<PathBuf>),
    /// An export (the CSV pass table, the report) finished (None: the
    /// dialog was cancelled). `what` names it for the note.
    Exported {
        what: &'static str,
        result: Option<Result<PathBuf, String>>,
    },
}

/// The file jobs of the Ledger area, run by the window's job runner.
#[derive(Debug, Default)]
pub struct FileJobs {
    /// Where the answers arrive (made at the first job).
    answers: Option<Inbox<FileDone>>,
}

impl FileJobs {
    /// True while a dialog is open or a file is being written.
    pub fn is_busy(&self) -> bool {
        self.answers.as_ref().is_some_and(|a| a.waiting() > 0)
    }

    fn spawn(&mut self, jobs: &Jobs, work: impl FnOnce() -> FileDone + Send + 'static) {
        self.answers
            .get_or_insert_with(|| jobs.inbox())
            .spawn("ledger-file", work);
    }

    /// Shows the dialog to choose a build file to open.
    pub fn choose_build_to_open(&mut self, jobs: &Jobs) {
        self.spawn(jobs, || FileDone::OpenChosen(OPEN_BUILD.pick()));
    }

    /// Shows the dialog to choose where to save the build.
    pub fn choose_save_path(&mut self, jobs: &Jobs, build_name: &str) {
        let suggested = format!("{}.ron", file_stem_for(build_name));
        self.spawn(jobs, move || {
            FileDone::SaveChosen(SAVE_BUILD_AS.save(&suggested))
        });
    }

    /// Shows the dialog to choose where the CSV goes, then writes it.
    pub fn choose_csv_path(&mut self, jobs: &Jobs, build: &Build) {
        let text = csv::pass_table(build);
        let suggested = format!("{} passes.csv", file_stem_for(&build.name));
        self.spawn(jobs, move || FileDone::Exported {
            what: PASS_TABLE,
            result: EXPORT_CSV
                .save(&suggested)
                .map(|path| write_text(path, &text)),
        });
    }

    /// Writes the pass table of `build` as CSV to `path`.
    pub fn export_csv(&mut self, jobs: &Jobs, build: &Build, path: PathBuf) {
        let text = csv::pass_table(build);
        self.spawn(jobs, move || FileDone::Exported {
            what: PASS_TABLE,
            result: Some(write_text(path, &text)),
        });
    }

    /// Shows the dialog to choose where the build report goes, then writes
    /// it (made on the job's thread from a copy of the build).
    pub fn choose_report_path(&mut self, jobs: &Jobs, build: &Build, a4_hz: f64) {
        let build = build.clone();
        let suggested = format!("{} report.html", file_stem_for(&build.name));
        self.spawn(jobs, move || FileDone::Exported {
            what: REPORT,
            result: SAVE_REPORT
                .save(&suggested)
                .map(|path| write_report(path, &build, a4_hz)),
        });
    }

    /// Writes the build report of `build` to `path`.
    pub fn export_report(&mut self, jobs: &Jobs, build: &Build, path: PathBuf, a4_hz: f64) {
        let build = build.clone();
        self.spawn(jobs, move || FileDone::Exported {
            what: REPORT,
            result: Some(write_report(path, &build, a4_hz)),
        });
    }

    /// Turns finished jobs into commands and notes.
    pub fn take_results(&mut self, note: &mut Option<Note>, ctx: &mut AreaContext) {
        let arrived = self.answers.as_mut().map(Inbox::drain).unwrap_or_default();
        for done in arrived {
            match done {
                FileDone::OpenChosen(Some(path)) => ctx.push(AppCommand::OpenBuild(path)),
                FileDone::SaveChosen(Some(path)) => ctx.push(AppCommand::SaveBuildAs(path)),
                FileDone::OpenChosen(None)
                | FileDone::SaveChosen(None)
                | FileDone::Exported { result: None, .. } => {
                    *note = Some(Note::info(
                        "No file was chosen. If no dialog appeared, type the path in the \
                         File path field instead.",
                    ));
                }
                FileDone::Exported {
                    what,
                    result: Some(Ok(path)),
                } => {
                    *note = Some(Note::info(format!("Wrote {what} to {}.", path.display())));
                }
                FileDone::Exported {
                    result: Some(Err(problem)),
                    ..
                } => *note = Some(Note::error(problem)),
            }
        }
    }
}

/// A build name made safe as a file name ("Violin \"Wren\"" → "Violin Wren").
fn file_stem_for(name: &str) -> String {
    let cleaned: String = name
        .chars()
        .filter(|c| c.is_alphanumeric() || matches!(c, ' ' | '-' | '_' | '.'))
        .collect();
    let cleaned = cleaned.split_whitespace().collect::<Vec<_>>().join(" ");
    if cleaned.is_empty() {
        "build".to_owned()
    } else {
        cleaned
    }
}

/// Names of the exports, for the notes.
const PASS_TABLE: &str = "the pass table";
const REPORT: &str = "the build report";

/// Makes the build report and writes it atomically; the sentence to show
/// on failure.
fn write_report(path: PathBuf, build: &Build, a4_hz: f64) -> Result<PathBuf, String> {
    let settings = ReportSettings {
        a4_hz,
        ..ReportSettings::default()
    };
    let html = build_report_html(build, &settings);
    crate::report::write_report(&path, &html)
        .map(|()| path.clone())
        .map_err(crate::text::error_sentence)
}

/// Writes `text` to `path` atomically; the sentence to show on failure.
fn write_text(path: PathBuf, text: &str) -> Result<PathBuf, String> {
    crate::atomic_file::write_bytes_atomically(&path, text.as_bytes())
        .map(|()| path.clone())
        .map_err(|problem| format!("Cannot write {}: {problem}.", path.display()))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn file_names_lose_quotes_and_slashes() {
        assert_eq!(file_stem_for("Violin \"Wren\" / 2"), "Violin Wren 2");
        assert_eq!(file_stem_for("\"\""), "build");
    }

    #[test]
    fn csv_is_written_whole_or_not_at_all() {
        let folder = tempfile::tempdir().expect("test value");
        let path = folder.path().join("t.csv");
        write_text(path.clone(), "a,b\n1,2\n").expect("test value");
        assert_eq!(
            std::fs::read_to_string(&path).expect("test value"),
            "a,b\n1,2\n"
        );
        let missing = folder.path().join("no such folder").join("t.csv");
        let problem = write_text(missing, "x").unwrap_err();
        assert!(problem.contains("no such folder"), "{problem}");
        // Only the CSV is left in the folder (no stray temporary file).
        assert_eq!(
            std::fs::read_dir(folder.path())
                .expect("test value")
                .count(),
            1
        );
    }
}
