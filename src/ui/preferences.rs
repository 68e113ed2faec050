//! The window's preferences (the maker's units), kept between runs in one
//! small RON file, `preferences.ron`, in the user's configuration folder:
//! the folder named by `TAPWRIGHT_CONFIG_DIR` when it is set, else the
//! platform's usual place found by the `directories` crate
//! (`~/.config/tapwright` on Linux). Build files never depend on it: they
//! keep mm, g, °C and m³ whatever the window shows.
//!
//! A missing file gives the defaults in silence; a file that cannot be
//! read or understood gives the defaults and one sentence for the status
//! line, and is left as it is until the maker chooses again. Saving goes
//! through `atomic_file`, so a crash leaves the old file or the new one.

use std::path::{Path, PathBuf};

use serde::{Deserialize, Serialize};

use crate::atomic_file::write_bytes_atomically;
use crate::text::Units;

/// The file's name inside the configuration folder.
pub const FILE_NAME: &str = "preferences.ron";

/// The environment variable that names another configuration folder (for
/// tests, and for running from a stick).
pub const CONFIG_DIR_VARIABLE: &str = "TAPWRIGHT_CONFIG_DIR";

/// Larger than this, the file is not a preferences file tapwright wrote.
const MAX_FILE_BYTES: u64 = 64 * 1024;

/// What the window remembers between runs.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq, Serialize, Deserialize)]
#[serde(default)]
pub struct Preferences {
    /// Units of lengths, masses, temperatures and volumes on screen and in
    /// the build report.
    pub units: Units,
}

/// The folder preferences are kept in: `TAPWRIGHT_CONFIG_DIR` when set and
/// not empty, else the platform's configuration folder for tapwright;
/// None when the platform names none (no home folder).
pub fn default_folder() -> Option<PathBuf> {
    if let Some(folder) = std::env::var_os(CONFIG_DIR_VARIABLE).filter(|v| !v.is_empty()) {
        return Some(PathBuf::from(folder));
    }
    directories::ProjectDirs::from("", "", "tapwright").map(|dirs| dirs.config_dir().to_owned())
}

/// The preferences kept in `folder`. No file: the defaults and no
/// problem. A file that cannot be read or understood: the defaults and
/// one sentence naming the file.
pub fn load(folder: &Path) -> (Preferences, Option<String>) {
    let path = folder.join(FILE_NAME);
    match read(&path) {
        Ok(Some(preferences)) => (preferences, None),
        Ok(None) => (Preferences::default(), None),
        Err(reason) => (
            Preferences::default(),
            Some(format!(
                "The preferences file {} could not be read ({reason}), so the window shows metric units until you choose units again.",
                path.display()
            )),
        ),
    }
}

/// Reads the file; Ok(None) when there is none.
fn read(path: &Path) -> Result<Option<Preferences>, String> {
    let metadata = match std::fs::metadata(path) {
        Ok(metadata) => metadata,
        Err(error) if error.kind() == std::io::ErrorKind::NotFound => return Ok(None),
        Err(error) => return Err(error.to_string()),
    };
    if !metadata.is_file() {
        return Err("it is not an ordinary file".to_owned());
    }
    if metadata.len() > MAX_FILE_BYTES {
        return Err(format!("it is {} bytes long", metadata.len()));
    }
    let text = std::fs::read_to_string(path).map_err(|e| e.to_string())?;
    ron::from_str::<Preferences>(&text).map(Some).map_err(|e| {
        e.to_string()
            .replace('\n', " ")
            .trim_end_matches('.')
            .to_owned()
    })
}

/// Writes the preferences into `folder` (made if missing), whole or not at
/// all; one sentence naming the file on failure.
pub fn save(folder: &Path, preferences: &Preferences) -> Result<(), String> {
    let path = folder.join(FILE_NAME);
    let body = ron::ser::to_string_pretty(preferences, ron::ser::PrettyConfig::default())
        .map_err(|e| format!("Cannot write the preferences file {}: {e}.", path.display()))?;
    let text = format!(
        "// tapwright's window preferences. Build files always keep mm, g, °C and m³.\n{body}\n"
    );
    std::fs::create_dir_all(folder)
        .and_then(|()| write_bytes_atomically(&path, text.as_bytes()))
        .map_err(|e| format!("Cannot write the preferences file {}: {e}.", path.display()))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn preferences_are_kept_and_read_back() {
        let folder = tempfile::tempdir().expect("test value");
        let inside = folder.path().join("not yet made");
        assert_eq!(load(&inside), (Preferences::default(), None));
        let chosen = Preferences {
            units: Units::imperial(),
        };
        save(&inside, &chosen).expect("test value");
        assert_eq!(load(&inside), (chosen, None));
        // Only the file is left (no temporary file beside it).
        assert_eq!(std::fs::read_dir(&inside).expect("test value").count(), 1);
    }

    #[test]
    fn a_damaged_file_gives_the_defaults_and_one_sentence() {
        let folder = tempfile::tempdir().expect("test value");
        let path = folder.path().join(FILE_NAME);
        for damaged in [
            "(units: (length: Furlong))",
            "\u{0}\u{1}garbage",
            "(units: ",
        ] {
            std::fs::write(&path, damaged).expect("test value");
            let (preferences, problem) = load(folder.path());
            assert_eq!(preferences, Preferences::default());
            let problem = problem.expect("a problem");
            assert!(problem.contains(FILE_NAME), "{problem}");
            assert!(
                problem.ends_with('.') && !problem.contains('\n'),
                "{problem}"
            );
            // The damaged file is left for the maker to look at.
            assert_eq!(std::fs::read_to_string(&path).expect("test value"), damaged);
        }
        std::fs::remove_file(&path).expect("test value");
        std::fs::create_dir(&path).expect("test value");
        assert!(load(folder.path()).1.is_some(), "a folder in its place");
    }

    #[test]
    fn a_file_missing_a_kind_keeps_the_default_for_it() {
        let folder = tempfile::tempdir().expect("test value");
        std::fs::write(folder.path().join(FILE_NAME), "(units: (length: Inch))")
            .expect("test value");
        let (preferences, problem) = load(folder.path());
        assert_eq!(problem, None);
        assert_eq!(preferences.units.length, crate::text::LengthUnit::Inch);
        assert_eq!(preferences.units.mass, crate::text::MassUnit::Gram);
    }
}
