//! `tapwright map POINTS.csv`: mode shapes from roving taps.
//!
//! `POINTS.csv` has the header `point,x_mm,y_mm,file` and one row per tap
//! point; `file` is a WAV recording of the taps at that point (one or
//! more), relative to the CSV. Every recording is searched for taps with
//! the usual trigger, double-strike and clip rules (`roving_set`, shared
//! with the window); the modes and their signed shapes over the points
//! come from `shapes::estimate_shapes`.

use std::fmt::Write as _;
use std::path::PathBuf;

use anyhow::anyhow;
use serde::Serialize;

use super::measure::{band_for, parse_band_hz};
use super::output::write_stdout;
use crate::analysis::RejectReason;
use crate::roving_set::{read_roving_set, shape_settings};
use crate::shapes::{estimate_shapes, ShapeMap, CERTAIN_SIGN_UNCERTAINTIES};

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

pub fn run(args: &MapArgs) -> anyhow::Result<()> {
    let name = args.points.display().to_string();
    let set = read_roving_set(&args.points)?;
    let fs = f64::from(set.sample_rate_hz);
    let band_hz = band_for(args.band, fs, &name)?;
    let map = estimate_shapes(&set.points, fs, &shape_settings(band_hz))
        .map_err(|e| anyhow!("{name}: {e}"))?;
    let report = MapReport {
        source: name,
        sample_rate_hz: fs,
        map: &map,
        rejected: &set.rejected,
    };
    write_stdout(&report.render(args.json)?)
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
