//! The two synthetic recordings behind the encoded fixtures in
//! `tests/data/encoded/` (made from them by `make_fixtures.py` there), and
//! where the fixtures are. The recordings are made here, not stored: the
//! tests compare every fixture with them.

#![allow(dead_code)] // each test file uses its own part of this module

use std::path::{Path, PathBuf};

use tapwright::analysis::synth::{add_modes, NoiseGenerator, SynthMode};
use tapwright::wav_io::{read_mono, write_mono, MonoRecording};

/// The folder of the encoded fixtures.
pub fn fixture_dir() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/data/encoded")
}

pub fn fixture(name: &str) -> PathBuf {
    fixture_dir().join(name)
}

/// One tap of a source recording: when it starts and its modes.
#[derive(Clone, Debug)]
pub struct SourceTap {
    pub at_s: f64,
    pub modes: Vec<SynthMode>,
}

/// A source recording: taps over white noise, stored as 16-bit PCM.
#[derive(Clone, Debug)]
pub struct Source {
    pub file_name: &'static str,
    pub sample_rate_hz: u32,
    pub length_s: f64,
    pub noise_rms: f64,
    pub seed: u64,
    pub taps: Vec<SourceTap>,
}

/// A violin-like top plate tapped twice, at 16 kHz: the source of the
/// lossless fixtures (AIFF, AIFC, CAF, FLAC, ALAC) and of the small lossy
/// ones (Ogg Vorbis, ADTS AAC, and the files that cannot be read). Modes as
/// the invented demo plate's, 66 dB above the noise.
pub fn plate_source() -> Source {
    let plate = vec![
        SynthMode::new(168.0, 45.0, 0.15),
        SynthMode::new(338.0, 60.0, 0.3),
        SynthMode::new(486.0, 50.0, 0.1),
        SynthMode::new(712.0, 55.0, 0.05),
    ];
    Source {
        file_name: "plate_16k.wav",
        sample_rate_hz: 16_000,
        length_s: 2.5,
        noise_rms: 0.0005,
        seed: 21,
        taps: [0.2, 1.45]
            .into_iter()
            .map(|at_s| SourceTap {
                at_s,
                modes: plate.clone(),
            })
            .collect(),
    }
}

/// The taps of the accuracy tests (tests/analysis_accuracy.rs), one after
/// another at 48 kHz, 40 dB above the noise (peak over noise RMS): six
/// isolated modes from 62 Hz at Q 20 (a 0.1 s decay) to 3.8 kHz at Q 800,
/// four overlapping body modes at Q 18–40, and a close pair 4 Hz apart at
/// Q 120. The source of the AAC and MP3 fixtures and of the lossy figures.
pub fn accuracy_source() -> Source {
    let single = |f: f64, q: f64| vec![SynthMode::new(f, q, 0.2)];
    let tap_modes = vec![
        single(62.0, 20.0),
        single(95.5, 25.0),
        single(345.2, 60.0),
        single(1210.7, 120.0),
        single(2530.0, 300.0),
        single(3800.0, 800.0),
        vec![
            SynthMode::new(275.0, 18.0, 0.15),
            SynthMode {
                phase_rad: 2.1,
                ..SynthMode::new(345.0, 30.0, 0.25)
            },
            SynthMode {
                phase_rad: 4.0,
                ..SynthMode::new(410.0, 22.0, 0.12)
            },
            SynthMode {
                phase_rad: 0.7,
                ..SynthMode::new(490.0, 40.0, 0.2)
            },
        ],
        vec![
            SynthMode::new(300.0, 120.0, 0.2),
            SynthMode {
                phase_rad: 1.0,
                ..SynthMode::new(304.0, 120.0, 0.15)
            },
        ],
    ];
    let taps: Vec<SourceTap> = tap_modes
        .into_iter()
        .enumerate()
        .map(|(i, modes)| SourceTap {
            at_s: 0.3 + 1.25 * i as f64,
            modes,
        })
        .collect();
    Source {
        file_name: "accuracy_48k.wav",
        sample_rate_hz: 48_000,
        length_s: 0.3 + 1.25 * taps.len() as f64,
        noise_rms: 0.002,
        seed: 4021,
        taps,
    }
}

impl Source {
    /// The samples before they are stored (f64, full scale 1).
    pub fn synthesize(&self) -> Vec<f64> {
        let fs = f64::from(self.sample_rate_hz);
        let mut x = vec![0.0; (self.length_s * fs).round() as usize];
        for tap in &self.taps {
            add_modes(&mut x, fs, (tap.at_s * fs).round() as usize, &tap.modes);
        }
        let mut noise = NoiseGenerator::new(self.seed);
        for v in &mut x {
            *v += self.noise_rms * noise.gaussian();
        }
        x
    }

    /// Writes the source as the 16-bit WAV the fixtures are encoded from.
    pub fn write_wav(&self, folder: &Path) -> PathBuf {
        let path = folder.join(self.file_name);
        let samples: Vec<f32> = self.synthesize().iter().map(|&v| v as f32).collect();
        write_mono(&path, self.sample_rate_hz, &samples, true).unwrap();
        path
    }

    /// The source as stored (16-bit) and read back: the original every
    /// fixture is compared with.
    pub fn original(&self) -> MonoRecording {
        let dir = tempfile::tempdir().unwrap();
        read_mono(&self.write_wav(dir.path())).unwrap()
    }
}
