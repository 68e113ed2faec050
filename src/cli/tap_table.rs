//! The report that `analyze` and `listen` print: a table for people, or one
//! JSON object (schema in README.md, "Machine-readable output").

use std::fmt::Write as _;

use serde::Serialize;

use crate::analysis::pitch::nearest_note;
use crate::analysis::{rejected_taps, PassMode, RejectedTap, Tap};
use crate::text::pass_json::{modes_json, ModeJson};

/// The `--json` output.
#[derive(Debug, Serialize)]
pub struct JsonReport {
    pub source: String,
    pub sample_rate_hz: f64,
    pub a4_hz: f64,
    pub taps_found: usize,
    pub taps_used: usize,
    pub taps_rejected: Vec<RejectedTap>,
    pub modes: Vec<ModeJson>,
}

/// What a report is made of, whatever the source.
pub struct ReportInput<'a> {
    pub source: String,
    pub sample_rate_hz: f64,
    pub a4_hz: f64,
    pub taps_found: usize,
    pub rejected: Vec<RejectedTap>,
    pub modes: &'a [PassMode],
}

impl<'a> ReportInput<'a> {
    /// The report of `taps` and the modes of their pass.
    pub fn of_taps(
        source: String,
        sample_rate_hz: f64,
        a4_hz: f64,
        taps: &[Tap],
        modes: &'a [PassMode],
    ) -> Self {
        Self {
            source,
            sample_rate_hz,
            a4_hz,
            taps_found: taps.len(),
            rejected: rejected_taps(taps),
            modes,
        }
    }

    fn taps_used(&self) -> usize {
        self.taps_found - self.rejected.len()
    }

    pub fn to_json(&self) -> JsonReport {
        JsonReport {
            source: self.source.clone(),
            sample_rate_hz: self.sample_rate_hz,
            a4_hz: self.a4_hz,
            taps_found: self.taps_found,
            taps_used: self.taps_used(),
            taps_rejected: self.rejected.clone(),
            modes: modes_json(self.modes, self.a4_hz),
        }
    }

    /// The whole report as printed: one JSON object, or the table.
    pub fn render(&self, json: bool) -> anyhow::Result<String> {
        if json {
            let mut text = serde_json::to_string_pretty(&self.to_json())
                .map_err(|e| anyhow::anyhow!("formatting the JSON report: {e}"))?;
            text.push('\n');
            Ok(text)
        } else {
            Ok(self.to_table())
        }
    }

    /// The table for people.
    pub fn to_table(&self) -> String {
        let mut out = String::new();
        let _ = writeln!(out, "{}  ({:.0} Hz)", self.source, self.sample_rate_hz);
        let _ = writeln!(
            out,
            "Taps: {} found, {} used, {} rejected",
            self.taps_found,
            self.taps_used(),
            self.rejected.len()
        );
        for RejectedTap { index, reason } in &self.rejected {
            let _ = writeln!(out, "  tap {index}: {reason} ({})", reason.advice());
        }
        let _ = writeln!(out);
        if self.modes.is_empty() {
            let _ = writeln!(out, "No modes found.");
            return out;
        }
        let _ = writeln!(
            out,
            "{:>10}  {:>7}  {:>8}  {:>5}  {:>6}  {:>9}  {:>5}",
            "freq Hz", "Q", "level dB", "note", "cents", "spread Hz", "taps"
        );
        for m in self.modes {
            let pitch = nearest_note(m.frequency_hz, self.a4_hz);
            let (note, cents) = pitch.map(|p| (p.note, p.cents)).unwrap_or_default();
            let _ = writeln!(
                out,
                "{:>10.2}  {:>7.1}  {:>8.1}  {:>5}  {:>+6.0}  {:>9.2}  {:>5}",
                m.frequency_hz, m.q, m.level_db, note, cents, m.spread_hz, m.taps_seen
            );
        }
        out
    }
}

/// The reasons the rejected taps among `taps` were rejected, in order:
/// "clipped, double strike".
pub fn rejection_reasons(taps: &[Tap]) -> String {
    let reasons: Vec<&str> = taps
        .iter()
        .filter_map(|t| t.rejected.map(|r| r.short_text()))
        .collect();
    reasons.join(", ")
}
