//! Writing a file whole or not at all, the one way every file tapwright
//! writes is written (build files and their backups, CSV and JSON exports,
//! the build report, WAV recordings).
//!
//! The content goes to a temporary file in the target's own folder, named
//! `.<file name>.XXXX.saving`, which is flushed to disk (`sync_all`) and
//! then renamed over the target; the folder is synced after the rename. A
//! rename within a folder replaces the file in one step, so a crash at any
//! moment leaves either the old file or the new one whole, never half of
//! one. The temporary file takes the permissions the target has now (or,
//! for a new file, the ordinary read-write permissions less the umask),
//! not the owner-only permissions temporary files get by default.

use std::fs::{self, File};
use std::io::{self, Write as _};
use std::path::Path;

/// Writes `bytes` to `path` atomically (see the module's description).
pub fn write_bytes_atomically(path: &Path, bytes: &[u8]) -> io::Result<()> {
    write_atomically(path, |file| file.write_all(bytes))
}

/// Writes `path` atomically: `fill` writes the content into the temporary
/// file, which is then synced and renamed over `path`. If `fill` fails,
/// nothing at `path` changes and the temporary file is removed.
pub fn write_atomically(
    path: &Path,
    fill: impl FnOnce(&mut File) -> io::Result<()>,
) -> io::Result<()> {
    let mut temp = temp_beside(path)?;
    fill(temp.as_file_mut())?;
    temp.as_file().sync_all()?;
    temp.persist(path).map_err(|e| e.error)?;
    sync_folder(path);
    Ok(())
}

/// A new temporary file in the folder of `path`, named
/// `.<file name>.XXXX.saving`, with the permissions `path` has now (or, for
/// a new file, the ordinary read-write permissions less the umask). For
/// writers that stage a file and rename it later (the build store).
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

/// The folder `path` is in ("." for a bare file name).
pub fn folder_of(path: &Path) -> &Path {
    match path.parent() {
        Some(parent) if !parent.as_os_str().is_empty() => parent,
        _ => Path::new("."),
    }
}

/// Makes the renames in the folder of `path` durable where the platform
/// allows opening a folder (Unix); elsewhere a rename is already as durable
/// as it gets.
pub fn sync_folder(path: &Path) {
    if let Ok(folder) = File::open(folder_of(path)) {
        // A failure here cannot undo the rename; the file is already whole.
        let _ = folder.sync_all();
    }
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

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_file_is_replaced_whole_and_no_temporary_file_is_left() {
        let folder = tempfile::tempdir().expect("test value");
        let path = folder.path().join("t.csv");
        write_bytes_atomically(&path, b"old").expect("test value");
        write_bytes_atomically(&path, b"a,b\n1,2\n").expect("test value");
        assert_eq!(fs::read(&path).expect("test value"), b"a,b\n1,2\n");
        assert_eq!(fs::read_dir(folder.path()).expect("test value").count(), 1);
    }

    #[test]
    fn a_failed_fill_leaves_the_old_file() {
        let folder = tempfile::tempdir().expect("test value");
        let path = folder.path().join("t.csv");
        write_bytes_atomically(&path, b"old").expect("test value");
        let failed = write_atomically(&path, |file| {
            file.write_all(b"half")?;
            Err(io::Error::other("disk full"))
        });
        assert!(failed.is_err());
        assert_eq!(fs::read(&path).expect("test value"), b"old");
        assert_eq!(fs::read_dir(folder.path()).expect("test value").count(), 1);
    }

    #[test]
    fn a_missing_folder_is_an_error_not_a_file_elsewhere() {
        let folder = tempfile::tempdir().expect("test value");
        let path = folder.path().join("no such folder").join("t.csv");
        assert!(write_bytes_atomically(&path, b"x").is_err());
        assert_eq!(fs::read_dir(folder.path()).expect("test value").count(), 0);
    }

    #[cfg(unix)]
    #[test]
    fn a_replaced_file_keeps_its_permissions() {
        use std::os::unix::fs::PermissionsExt;
        let folder = tempfile::tempdir().expect("test value");
        let path = folder.path().join("report.html");
        write_bytes_atomically(&path, b"<p>").expect("test value");
        fs::set_permissions(&path, fs::Permissions::from_mode(0o640)).expect("test value");
        write_bytes_atomically(&path, b"<p>again").expect("test value");
        let mode = fs::metadata(&path)
            .expect("test value")
            .permissions()
            .mode();
        assert_eq!(mode & 0o777, 0o640, "{mode:o}");
    }
}
