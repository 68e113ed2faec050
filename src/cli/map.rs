//! `tapwright map POINTS.csv`: mode shapes from roving taps.
//!
//! `POINTS.csv` has the header `point,x_mm,y_mm,file` and one row per tap
//! point; `file` is a WAV recording of the taps at that point (one or
//! more), relative to the CSV. Every recording is searched for taps with
//! the usual trigger, double-strike and clip rules; the modes and their
//! signed shapes over the points come from `shapes::estimate_shapes`.

use std::collections::HashSet;
use std::fmt::Write as _;
use std::path::{Path, PathBuf};

use anyhow::{anyhow, bail, Context};
use serde::Serialize;

use super::measure::{band_for, parse_band_hz};
use super::output::write_stdout;
use crate::analysis::{AnalysisSettings, RejectReason};
use crate::shapes::{
    estimate_shapes, roving_trigger_settings, taps_in_recording, PointTaps, ShapeMap,
    ShapeSettings, TapPoint, CERTAIN_SIGN_UNCERTAINTIES,
};
use crate::wav_io::read_mono;

/// The header a points file must start with.
pub const POINTS_HEADER: &str = "point,x_mm,y_mm,file";
/// Largest points file read, bytes (a thousand points take about 40 kB).
const MAX_POINTS_FILE_BYTES: u64 = 1 << 20;

#[derive(Debug, clap::Args)]
pub struct MapArgs {
    /// The tap points: a CSV file with the header `point,x_mm,y_mm,file`,
    /// one row per point; `file` is a WAV recording of the taps at that
    /// point, relative to the CSV.
    pub points: PathBuf,
    /// Frequency band to map, LOW:HIGH in Hz [default: 40:4000, or up to
    /// 45 % of the sample rate for slower recordings].
    #[arg(long, value_name = "LOW:HIGH", value_parser = parse_band_hz, allow_hyphen_values = true)]
    pub band: Option<(f64, f64)>,
    /// Print one JSON object instead of the tables.
    #[arg(long)]
    pub json: bool,
}

/// One row of a points file.
#[derive(Clone, Debug, PartialEq)]
pub struct PointRow {
    /// 1-based line number in the file (the header is line 1).
    pub line: usize,
    pub point: TapPoint,
    /// The recording, as written in the file.
    pub file: String,
}

pub fn run(args: &MapArgs) -> anyhow::Result<()> {
    let name = args.points.display().to_string();
    let text = read_points_file(&args.points)?;
    let rows = parse_points(&text).map_err(|problem| anyhow!("{name}, {problem}"))?;
    let folder = args.points.parent().unwrap_or(Path::new("")).to_path_buf();
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
    let fs = f64::from(sample_rate_hz.unwrap_or(48_000));
    let (band_low_hz, band_high_hz) = band_for(args.band, fs, &name)?;
    let settings = ShapeSettings {
        analysis: AnalysisSettings {
            band_low_hz,
            band_high_hz,
            ..AnalysisSettings::default()
        },
        ..ShapeSettings::default()
    };
    let map = estimate_shapes(&points, fs, &settings).map_err(|e| anyhow!("{name}: {e}"))?;
    let report = MapReport {
        source: name,
        sample_rate_hz: fs,
        map: &map,
        rejected: &rejected,
    };
    write_stdout(&report.render(args.json)?)
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

/// The `--json` output.
#[derive(Debug, Serialize)]
struct JsonMap {
    source: String,
    sample_rate_hz: f64,
    points: Vec<JsonPoint>,
    modes: Vec<JsonMode>,
}

#[derive(Debug, Serialize)]
struct JsonPoint {
    point: String,
    x_mm: f64,
    y_mm: f64,
    /// Taps used.
    taps: usize,
    /// Why each other tap found in the recording was left out.
    taps_rejected: Vec<RejectReason>,
}

#[derive(Debug, Serialize)]
struct JsonMode {
    frequency_hz: f64,
    q: f64,
    /// One signed value per CSV row, in CSV order; largest magnitude 1.0.
    shape: Vec<f64>,
    shape_spread: Vec<f64>,
    shape_uncertainty: Vec<f64>,
    quality: f64,
    points_seen: usize,
}

struct MapReport<'a> {
    source: String,
    sample_rate_hz: f64,
    map: &'a ShapeMap,
    /// Per point, the taps left out.
    rejected: &'a [Vec<RejectReason>],
}

impl MapReport<'_> {
    fn render(&self, json: bool) -> anyhow::Result<String> {
        if json {
            let mut text = serde_json::to_string_pretty(&self.to_json())
                .map_err(|e| anyhow!("formatting the JSON map: {e}"))?;
            text.push('\n');
            Ok(text)
        } else {
            Ok(self.to_table())
        }
    }

    fn to_json(&self) -> JsonMap {
        JsonMap {
            source: self.source.clone(),
            sample_rate_hz: self.sample_rate_hz,
            points: self
                .map
                .points
                .iter()
                .zip(self.rejected)
                .map(|(p, rejected)| JsonPoint {
                    point: p.point.name.clone(),
                    x_mm: p.point.x_mm,
                    y_mm: p.point.y_mm,
                    taps: p.taps_used(),
                    taps_rejected: rejected.clone(),
                })
                .collect(),
            modes: self
                .map
                .modes
                .iter()
                .map(|m| JsonMode {
                    frequency_hz: m.frequency_hz,
                    q: m.q,
                    shape: m.values.clone(),
                    shape_spread: m.spreads.clone(),
                    shape_uncertainty: m.uncertainties.clone(),
                    quality: m.quality,
                    points_seen: m.points_seen,
                })
                .collect(),
        }
    }

    fn to_table(&self) -> String {
        let mut out = String::new();
        let taps: usize = self.map.points.iter().map(|p| p.taps_used()).sum();
        let _ = writeln!(
            out,
            "{}  ({:.0} Hz): {} tap points, {taps} taps, {} modes",
            self.source,
            self.sample_rate_hz,
            self.map.points.len(),
            self.map.modes.len()
        );
        for (point, rejected) in self.map.points.iter().zip(self.rejected) {
            for reason in rejected {
                let _ = writeln!(
                    out,
                    "  a tap at {} was left out: {reason} ({})",
                    point.point.name,
                    reason.advice()
                );
            }
        }
        let _ = writeln!(
            out,
            "Values are signed, the largest 1.0; ? marks a value within {CERTAIN_SIGN_UNCERTAINTIES:.0} uncertainties of zero (near a nodal line: its sign is not known)."
        );
        for (index, mode) in self.map.modes.iter().enumerate() {
            let _ = writeln!(out);
            let _ = writeln!(
                out,
                "Mode {}: {:.2} Hz, Q {:.1}, quality {:.2} (shown at {} of {} points)",
                index + 1,
                mode.frequency_hz,
                mode.q,
                mode.quality,
                mode.points_seen,
                self.map.points.len()
            );
            let _ = writeln!(
                out,
                "  {:<8} {:>7} {:>7} {:>7} {:>7} {:>5}",
                "point", "x mm", "y mm", "value", "spread", "taps"
            );
            for (i, point) in self.map.points.iter().enumerate() {
                let _ = writeln!(
                    out,
                    "  {:<8} {:>7.1} {:>7.1} {:>+7.3} {:>7.3} {:>5}{}",
                    point.point.name,
                    point.point.x_mm,
                    point.point.y_mm,
                    mode.values[i],
                    mode.spreads[i],
                    point.taps_used(),
                    if mode.is_uncertain(i) { "  ?" } else { "" }
                );
            }
        }
        out
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
