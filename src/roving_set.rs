//! A recorded roving-tap set on disk: a points file (CSV with the header
//! `point,x_mm,y_mm,file`, one row per tap point) and one recording per
//! point beside it. Read alike by `tapwright map` and by the window's
//! Shapes area: every recording is searched for taps with the roving
//! trigger (the usual trigger, double-strike and clip rules, 600 ms
//! records), and the accepted taps of each point are ready for
//! `shapes::estimate_shapes`.
//!
//! Every problem is one sentence naming the file and the row.

use std::collections::HashSet;
use std::path::{Path, PathBuf};

use anyhow::{anyhow, bail, Context};

use crate::analysis::{AnalysisSettings, RejectReason};
use crate::shapes::{
    roving_trigger_settings, taps_in_recording, PointTaps, ShapeSettings, TapPoint,
};
use crate::wav_io::read_mono;

/// The header a points file must start with.
pub const POINTS_HEADER: &str = "point,x_mm,y_mm,file";
/// Largest points file read, bytes (a thousand points take about 40 kB).
const MAX_POINTS_FILE_BYTES: u64 = 1 << 20;

/// One row of a points file.
#[derive(Clone, Debug, PartialEq)]
pub struct PointRow {
    /// 1-based line number in the file (the header is line 1).
    pub line: usize,
    pub point: TapPoint,
    /// The recording, as written in the file.
    pub file: String,
}

/// A set read from disk: per point (in the file's order) the accepted
/// taps and why each other tap was left out.
#[derive(Clone, Debug)]
pub struct RovingSet {
    /// The points file, as given.
    pub source: PathBuf,
    /// Samples per second, the same for every recording.
    pub sample_rate_hz: u32,
    /// The points and their accepted taps, in the file's order.
    pub points: Vec<PointTaps>,
    /// Per point, the taps the trigger left out.
    pub rejected: Vec<Vec<RejectReason>>,
}

impl RovingSet {
    /// Taps accepted over all points.
    pub fn taps_accepted(&self) -> usize {
        self.points.iter().map(|p| p.taps.len()).sum()
    }

    /// Taps left out over all points.
    pub fn taps_rejected(&self) -> usize {
        self.rejected.iter().map(Vec::len).sum()
    }
}

/// Reads the points file at `path` and every recording it names, and finds
/// the taps in each. Fails with one sentence naming the file and the row:
/// a bad row, a missing or unreadable recording, recordings at different
/// rates, or a point with no usable tap.
pub fn read_roving_set(path: &Path) -> anyhow::Result<RovingSet> {
    let name = path.display().to_string();
    let text = read_points_file(path)?;
    let rows = parse_points(&text).map_err(|problem| anyhow!("{name}, {problem}"))?;
    let folder = path.parent().unwrap_or(Path::new("")).to_path_buf();
    let mut sample_rate_hz: Option<u32> = None;
    let mut points = Vec::with_capacity(rows.len());
    let mut rejected = Vec::with_capacity(rows.len());
    for row in &rows {
        let where_ = format!("{name}, line {} (point {})", row.line, row.point.name);
        let recording = read_mono(&folder.join(&row.file)).with_context(|| where_.clone())?;
        match sample_rate_hz {
            Some(rate) if rate != recording.sample_rate_hz => bail!(
                "{where_}: {} is recorded at {} Hz, the points before it at {rate} Hz; record every point at one rate",
                row.file,
                recording.sample_rate_hz
            ),
            _ => sample_rate_hz = Some(recording.sample_rate_hz),
        }
        let fs = f64::from(recording.sample_rate_hz);
        let found = taps_in_recording(&recording.samples, fs, &roving_trigger_settings());
        if found.accepted.is_empty() {
            bail!("{where_}: {}", no_tap_reason(&row.file, &found.rejected));
        }
        points.push(PointTaps {
            point: row.point.clone(),
            taps: found.accepted,
        });
        rejected.push(found.rejected);
    }
    Ok(RovingSet {
        source: path.to_path_buf(),
        sample_rate_hz: sample_rate_hz.unwrap_or(48_000),
        points,
        rejected,
    })
}

/// The band searched when none is chosen: the analysis's default band
/// (40–4000 Hz), trimmed to 45 % of the sample rate for slower recordings
/// (as `tapwright map` does without `--band`).
pub fn default_band_hz(sample_rate_hz: f64) -> (f64, f64) {
    let analysis = AnalysisSettings::default();
    (
        analysis.band_low_hz,
        analysis.band_high_hz.min(0.45 * sample_rate_hz),
    )
}

/// The shape estimation's settings, searching `band_hz` (low, high) in Hz.
pub fn shape_settings(band_hz: (f64, f64)) -> ShapeSettings {
    ShapeSettings {
        analysis: AnalysisSettings {
            band_low_hz: band_hz.0,
            band_high_hz: band_hz.1,
            ..AnalysisSettings::default()
        },
        ..ShapeSettings::default()
    }
}

/// The file's text: a regular file of at most [`MAX_POINTS_FILE_BYTES`].
fn read_points_file(path: &Path) -> anyhow::Result<String> {
    let name = path.display();
    let metadata =
        std::fs::metadata(path).map_err(|e| anyhow!("cannot read {name}: {}", lower(&e)))?;
    if !metadata.is_file() {
        bail!("{name} is not a plain file: give the path of a CSV file of tap points");
    }
    if metadata.len() > MAX_POINTS_FILE_BYTES {
        bail!(
            "{name} is {} bytes; a points file is a short CSV (at most {MAX_POINTS_FILE_BYTES} bytes)",
            metadata.len()
        );
    }
    let bytes = std::fs::read(path).map_err(|e| anyhow!("cannot read {name}: {}", lower(&e)))?;
    String::from_utf8(bytes).map_err(|e| {
        anyhow!(
            "{name} is not a text file (byte {} is not UTF-8)",
            e.utf8_error().valid_up_to()
        )
    })
}

fn lower(error: &std::io::Error) -> String {
    let text = error.to_string();
    let text = text.split(" (os error").next().unwrap_or(&text);
    text.to_lowercase()
}

/// Parses a points file: the header, then one row per point (blank lines
/// skipped). The error names the line.
pub fn parse_points(text: &str) -> Result<Vec<PointRow>, String> {
    let text = text.strip_prefix('\u{feff}').unwrap_or(text);
    let mut lines = text.lines().enumerate();
    let header = lines
        .by_ref()
        .find(|(_, l)| !l.trim().is_empty())
        .map(|(i, l)| (i + 1, l));
    match header {
        None => return Err(
            "the file is empty; it needs the header point,x_mm,y_mm,file and one row per tap point"
                .into(),
        ),
        Some((line, header)) => {
            let fields: Vec<String> = header.split(',').map(|f| f.trim().to_lowercase()).collect();
            if fields.join(",") != POINTS_HEADER {
                return Err(format!(
                    "line {line}: the header is \"{}\"; it must be {POINTS_HEADER}",
                    header.trim()
                ));
            }
        }
    }
    let mut rows = Vec::new();
    let mut names = HashSet::new();
    for (index, line) in lines {
        if line.trim().is_empty() {
            continue;
        }
        let row = parse_row(index + 1, line)?;
        if !names.insert(row.point.name.clone()) {
            return Err(format!(
                "line {}: point {} is listed twice",
                row.line, row.point.name
            ));
        }
        rows.push(row);
    }
    if rows.len() < 2 {
        return Err(format!(
            "{} tap point{} listed; a map needs at least two",
            rows.len(),
            if rows.len() == 1 { " is" } else { "s are" }
        ));
    }
    Ok(rows)
}

fn parse_row(line: usize, text: &str) -> Result<PointRow, String> {
    let fields: Vec<&str> = text.split(',').map(str::trim).collect();
    if fields.len() != 4 {
        return Err(format!(
            "line {line}: {} fields where {POINTS_HEADER} needs 4",
            fields.len()
        ));
    }
    let name = fields[0];
    if name.is_empty() {
        return Err(format!("line {line}: the point has no name"));
    }
    let coordinate = |what: &str, value: &str| -> Result<f64, String> {
        value
            .parse::<f64>()
            .ok()
            .filter(|v| v.is_finite())
            .ok_or_else(|| {
                format!("line {line} (point {name}): {what} '{value}' is not a number of mm")
            })
    };
    let x_mm = coordinate("x_mm", fields[1])?;
    let y_mm = coordinate("y_mm", fields[2])?;
    if fields[3].is_empty() {
        return Err(format!("line {line} (point {name}): no recording is named"));
    }
    Ok(PointRow {
        line,
        point: TapPoint::new(name, x_mm, y_mm),
        file: fields[3].to_string(),
    })
}

/// Why a recording gave no usable tap, in words.
fn no_tap_reason(file: &str, rejected: &[RejectReason]) -> String {
    if rejected.is_empty() {
        format!("{file} has no tap in it: nothing rose clearly above the background")
    } else {
        let reasons: Vec<&str> = rejected.iter().map(|r| r.short_text()).collect();
        format!(
            "{file} has no usable tap: all {} were rejected ({})",
            rejected.len(),
            reasons.join(", ")
        )
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_points_file_parses_and_bad_rows_are_named() {
        let rows = parse_points(
            "\u{feff}point, x_mm ,y_mm,file\n1A,-40,300.5,1A.wav\n\n1B,40,300.5, taps/1B.wav\n",
        )
        .unwrap();
        assert_eq!(rows.len(), 2);
        assert_eq!(rows[1].line, 4);
        assert_eq!(rows[1].file, "taps/1B.wav");
        assert_eq!(rows[0].point, TapPoint::new("1A", -40.0, 300.5));
        for (text, expected) in [
            ("", "the file is empty"),
            (
                "point,x,y,file\n",
                "line 1: the header is \"point,x,y,file\"",
            ),
            (
                "point,x_mm,y_mm,file\n1A,0,0,a.wav\n",
                "1 tap point is listed",
            ),
            (
                "point,x_mm,y_mm,file\n1A,0,0,a.wav\n1B,0,0\n",
                "line 3: 3 fields",
            ),
            (
                "point,x_mm,y_mm,file\n1A,0,0,a.wav\n1B,zero,0,b.wav\n",
                "line 3 (point 1B): x_mm 'zero' is not a number",
            ),
            (
                "point,x_mm,y_mm,file\n1A,0,0,a.wav\n1B,0,NaN,b.wav\n",
                "line 3 (point 1B): y_mm 'NaN'",
            ),
            (
                "point,x_mm,y_mm,file\n1A,0,0,a.wav\n1A,1,0,b.wav\n",
                "line 3: point 1A is listed twice",
            ),
            (
                "point,x_mm,y_mm,file\n1A,0,0,a.wav\n,1,0,b.wav\n",
                "line 3: the point has no name",
            ),
            (
                "point,x_mm,y_mm,file\n1A,0,0,a.wav\n1B,1,0,\n",
                "line 3 (point 1B): no recording is named",
            ),
        ] {
            let error = parse_points(text).unwrap_err();
            assert!(error.starts_with(expected), "{error} (expected {expected})");
        }
    }
}
