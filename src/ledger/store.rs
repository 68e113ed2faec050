//! Build files: one RON file per build, with a schema version.
//!
//! Reading ([`load`]) never writes. It checks, in order: the path is a
//! regular file (a folder, named pipe or device is refused before it is
//! opened, so nothing hangs), is at most [`MAX_BUILD_FILE_MB`] MB (never more
//! is read), is not empty, is UTF-8 text (a leading byte-order mark is
//! skipped), is RON with a `schema_version` this code knows (1 to 3 are
//! migrated, 4 is current), parses as that layout, and passes [`Build::validate`].
//! (The current layout is tried first; the version alone is read only when
//! that fails.) Each failure is one [`StoreError`] naming the file and, for
//! syntax and layout problems, the line and column.
//!
//! Writing ([`save`]) is atomic: the new text goes to a temporary file in
//! the same folder, which is flushed to disk (`sync_all`); the current file,
//! if any, is copied to `<name>.ron.bak` the same way (temporary copy, sync,
//! rename); then the temporary file is renamed over the build file and the
//! folder is synced. A rename within a folder replaces the file in one step,
//! so a crash at any moment leaves either the old or the new file whole
//! (plus, at worst, a stray `.<name>.ron.*.saving` temporary file, which
//! loading ignores and the next save removes once it is a minute old). A
//! build file that is a symbolic link is saved through the link: the file
//! it points to is replaced, the link stays. [`save_checked`] first compares
//! the file with the [`DiskFingerprint`] taken when it was loaded or last
//! saved and refuses ([`StoreError::ChangedOnDisk`]) if another writer
//! changed it. [`stage`] and [`StagedSave::commit`] are the two halves of
//! [`save`], split so tests can stop between them.

use std::fs::{self, File};
use std::io::{self, Write};
use std::path::{Path, PathBuf};

use ron::ser::PrettyConfig;
use serde::Deserialize;

use super::model::{Build, SCHEMA_VERSION};
use super::schema_v1;
use super::schema_v2;
use super::schema_v3;
use super::LedgerError;
use crate::atomic_file::{folder_of, sync_folder, temp_beside};

/// Largest build file [`load`] reads, MB (a 200-pass build with spectra is
/// about 3 MB).
pub const MAX_BUILD_FILE_MB: u64 = 256;

/// A `.saving` temporary file older than this, left by an interrupted
/// save, is removed by the next save beside it.
pub const STALE_TEMP_AGE: std::time::Duration = std::time::Duration::from_secs(60);

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
    /// The path is a folder, a named pipe, a device or another thing that
    /// is not an ordinary file (reading it could hang or never end).
    #[error("{} is not an ordinary file ({kind}); a build file must be a regular file", path.display())]
    NotAFile {
        /// The path.
        path: PathBuf,
        /// What it is instead ("a folder", "a named pipe" ...).
        kind: &'static str,
    },
    /// The file is larger than any build file tapwright writes.
    #[error("{} is {size_mb} MB; a build file over {MAX_BUILD_FILE_MB} MB is refused", path.display())]
    TooLarge {
        /// The file.
        path: PathBuf,
        /// Its size (at least), MB.
        size_mb: u64,
    },
    /// The RON text nests deeper than any build file does.
    #[error("{}, line {line}, column {column}: the file nests brackets deeper than a build file ever does; it is not a tapwright build file", path.display())]
    TooDeep {
        /// The file.
        path: PathBuf,
        /// Line (1-based).
        line: usize,
        /// Column (1-based).
        column: usize,
    },
    /// The file changed on disk since it was loaded or last saved (another
    /// window or program wrote it); nothing was written.
    #[error("{} was changed by another window or program since it was opened or last saved; not overwriting it", path.display())]
    ChangedOnDisk {
        /// The file.
        path: PathBuf,
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
    let bytes = read_build_bytes(path)?;
    let text = build_text(&bytes, path)?;
    from_ron_text(text, path)
}

/// Reads a build file like [`load`] and also returns the fingerprint of
/// what was read, for [`save_checked`].
pub fn load_with_fingerprint(path: &Path) -> Result<(Build, DiskFingerprint), StoreError> {
    let bytes = read_build_bytes(path)?;
    let text = build_text(&bytes, path)?;
    let build = from_ron_text(text, path)?;
    let fingerprint = DiskFingerprint::of_bytes(&bytes);
    Ok((build, fingerprint))
}

/// The bytes of a build file: refuses what is not a regular file (a named
/// pipe would block in `open`, a device never ends) and files over
/// [`MAX_BUILD_FILE_MB`], and never reads more than that.
fn read_build_bytes(path: &Path) -> Result<Vec<u8>, StoreError> {
    use std::io::Read as _;
    let read_error = |source| StoreError::Read {
        path: path.to_path_buf(),
        source,
    };
    // `metadata` follows links without opening, so it cannot block.
    let metadata = fs::metadata(path).map_err(read_error)?;
    refuse_non_regular(path, &metadata)?;
    let limit = MAX_BUILD_FILE_MB * 1024 * 1024;
    let too_large = |size: u64| StoreError::TooLarge {
        path: path.to_path_buf(),
        size_mb: size / (1024 * 1024),
    };
    if metadata.len() > limit {
        return Err(too_large(metadata.len()));
    }
    let file = File::open(path).map_err(read_error)?;
    // The path may have been replaced between the two looks.
    refuse_non_regular(path, &file.metadata().map_err(read_error)?)?;
    let mut bytes = Vec::with_capacity(metadata.len() as usize);
    file.take(limit + 1)
        .read_to_end(&mut bytes)
        .map_err(read_error)?;
    if bytes.len() as u64 > limit {
        return Err(too_large(bytes.len() as u64));
    }
    Ok(bytes)
}

fn refuse_non_regular(path: &Path, metadata: &fs::Metadata) -> Result<(), StoreError> {
    if metadata.is_file() {
        return Ok(());
    }
    Err(StoreError::NotAFile {
        path: path.to_path_buf(),
        kind: file_kind(metadata),
    })
}

fn file_kind(metadata: &fs::Metadata) -> &'static str {
    if metadata.is_dir() {
        return "a folder";
    }
    #[cfg(unix)]
    {
        use std::os::unix::fs::FileTypeExt;
        let kind = metadata.file_type();
        if kind.is_fifo() {
            return "a named pipe";
        }
        if kind.is_char_device() || kind.is_block_device() {
            return "a device";
        }
        if kind.is_socket() {
            return "a socket";
        }
    }
    "not a regular file"
}

/// The bytes as UTF-8 text, without a leading byte-order mark (some
/// editors write one).
fn build_text<'a>(bytes: &'a [u8], path: &Path) -> Result<&'a str, StoreError> {
    let text = std::str::from_utf8(bytes).map_err(|e| StoreError::NotText {
        path: path.to_path_buf(),
        offset: e.valid_up_to(),
    })?;
    Ok(text.strip_prefix('\u{feff}').unwrap_or(text))
}

/// Parses the text of a build file; `path` is only used in errors.
pub fn from_ron_text(text: &str, path: &Path) -> Result<Build, StoreError> {
    if text.trim().is_empty() {
        return Err(StoreError::Empty {
            path: path.to_path_buf(),
        });
    }
    let syntax = |e: ron::error::SpannedError| {
        if e.code == ron::Error::ExceededRecursionLimit {
            return StoreError::TooDeep {
                path: path.to_path_buf(),
                line: e.span.start.line,
                column: e.span.start.col,
            };
        }
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
        2 => schema_v2::migrate(ron::from_str::<schema_v2::BuildV2>(text).map_err(syntax)?),
        3 => schema_v3::migrate(ron::from_str::<schema_v3::BuildV3>(text).map_err(syntax)?),
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
/// Refuses a build that fails [`Build::validate`]. Writes over whatever is
/// on disk; [`save_checked`] refuses when the file changed meanwhile.
pub fn save(path: &Path, build: &Build) -> Result<(), StoreError> {
    stage(path, build)?.commit()
}

/// Saves like [`save`], but only if the file on disk is still the one
/// `expected` describes (from [`load_with_fingerprint`] or the last
/// `save_checked`); otherwise nothing is written and the answer is
/// [`StoreError::ChangedOnDisk`]. `None` writes without looking (a new file,
/// or the maker chose to overwrite). Returns the fingerprint of the file
/// now on disk, for the next save.
pub fn save_checked(
    path: &Path,
    build: &Build,
    expected: Option<&DiskFingerprint>,
) -> Result<DiskFingerprint, StoreError> {
    let staged = stage(path, build)?;
    let fingerprint = staged.fingerprint.clone();
    staged.commit_if_unchanged(expected)?;
    Ok(fingerprint)
}

/// What a build file held when it was read or written: its length and a
/// hash of its content. Two fingerprints differ when another writer
/// changed the file (a touch that keeps the content is not a change).
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct DiskFingerprint {
    len: u64,
    content_hash: u64,
}

impl DiskFingerprint {
    /// The fingerprint of `bytes` (what is or will be in the file).
    pub fn of_bytes(bytes: &[u8]) -> Self {
        use std::hash::{Hash as _, Hasher as _};
        let mut hasher = std::collections::hash_map::DefaultHasher::new();
        bytes.hash(&mut hasher);
        Self {
            len: bytes.len() as u64,
            content_hash: hasher.finish(),
        }
    }

    /// The fingerprint of the file at `path` now (through links), or None
    /// if there is no file there.
    pub fn of_file(path: &Path) -> io::Result<Option<Self>> {
        match fs::read(path) {
            Ok(bytes) => Ok(Some(Self::of_bytes(&bytes))),
            Err(e) if e.kind() == io::ErrorKind::NotFound => Ok(None),
            Err(e) => Err(e),
        }
    }
}

/// A build written and synced to a temporary file beside its destination,
/// not yet renamed into place. Dropping it deletes the temporary file and
/// leaves the destination untouched.
#[derive(Debug)]
pub struct StagedSave {
    temp: tempfile::NamedTempFile,
    /// The file named by the caller (named in errors).
    named: PathBuf,
    /// The file actually replaced: `named`, or the file a link points to.
    destination: PathBuf,
    fingerprint: DiskFingerprint,
}

/// First half of [`save`]: validates, encodes, writes and syncs the
/// temporary file. The destination is not touched. When `path` is a
/// symbolic link, the temporary file goes beside the file the link points
/// to, which is the one replaced; the link stays a link.
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
    let destination = link_target(path);
    remove_stale_temps(&destination);
    let mut temp = temp_beside(&destination).map_err(write_error)?;
    temp.write_all(text.as_bytes()).map_err(write_error)?;
    temp.as_file().sync_all().map_err(write_error)?;
    Ok(StagedSave {
        temp,
        named: path.to_path_buf(),
        destination,
        fingerprint: DiskFingerprint::of_bytes(text.as_bytes()),
    })
}

impl StagedSave {
    /// Where the new text is waiting.
    pub fn temp_path(&self) -> &Path {
        self.temp.path()
    }

    /// The file that [`Self::commit`] replaces (the link's target when the
    /// path given was a symbolic link).
    pub fn destination(&self) -> &Path {
        &self.destination
    }

    /// Second half of [`save`]: keeps the current file as the backup, then
    /// renames the temporary file over the destination and syncs the folder.
    pub fn commit(self) -> Result<(), StoreError> {
        self.commit_if_unchanged(None)
    }

    /// [`Self::commit`], but first checks that the destination still holds
    /// what `expected` describes (see [`save_checked`]).
    pub fn commit_if_unchanged(self, expected: Option<&DiskFingerprint>) -> Result<(), StoreError> {
        let destination = self.destination;
        let write_error = |source| StoreError::Write {
            path: self.named.clone(),
            source,
        };
        if let Some(expected) = expected {
            let now = DiskFingerprint::of_file(&destination).map_err(write_error)?;
            if now.as_ref() != Some(expected) {
                return Err(StoreError::ChangedOnDisk {
                    path: self.named.clone(),
                });
            }
        }
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

/// The file a save replaces: `path` itself, or, if it is a symbolic link,
/// the file the chain of links ends at (which need not exist yet).
fn link_target(path: &Path) -> PathBuf {
    if let Ok(real) = fs::canonicalize(path) {
        if fs::symlink_metadata(path).is_ok_and(|m| m.file_type().is_symlink()) {
            return real;
        }
        return path.to_path_buf();
    }
    // A dangling link: follow it by hand (at most 40 steps, as Linux does).
    let mut current = path.to_path_buf();
    for _ in 0..40 {
        match fs::read_link(&current) {
            Ok(next) => current = folder_of(&current).join(next),
            Err(_) => return current,
        }
    }
    path.to_path_buf()
}

/// Removes `.<name>.*.saving` files beside `path` older than
/// [`STALE_TEMP_AGE`]: left by a save that was interrupted (crash, power
/// cut). Younger ones may belong to a save running now and are kept.
fn remove_stale_temps(path: &Path) {
    let Some(name) = path.file_name().map(|n| n.to_string_lossy().into_owned()) else {
        return;
    };
    let prefix = format!(".{name}.");
    let Ok(entries) = fs::read_dir(folder_of(path)) else {
        return;
    };
    for entry in entries.flatten() {
        let file_name = entry.file_name().to_string_lossy().into_owned();
        if !(file_name.starts_with(&prefix) && file_name.ends_with(".saving")) {
            continue;
        }
        let old = entry
            .metadata()
            .and_then(|m| m.modified())
            .ok()
            .and_then(|t| t.elapsed().ok())
            .is_some_and(|age| age > STALE_TEMP_AGE);
        if old {
            // Another save may have removed it first; that is fine.
            let _ = fs::remove_file(entry.path());
        }
    }
}

/// Copies the current file to its backup path atomically (the backup gets
/// the build file's permissions).
fn keep_backup(path: &Path) -> io::Result<()> {
    let mut source = File::open(path)?;
    let mut copy = temp_beside(path)?;
    io::copy(&mut source, copy.as_file_mut())?;
    copy.as_file().sync_all()?;
    copy.persist(backup_path(path)).map_err(|e| e.error)?;
    Ok(())
}
