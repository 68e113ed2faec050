//! The demo plate: six taps on an invented violin top plate
//! (nobody's real instrument), made by [`synthesize_demo_plate`] and stored
//! in `assets/demo_plate_taps.wav`. The test `tests/demo_assets.rs` checks
//! that the stored file is exactly what the generator makes, and rewrites
//! it when `TAPWRIGHT_REGENERATE_ASSETS=1` is set.
//!
//! The plate's modes are plausible for a graduated violin top with its bass
//! bar (mode 2 near 168 Hz, mode 5 near 338 Hz; typical ranges from C. M.
//! Hutchins, Scientific American 245(4), 1981), but the plate is invented.

use std::path::Path;

use crate::analysis::synth::{add_modes, contact_pulse, NoiseGenerator, SynthMode};
use crate::audio::{SyntheticStrike, SyntheticTaps};
use crate::wav_io::{read_mono_bytes, MonoRecording, WavError};

/// The demo recording as it ships inside the program.
pub const DEMO_WAV_BYTES: &[u8] = include_bytes!("../../assets/demo_plate_taps.wav");
/// Its file name in `assets/`.
pub const DEMO_WAV_NAME: &str = "demo_plate_taps.wav";
pub const DEMO_SAMPLE_RATE_HZ: u32 = 48_000;
const DEMO_LENGTH_S: f64 = 10.0;
const DEMO_SEED: u64 = 0x7A9_0001;

/// Strike times (s), strengths, and whether the mallet bounced.
const DEMO_STRIKES: [(f64, f64, bool); 6] = [
    (0.60, 1.00, false),
    (2.10, 0.85, false),
    (3.70, 1.10, false),
    (5.20, 0.95, true),
    (6.80, 0.90, false),
    (8.30, 1.05, false),
];

/// The invented plate's modes (the truth the demo should show).
pub fn demo_plate_modes() -> Vec<SynthMode> {
    vec![
        SynthMode::new(92.0, 35.0, 0.045),
        SynthMode::new(168.0, 45.0, 0.10),
        SynthMode::new(243.0, 40.0, 0.035),
        SynthMode::new(338.0, 60.0, 0.16),
        SynthMode::new(486.0, 50.0, 0.05),
        SynthMode::new(712.0, 55.0, 0.035),
        SynthMode::new(1050.0, 70.0, 0.02),
    ]
}

/// Makes the demo recording: each strike excites the modes with a slightly
/// different strength and phase (as a hand-held plate does), over room noise
/// about 70 dB below full scale.
pub fn synthesize_demo_plate() -> MonoRecording {
    let fs = f64::from(DEMO_SAMPLE_RATE_HZ);
    let mut out = vec![0.0f64; (DEMO_LENGTH_S * fs) as usize];
    let mut random = NoiseGenerator::new(DEMO_SEED);
    for &(at_s, strength, bounced) in &DEMO_STRIKES {
        let start = (at_s * fs) as usize;
        let modes: Vec<SynthMode> = demo_plate_modes()
            .into_iter()
            .map(|m| SynthMode {
                amplitude: m.amplitude * strength * (0.85 + 0.3 * random.uniform()),
                frequency_hz: m.frequency_hz * (1.0 + 0.0004 * (random.uniform() - 0.5)),
                phase_rad: 2.0 * std::f64::consts::PI * random.uniform(),
                ..m
            })
            .collect();
        contact_pulse(&mut out, fs, start, 0.8, 0.08 * strength);
        add_modes(&mut out, fs, start, &modes);
        if bounced {
            let again = start + (0.14 * fs) as usize;
            contact_pulse(&mut out, fs, again, 0.8, 0.06 * strength);
            add_modes(&mut out, fs, again, &modes);
        }
    }
    for x in &mut out {
        *x += 3e-4 * random.gaussian();
    }
    MonoRecording {
        sample_rate_hz: DEMO_SAMPLE_RATE_HZ,
        samples: out.iter().map(|&x| x.clamp(-1.0, 1.0) as f32).collect(),
    }
}

/// The invented violin top of the bundled demo as a live synthetic source,
/// tapped every 2 s for ever, over noise about 70 dB below full scale.
pub fn demo_plate_taps() -> SyntheticTaps {
    SyntheticTaps {
        sample_rate_hz: DEMO_SAMPLE_RATE_HZ,
        modes: demo_plate_modes(),
        strikes: vec![SyntheticStrike {
            at_s: 0.8,
            strength: 1.0,
        }],
        repeat_every_s: Some(2.0),
        length_s: None,
        noise_rms: 3e-4,
        seed: 0x7A9_0002,
    }
}

/// The bundled demo recording, decoded.
pub fn demo_recording() -> Result<MonoRecording, WavError> {
    read_mono_bytes(DEMO_WAV_BYTES, Path::new(DEMO_WAV_NAME))
}
