//! `tapwright devices`: the audio input devices, the default marked.

use super::output::write_stdout;
use crate::audio::{list_input_devices, DeviceInfo};

#[derive(Debug, clap::Args)]
pub struct DevicesArgs {}

/// `tapwright devices`: one line per input device, the default marked.
pub fn run(_args: &DevicesArgs) -> anyhow::Result<()> {
    let devices = list_input_devices()?;
    if devices.is_empty() {
        return write_stdout(
            "No audio input device found: connect a microphone or audio interface.\n",
        );
    }
    let mut text = String::new();
    for device in &devices {
        text.push_str(&device_line(device));
        text.push('\n');
    }
    write_stdout(&text)
}

fn device_line(device: &DeviceInfo) -> String {
    let mark = if device.is_default { "*" } else { " " };
    let channels = match (device.channels.first(), device.channels.last()) {
        (Some(low), Some(high)) if low == high => format!("{low} ch"),
        (Some(low), Some(high)) => format!("{low}–{high} ch"),
        _ => "? ch".to_owned(),
    };
    let rates: Vec<String> = device
        .sample_rates_hz
        .iter()
        .map(|&(low, high)| match (low, high) {
            (low, high) if low == high => format!("{low}"),
            // Plugin devices resample to anything; the top is meaningless.
            (low, high) if high >= 10_000_000 => format!("{low} and up"),
            (low, high) => format!("{low}–{high}"),
        })
        .collect();
    let default_note = if device.is_default { "  (default)" } else { "" };
    format!(
        "{mark} {}{default_note}\n    id {}; {channels}; {} Hz",
        device.name,
        device.id,
        rates.join(", ")
    )
}
