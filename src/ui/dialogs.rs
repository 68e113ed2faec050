//! The file dialogs of the window (rfd), one description each. A dialog
//! blocks the thread it runs on until the maker answers, so it is always
//! shown from a background job (see `jobs`).

use std::path::PathBuf;

/// One kind of file dialog: its title and the files it offers.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct FileDialog {
    /// The window title.
    pub title: &'static str,
    /// The name of the filter ("WAV recording").
    pub filter: &'static str,
    /// The file-name endings the filter shows.
    pub extensions: &'static [&'static str],
}

/// Open a recording (Listen).
pub const OPEN_RECORDING: FileDialog = FileDialog {
    title: "Open a recording",
    filter: "WAV recording",
    extensions: &["wav", "WAV"],
};
/// Save the kept taps (Listen).
pub const SAVE_TAPS: FileDialog = FileDialog {
    title: "Save the kept taps as WAV",
    filter: "WAV recording",
    extensions: &["wav"],
};
/// Export the pass as JSON (Listen).
pub const EXPORT_PASS: FileDialog = FileDialog {
    title: "Export the pass as JSON",
    filter: "JSON",
    extensions: &["json"],
};
/// Open a build (Ledger).
pub const OPEN_BUILD: FileDialog = FileDialog {
    title: "Open a build",
    filter: "tapwright build",
    extensions: &["ron"],
};
/// Save the build under a new name (Ledger, and after a conflict or when
/// closing a build that has no file).
pub const SAVE_BUILD_AS: FileDialog = FileDialog {
    title: "Save the build as",
    filter: "tapwright build",
    extensions: &["ron"],
};
/// Export the pass table (Ledger).
pub const EXPORT_CSV: FileDialog = FileDialog {
    title: "Export the pass table as CSV",
    filter: "CSV table",
    extensions: &["csv"],
};
/// Save the build report (Ledger).
pub const SAVE_REPORT: FileDialog = FileDialog {
    title: "Save the build report",
    filter: "Web page (HTML)",
    extensions: &["html"],
};

impl FileDialog {
    /// Asks for a file to open; None when cancelled.
    pub fn pick(&self) -> Option<PathBuf> {
        rfd::FileDialog::new()
            .set_title(self.title)
            .add_filter(self.filter, self.extensions)
            .pick_file()
    }

    /// Asks where to save, suggesting `suggested_name`; None when
    /// cancelled.
    pub fn save(&self, suggested_name: &str) -> Option<PathBuf> {
        rfd::FileDialog::new()
            .set_title(self.title)
            .add_filter(self.filter, self.extensions)
            .set_file_name(suggested_name)
            .save_file()
    }
}
