//! The pass as JSON, for keeping a result outside a build.

use serde::Serialize;

use crate::text::pass_json::ModeJson;

use crate::ui::session::ListenSession;

/// Points of the exported averaged spectrum.
const EXPORT_SPECTRUM_POINTS: usize = 600;

#[derive(Serialize)]
struct PassExport {
    format: &'static str,
    format_version: u32,
    exported_at: String,
    a4_hz: f64,
    taps_used: usize,
    modes: Vec<ModeExport>,
    taps: Vec<TapExport>,
    spectrum: Option<SpectrumExport>,
}

/// A mode as `analyze --json` writes it, with the label the maker gave it.
#[derive(Serialize)]
struct ModeExport {
    #[serde(flatten)]
    mode: ModeJson,
    label: Option<String>,
}

#[derive(Serialize)]
struct TapExport {
    index: usize,
    onset_s: f64,
    peak_dbfs: f64,
    in_pass: bool,
    left_out_because: Option<&'static str>,
}

#[derive(Serialize)]
struct SpectrumExport {
    frequency_hz: Vec<f64>,
    level_db: Vec<f64>,
}

/// The pass (modes with labels, taps, averaged spectrum) as pretty JSON;
/// None when there is no pass.
pub fn pass_json(session: &ListenSession, a4_hz: f64) -> Option<String> {
    let pass = session.pass()?;
    let modes = pass
        .modes
        .iter()
        .zip(session.mode_labels())
        .map(|(m, label)| ModeExport {
            mode: ModeJson::new(m, a4_hz),
            label: label.clone(),
        })
        .collect();
    let taps = session
        .taps()
        .iter()
        .map(|t| TapExport {
            index: t.index,
            onset_s: t.onset_s,
            peak_dbfs: t.peak_dbfs,
            in_pass: session.is_averaged(t.index),
            left_out_because: session.reason_out(t).map(|r| r.short_text()),
        })
        .collect();
    let spectrum = pass.spectrum.as_ref().map(|s| {
        let curve = s.log_spaced_db(20.0, 20_000.0, EXPORT_SPECTRUM_POINTS);
        SpectrumExport {
            frequency_hz: curve.iter().map(|p| round_to(p.0, 2)).collect(),
            level_db: curve.iter().map(|p| round_to(p.1, 2)).collect(),
        }
    });
    let export = PassExport {
        format: "tapwright pass",
        format_version: 1,
        exported_at: crate::ledger::Timestamp::now().to_string(),
        a4_hz,
        taps_used: pass.taps_used,
        modes,
        taps,
        spectrum,
    };
    serde_json::to_string_pretty(&export).ok()
}

fn round_to(value: f64, decimals: i32) -> f64 {
    let scale = 10f64.powi(decimals);
    (value * scale).round() / scale
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn an_exported_mode_is_the_command_line_mode_and_its_label() {
        let mode = crate::text::pass_json::tests::sample_mode();
        let alone = serde_json::to_value(&mode).expect("test value");
        let exported = serde_json::to_value(ModeExport {
            mode,
            label: Some("mode 5".to_owned()),
        })
        .expect("test value");
        let exported = exported.as_object().expect("an object");
        for (key, value) in alone.as_object().expect("an object") {
            assert_eq!(exported.get(key), Some(value), "{key}");
        }
        assert_eq!(exported["label"], "mode 5");
        assert_eq!(exported.len(), alone.as_object().map_or(0, |m| m.len()) + 1);
    }
}
