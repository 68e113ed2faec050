//! The real-strike corpus (`tests/data/real/`, see its README): samples of
//! a marimba, a xylophone, wood blocks, claves, agogo bells and timbales
//! from the FluidR3 General MIDI sound font, one mono file per channel.
//! Shared by `tests/real_corpus.rs` and `benches/analysis.rs`.

#![allow(dead_code)]

use std::path::{Path, PathBuf};

use rustfft::num_complex::Complex64;
use rustfft::FftPlanner;
use tapwright::analysis::synth::NoiseGenerator;
use tapwright::analysis::{AnalysisSettings, TriggerSettings};

/// Quiet before each copy of the strike (the files).
pub const QUIET_S: f64 = 0.3;
/// Each copy of the strike with its quiet takes this long.
pub const SLOT_S: f64 = 2.0;
/// Copies of the strike in each file.
pub const STRIKES: usize = 3;
/// The samples are normalised to full scale in the font (several touch it
/// on consecutive samples, which the trigger rightly calls clipped); the
/// files play them 6 dB down, as a recording with headroom would.
pub const PLAYBACK_GAIN: f64 = 0.5;
/// Room noise added under the whole file: white, RMS 1e-4 (−80 dBFS).
pub const ROOM_NOISE_RMS: f64 = 1e-4;
/// The band the measurements searched (`--band 40:12000`).
pub const BAND_HZ: (f64, f64) = (40.0, 12_000.0);

#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Kind {
    /// A tuned bar (marimba, xylophone): the root key is its note.
    Pitched,
    /// A percussion sound of the drum kit.
    Drum,
}

#[derive(Clone, Debug)]
pub struct RealSample {
    pub file: String,
    /// The sound: "marimba", "claves", "timbale_hi", ...
    pub group: String,
    pub kind: Kind,
    /// "L", "R" (or "mono").
    pub channel: String,
    pub sample_rate_hz: f64,
    /// MIDI key the sample sounds at its own rate (60 = C4 = 261.6 Hz).
    pub root_key: u8,
    /// Pitch correction of the sample header, cents.
    pub pitch_correction_cents: f64,
    /// The strike, full scale = 1.
    pub samples: Vec<f32>,
}

impl RealSample {
    /// The other channel's file name (left ↔ right).
    pub fn pair_name(&self) -> Option<String> {
        if self.file.ends_with("_left.wav") {
            Some(self.file.replace("_left.wav", "_right.wav"))
        } else if self.file.ends_with("_right.wav") {
            Some(self.file.replace("_right.wav", "_left.wav"))
        } else {
            None
        }
    }

    /// The note of a pitched sample in Hz: twelve-tone equal temperament
    /// from A4 = 440 Hz (ISO 16:1975), plus the header's correction.
    pub fn note_hz(&self) -> f64 {
        440.0
            * 2f64.powf(
                (f64::from(self.root_key) - 69.0) / 12.0 + self.pitch_correction_cents / 1200.0,
            )
    }

    /// Wood and tuned bars, whose two channels must agree (timbales and
    /// agogo bells are left out of that check; see `tests/real_corpus.rs`).
    pub fn is_wood_or_bar(&self) -> bool {
        matches!(
            self.group.as_str(),
            "marimba" | "xylophone" | "wood_block_hi" | "wood_block_low" | "claves"
        )
    }
}

pub fn corpus_dir() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/data/real")
}

/// Every file of the manifest, in its order.
pub fn load_corpus() -> Vec<RealSample> {
    let dir = corpus_dir();
    let manifest = std::fs::read_to_string(dir.join("manifest.csv")).expect("manifest.csv");
    let mut lines = manifest.lines();
    let header: Vec<&str> = lines.next().expect("header").split(',').collect();
    let column = |name: &str| {
        header
            .iter()
            .position(|h| *h == name)
            .unwrap_or_else(|| panic!("manifest column {name}"))
    };
    let (file, group, kind, channel, root, correction) = (
        column("file"),
        column("group"),
        column("kind"),
        column("channel"),
        column("root_key"),
        column("pitch_correction_cents"),
    );
    lines
        .filter(|l| !l.trim().is_empty())
        .map(|line| {
            let fields: Vec<&str> = line.split(',').collect();
            let mut reader = hound::WavReader::open(dir.join(fields[file])).expect("wav");
            let spec = reader.spec();
            assert_eq!((spec.channels, spec.bits_per_sample), (1, 16));
            let samples = reader
                .samples::<i16>()
                .map(|s| f32::from(s.expect("sample")) / 32768.0)
                .collect();
            RealSample {
                file: fields[file].to_string(),
                group: fields[group].to_string(),
                kind: if fields[kind] == "pitched" {
                    Kind::Pitched
                } else {
                    Kind::Drum
                },
                channel: fields[channel].to_string(),
                sample_rate_hz: f64::from(spec.sample_rate),
                root_key: fields[root].parse().expect("root key"),
                pitch_correction_cents: fields[correction].parse().expect("correction"),
                samples,
            }
        })
        .collect()
}

/// The file: the strike three times (at [`PLAYBACK_GAIN`]), each
/// after 0.3 s of quiet in a 2 s slot, with faint white room noise
/// (deterministic) throughout.
pub fn three_strikes(sample: &RealSample, seed: u64) -> Vec<f32> {
    let fs = sample.sample_rate_hz;
    let slot = (SLOT_S * fs) as usize;
    let quiet = (QUIET_S * fs) as usize;
    let mut out = vec![0.0f64; slot * STRIKES];
    for strike in 0..STRIKES {
        let at = strike * slot + quiet;
        for (o, &x) in out[at..].iter_mut().zip(&sample.samples) {
            *o += PLAYBACK_GAIN * f64::from(x);
        }
    }
    let mut noise = NoiseGenerator::new(seed);
    out.iter()
        .map(|&x| (x + ROOM_NOISE_RMS * noise.gaussian()) as f32)
        .collect()
}

/// Where each copy of the strike starts in [`three_strikes`], seconds.
pub fn strike_times_s() -> Vec<f64> {
    (0..STRIKES).map(|i| i as f64 * SLOT_S + QUIET_S).collect()
}

pub fn analysis_settings() -> AnalysisSettings {
    AnalysisSettings {
        band_low_hz: BAND_HZ.0,
        band_high_hz: BAND_HZ.1,
        ..AnalysisSettings::default()
    }
}

pub fn trigger_settings() -> TriggerSettings {
    TriggerSettings::default()
}

/// A peak of the strike's own long-window spectrum.
#[derive(Clone, Copy, Debug)]
pub struct SpectrumPeak {
    pub frequency_hz: f64,
    /// Relative to the strongest peak in the band, dB.
    pub level_db: f64,
    /// Above the higher of the two lowest points between it and higher
    /// ground on either side, dB.
    pub prominence_db: f64,
    /// Half the width of the peak where it stays above half its power, Hz.
    pub half_width_hz: f64,
    /// Bin spacing of the window before zero-padding, Hz.
    pub resolution_hz: f64,
}

/// Peaks of the strike's spectrum in the band, strongest first: the whole
/// sample faded out with the falling half of a Hann window, zero-padded to
/// eight times its length (at least), one complex FFT (rustfft), power per
/// bin, parabolic interpolation of each local maximum on the dB scale
/// (common practice, no source). Independent of the engine.
pub fn long_fft_peaks(sample: &RealSample) -> Vec<SpectrumPeak> {
    let x = &sample.samples;
    let fs = sample.sample_rate_hz;
    let len = x.len();
    let fft_len = (8 * len).next_power_of_two();
    let mut buffer: Vec<Complex64> = (0..fft_len)
        .map(|n| {
            let value = if n < len {
                let w = (std::f64::consts::FRAC_PI_2 * n as f64 / len as f64).cos();
                f64::from(x[n]) * w * w
            } else {
                0.0
            };
            Complex64::new(value, 0.0)
        })
        .collect();
    FftPlanner::new()
        .plan_fft_forward(fft_len)
        .process(&mut buffer);
    let power: Vec<f64> = buffer[..fft_len / 2]
        .iter()
        .map(|c| c.norm_sqr().max(1e-300))
        .collect();
    let bin_hz = fs / fft_len as f64;
    let low = ((BAND_HZ.0 / bin_hz) as usize).max(1);
    let high = ((BAND_HZ.1 / bin_hz) as usize).min(power.len() - 2);
    let db = |k: usize| 10.0 * power[k].log10();
    let mut peaks: Vec<(usize, f64)> = (low..=high)
        .filter(|&k| power[k] > power[k - 1] && power[k] >= power[k + 1])
        .map(|k| (k, db(k)))
        .collect();
    let strongest_db = peaks.iter().map(|p| p.1).fold(f64::MIN, f64::max);
    peaks.retain(|p| p.1 > strongest_db - PEAKS_WITHIN_DB);
    peaks.sort_by(|a, b| b.1.total_cmp(&a.1));
    peaks
        .into_iter()
        .map(|(k, level)| {
            let (a, b, c) = (db(k - 1), db(k), db(k + 1));
            let denom = a - 2.0 * b + c;
            let offset = if denom.abs() > 1e-12 {
                (0.5 * (a - c) / denom).clamp(-0.5, 0.5)
            } else {
                0.0
            };
            let half = power[k] / 2.0;
            let right = (k + 1..power.len())
                .take_while(|&i| power[i] > half)
                .count();
            let left = (0..k).rev().take_while(|&i| power[i] > half).count();
            SpectrumPeak {
                frequency_hz: (k as f64 + offset) * bin_hz,
                level_db: level - strongest_db,
                prominence_db: prominence_db(&power, k),
                half_width_hz: 0.5 * (left + right + 1) as f64 * bin_hz,
                resolution_hz: fs / len as f64,
            }
        })
        .collect()
}

/// [`long_fft_peaks`] lists peaks down to this far under the strongest.
pub const PEAKS_WITHIN_DB: f64 = 30.0;

/// Topographic prominence of the peak at `k` in dB: how far it stands
/// above the higher of the two lowest points that separate it from
/// higher ground (or from the end of the spectrum) on either side.
fn prominence_db(power: &[f64], k: usize) -> f64 {
    let peak = power[k];
    let side = |indices: &mut dyn Iterator<Item = usize>| {
        let mut lowest = peak;
        for i in indices {
            if power[i] > peak {
                break;
            }
            lowest = lowest.min(power[i]);
        }
        lowest
    };
    let left = side(&mut (0..k).rev());
    let right = side(&mut (k + 1..power.len()));
    10.0 * (peak / left.max(right)).log10()
}
