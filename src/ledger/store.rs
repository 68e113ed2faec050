//! Build files: one RON file per build, with a schema version.
//!
//! Reading ([`load`]) never writes. It checks, in order: the file can be
//! read, is not empty, is UTF-8 text, is RON with a `schema_version` this
//! code knows (1 is migrated, 2 is current), parses as that layout, and
//! passes [`Build::validate`]. (The current layout is tried first; the
//! version alone is read only when that fails.) Each failure is one [`StoreError`] naming the
//! file and, for syntax and layout problems, the line and column.
//!
//! Writing ([`save`]) is atomic: the new text goes to a temporary file in
//! the same folder, which is flushed to disk (`sync_all`); the current file,
//! if any, is copied to `<name>.ron.bak` the same way (temporary copy, sync,
//! rename); then the temporary file is renamed over the build file and the
//! folder is synced. A rename within a folder replaces the file in one step,
//! so a crash at any moment leaves either the old or the new file whole
//! (plus, at worst, a stray `.<name>.ron.*.saving` temporary file, which
//! loading ignores and later saves do not trip over). [`stage`] and
//! [`StagedSave::commit`] are the two halves of [`save`], split so tests can
//! stop between them.

use std::fs::{self, File};
use std::io::{self, Write};
use std::path::{Path, PathBuf};

use ron::ser::PrettyConfig;
use serde::Deserialize;

use super::model::{Build, SCHEMA_VERSION};
use super::schema_v1;
use super::LedgerError;

/// Oldest schema version this code reads.
pub const OLDEST_READABLE_VERSION: u32 = 1;

/// What went wrong reading or writing a build file.
#[derive(Debug, thiserror::Error)]
pub enum StoreError {
    /// The file could not be read (missing, no permission ...).
    #[error("cannot read {}: {source}", path.display())]
    Read {
        /// The file.
        path: PathBuf,
        /// The system's reason.
        source: io::Error,
    },
    /// The file has no content.
    #[error("{} is empty; it is not a tapwright build file", path.display())]
    Empty {
        /// The file.
        path: PathBuf,
    },
    /// The file is not UTF-8 text.
    #[error("{} is not a text file (byte {offset} is not UTF-8)", path.display())]
    NotText {
        /// The file.
        path: PathBuf,
        /// Offset of the first invalid byte.
        offset: usize,
    },
    /// The RON text is malformed, truncated, or does not fit the layout.
    #[error("{}, line {line}, column {column}: {problem}", path.display())]
    Syntax {
        /// The file.
        path: PathBuf,
        /// Line (1-based).
        line: usize,
        /// Column (1-based).
        column: usize,
        /// What the RON reader found wrong.
        problem: String,
    },
    /// No `schema_version` field.
    #[error("{} has no schema_version; it is not a tapwright build file", path.display())]
    NoVersion {
        /// The file.
        path: PathBuf,
    },
    /// A schema version this code cannot read (newer, or never existed).
    #[error("{} is schema version {found}, but this tapwright reads versions {OLDEST_READABLE_VERSION} to {SCHEMA_VERSION}", path.display())]
    UnsupportedVersion {
        /// The file.
        path: PathBuf,
        /// The version written in the file.
        found: u64,
    },
    /// The file parses but breaks a rule of the model.
    #[error("{} does not hold a valid build: {problem}", path.display())]
    Invalid {
        /// The file.
        path: PathBuf,
        /// The broken rule.
        problem: LedgerError,
    },
    /// `save` refused a build that breaks a rule of the model.
    #[error("not saving {}: {problem}", path.display())]
    RefusedToSave {
        /// The file.
        path: PathBuf,
        /// The broken rule.
        problem: LedgerError,
    },
    /// Encoding the build as RON failed.
    #[error("cannot encode the build for {}: {problem}", path.display())]
    Encode {
        /// The file.
        path: PathBuf,
        /// The encoder's reason.
        problem: String,
    },
    /// Writing, syncing or renaming failed; the old file is untouched.
    #[error("cannot write {}: {source}", path.display())]
    Write {
        /// The file being written.
        path: PathBuf,
        /// The system's reason.
        source: io::Error,
    },
}

/// The path of the backup kept by [`save`]: `<file name>.bak` beside it.
pub fn backup_path(path: &Path) -> PathBuf {
    let mut name = path
        .file_name()
        .map(|n| n.to_os_string())
        .unwrap_or_default();
    name.push(".bak");
    path.with_file_name(name)
}

/// Reads a build file (any readable schema version). Never writes.
pub fn load(path: &Path) -> Result<Build, StoreError> {
    let bytes = fs::read(path).map_err(|source| StoreError::Read {
        path: path.to_path_buf(),
        source,
    })?;
    let text = std::str::from_utf8(&bytes).map_err(|e| StoreError::NotText {
        path: path.to_path_buf(),
        offset: e.valid_up_to(),
    })?;
    from_ron_text(text, path)
}

/// Parses the text of a build file; `path` is only used in errors.
pub fn from_ron_text(text: &str, path: &Path) -> Result<Build, StoreError> {
    if text.trim().is_empty() {
        return Err(StoreError::Empty {
            path: path.to_path_buf(),
        });
    }
    let syntax = |e: ron::error::SpannedError| {
        let cut_short = matches!(e.code, ron::Error::Eof | ron::Error::ExpectedStringEnd)
            || is_at_end(text, e.span.end.line, e.span.end.col);
        let problem = if cut_short {
            format!(
                "the file ends before the build is complete (cut short?): {}",
                e.code
            )
        } else {
            e.code.to_string()
        };
        StoreError::Syntax {
            path: path.to_path_buf(),
            line: e.span.start.line,
            column: e.span.start.col,
            problem,
        }
    };
    let unsupported = |found: u64| StoreError::UnsupportedVersion {
        path: path.to_path_buf(),
        found,
    };
    // The current layout is tried first; only if it does not fit, or the
    // file says it is another version, is the version read on its own.
    let version = match ron::from_str::<Build>(text) {
        Ok(build) if build.schema_version() == SCHEMA_VERSION => return checked(build, path),
        Ok(build) => u64::from(build.schema_version()),
        Err(current_layout_error) => {
            let probe: VersionProbe = ron::from_str(text).map_err(syntax)?;
            if probe.schema_version == u64::from(SCHEMA_VERSION) {
                return Err(syntax(current_layout_error));
            }
            probe.schema_version
        }
    };
    let build = match version {
        0 => {
            return Err(StoreError::NoVersion {
                path: path.to_path_buf(),
            })
        }
        1 => schema_v1::migrate(ron::from_str::<schema_v1::BuildV1>(text).map_err(syntax)?),
        found => return Err(unsupported(found)),
    };
    checked(build, path)
}

/// The build if it passes [`Build::validate`].
fn checked(build: Build, path: &Path) -> Result<Build, StoreError> {
    build.validate().map_err(|problem| StoreError::Invalid {
        path: path.to_path_buf(),
        problem,
    })?;
    Ok(build)
}

/// True if (line, column), both 1-based, is at or past the last character
/// of `text`, ignoring trailing white space.
fn is_at_end(text: &str, line: usize, column: usize) -> bool {
    let content = text.trim_end();
    let last_line = content.lines().count().max(1);
    let last_column = content.lines().last().map_or(0, |l| l.chars().count());
    line > last_line || (line == last_line && column > last_column)
}

/// Only the version; every other field is skipped. Named like the build so
/// that files written with struct names parse too.
#[derive(Deserialize)]
#[serde(rename = "Build")]
struct VersionProbe {
    #[serde(default)]
    schema_version: u64,
}

/// The RON text `save` writes: pretty, `\n` line ends, the items of deep
/// lists (modes, thickness readings) one per line. Strings are written
/// as they are (a raw string `r#"..."#` when they hold quotes or
/// backslashes) rather than escaped character by character, which is both
/// easier to read and several times quicker for the long spectrum strings.
pub fn to_ron_text(build: &Build) -> Result<String, ron::Error> {
    let config = PrettyConfig::new()
        .new_line("\n")
        .indentor("    ")
        .depth_limit(6)
        .escape_strings(false);
    let mut text = ron::ser::to_string_pretty(build, config)?;
    text.push('\n');
    Ok(text)
}

/// Saves atomically, keeping the previous file as `<name>.ron.bak`.
/// Refuses a build that fails [`Build::validate`].
pub fn save(path: &Path, build: &Build) -> Result<(), StoreError> {
    stage(path, build)?.commit()
}

/// A build written and synced to a temporary file beside its destination,
/// not yet renamed into place. Dropping it deletes the temporary file and
/// leaves the destination untouched.
#[derive(Debug)]
pub struct StagedSave {
    temp: tempfile::NamedTempFile,
    destination: PathBuf,
}

/// First half of [`save`]: validates, encodes, writes and syncs the
/// temporary file. The destination is not touched.
pub fn stage(path: &Path, build: &Build) -> Result<StagedSave, StoreError> {
    build
        .validate()
        .map_err(|problem| StoreError::RefusedToSave {
            path: path.to_path_buf(),
            problem,
        })?;
    let text = to_ron_text(build).map_err(|e| StoreError::Encode {
        path: path.to_path_buf(),
        problem: e.to_string(),
    })?;
    let write_error = |source| StoreError::Write {
        path: path.to_path_buf(),
        source,
    };
    let mut temp = temp_beside(path).map_err(write_error)?;
    temp.write_all(text.as_bytes()).map_err(write_error)?;
    temp.as_file().sync_all().map_err(write_error)?;
    Ok(StagedSave {
        temp,
        destination: path.to_path_buf(),
    })
}

impl StagedSave {
    /// Where the new text is waiting.
    pub fn temp_path(&self) -> &Path {
        self.temp.path()
    }

    /// Second half of [`save`]: keeps the current file as the backup, then
    /// renames the temporary file over the destination and syncs the folder.
    pub fn commit(self) -> Result<(), StoreError> {
        let destination = self.destination;
        let write_error = |source| StoreError::Write {
            path: destination.clone(),
            source,
        };
        if destination.exists() {
            keep_backup(&destination).map_err(write_error)?;
        }
        self.temp
            .persist(&destination)
            .map_err(|e| write_error(e.error))?;
        sync_folder(&destination);
        Ok(())
    }
}

fn folder_of(path: &Path) -> &Path {
    match path.parent() {
        Some(parent) if !parent.as_os_str().is_empty() => parent,
        _ => Path::new("."),
    }
}

/// A new temporary file in the same folder, named `.<file name>.XXXX.saving`,
/// with the permissions `path` has now (or, for a new file, the ordinary
/// read-write permissions less the umask) rather than the owner-only
/// permissions temporary files get by default. Also used for the build
/// report's file.
pub fn temp_beside(path: &Path) -> io::Result<tempfile::NamedTempFile> {
    let name = path
        .file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_default();
    let prefix = format!(".{name}.");
    let mut builder = tempfile::Builder::new();
    builder.prefix(&prefix).suffix(".saving");
    if let Some(permissions) = permissions_for(path) {
        builder.permissions(permissions);
    }
    builder.tempfile_in(folder_of(path))
}

fn permissions_for(path: &Path) -> Option<fs::Permissions> {
    if let Ok(metadata) = fs::metadata(path) {
        return Some(metadata.permissions());
    }
    #[cfg(unix)]
    {
        use std::os::unix::fs::PermissionsExt;
        Some(fs::Permissions::from_mode(0o666))
    }
    #[cfg(not(unix))]
    {
        None
    }
}

/// Copies the current file to its backup path atomically.
fn keep_backup(path: &Path) -> io::Result<()> {
    let mut source = File::open(path)?;
    let mut copy = temp_beside(path)?;
    io::copy(&mut source, copy.as_file_mut())?;
    copy.as_file().sync_all()?;
    copy.persist(backup_path(path)).map_err(|e| e.error)?;
    Ok(())
}

/// Makes the renames durable where the platform allows opening a folder
/// (Unix); elsewhere the rename is already as durable as it gets.
fn sync_folder(path: &Path) {
    if let Ok(folder) = File::open(folder_of(path)) {
        // A failure here cannot undo the rename; the file is already whole.
        let _ = folder.sync_all();
    }
}
