//! WAV reading: every encoding the analysis accepts, mixed to mono, at any
//! sample rate from 8 to 192 kHz; and clear errors for what it does not.

use std::path::Path;

use tapwright::analysis::synth::{add_modes, SynthMode};
use tapwright::analysis::{analyze_recording, AnalysisSettings, TriggerSettings};
use tapwright::wav_io::{read_mono, WavError};

/// One tap of a two-mode plate starting at 0.2 s, `seconds` long.
fn tap_signal(sample_rate_hz: u32, seconds: f64) -> Vec<f64> {
    let fs = f64::from(sample_rate_hz);
    let mut x = vec![0.0; (seconds * fs) as usize];
    add_modes(
        &mut x,
        fs,
        (0.2 * fs) as usize,
        &[
            SynthMode::new(210.0, 40.0, 0.3),
            SynthMode::new(530.0, 50.0, 0.2),
        ],
    );
    // A little deterministic dither so the floor is not digital silence.
    for (i, v) in x.iter_mut().enumerate() {
        *v += 1e-4 * ((i as f64 * 12.9898).sin() * 43_758.545).fract();
    }
    x
}

fn write(path: &Path, spec: hound::WavSpec, mono: &[f64]) {
    let mut writer = hound::WavWriter::create(path, spec).unwrap();
    for &v in mono {
        for _ in 0..spec.channels {
            match (spec.sample_format, spec.bits_per_sample) {
                (hound::SampleFormat::Float, _) => writer.write_sample(v as f32).unwrap(),
                (_, bits) => {
                    let full = ((1i64 << (bits - 1)) - 1) as f64;
                    writer.write_sample((v * full).round() as i32).unwrap()
                }
            }
        }
    }
    writer.finalize().unwrap();
}

#[test]
fn reads_every_supported_encoding_and_finds_the_modes() {
    let dir = tempfile::tempdir().unwrap();
    let cases = [
        (hound::SampleFormat::Int, 16, 1, 8_000),
        (hound::SampleFormat::Int, 24, 2, 44_100),
        (hound::SampleFormat::Int, 32, 1, 96_000),
        (hound::SampleFormat::Float, 32, 4, 192_000),
        (hound::SampleFormat::Int, 16, 2, 48_000),
    ];
    for (format, bits, channels, rate) in cases {
        let spec = hound::WavSpec {
            channels,
            sample_rate: rate,
            bits_per_sample: bits,
            sample_format: format,
        };
        let path = dir.path().join(format!("t_{bits}_{channels}_{rate}.wav"));
        let signal = tap_signal(rate, 1.5);
        write(&path, spec, &signal);
        let recording = read_mono(&path).unwrap();
        assert_eq!(recording.sample_rate_hz, rate);
        assert_eq!(recording.samples.len(), signal.len(), "{path:?}");
        let worst = recording
            .samples
            .iter()
            .zip(&signal)
            .map(|(a, b)| (f64::from(*a) - b).abs())
            .fold(0.0, f64::max);
        assert!(worst < 1e-4, "{bits}-bit: worst sample error {worst}");
        let band_high = 4000f64.min(0.45 * f64::from(rate));
        let analysis = AnalysisSettings {
            band_high_hz: band_high,
            ..Default::default()
        };
        let report = analyze_recording(
            &recording.samples,
            f64::from(rate),
            &TriggerSettings::default(),
            &analysis,
        );
        assert_eq!(report.taps_used(), 1, "{path:?}");
        for f in [210.0, 530.0] {
            assert!(
                report
                    .pass
                    .modes
                    .iter()
                    .any(|m| (m.frequency_hz - f).abs() < 0.05),
                "{path:?}: {f} Hz missing from {:?}",
                report.pass.modes
            );
        }
    }
}

#[test]
fn multichannel_is_mixed_to_mono() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("stereo.wav");
    let spec = hound::WavSpec {
        channels: 2,
        sample_rate: 48_000,
        bits_per_sample: 32,
        sample_format: hound::SampleFormat::Float,
    };
    let mut writer = hound::WavWriter::create(&path, spec).unwrap();
    for _ in 0..100 {
        writer.write_sample(0.5f32).unwrap();
        writer.write_sample(-0.1f32).unwrap();
    }
    writer.finalize().unwrap();
    let recording = read_mono(&path).unwrap();
    assert!(recording.samples.iter().all(|&s| (s - 0.2).abs() < 1e-7));
}

#[test]
fn rejects_what_it_cannot_read() {
    let dir = tempfile::tempdir().unwrap();
    // 8 kHz is the lowest rate accepted; 4 kHz is refused.
    let slow = dir.path().join("slow.wav");
    let spec = hound::WavSpec {
        channels: 1,
        sample_rate: 4_000,
        bits_per_sample: 16,
        sample_format: hound::SampleFormat::Int,
    };
    write(&slow, spec, &[0.0; 100]);
    assert!(matches!(
        read_mono(&slow),
        Err(WavError::SampleRate { rate_hz: 4_000, .. })
    ));
    // A-law (format tag 6) is a real WAV encoding tapwright does not read.
    let alaw = dir.path().join("alaw.wav");
    std::fs::write(&alaw, wav_header_bytes(6, 8, 8_000, 16)).unwrap();
    let error = read_mono(&alaw).unwrap_err();
    assert!(
        matches!(
            error,
            WavError::Unsupported { .. } | WavError::NotWav { .. }
        ),
        "{error}"
    );
    assert!(error.to_string().contains("alaw.wav"));
    let empty = dir.path().join("empty.wav");
    std::fs::write(&empty, b"").unwrap();
    assert!(matches!(read_mono(&empty), Err(WavError::Empty { .. })));
    let header_only = dir.path().join("header.wav");
    std::fs::write(&header_only, wav_header_bytes(1, 16, 48_000, 0)).unwrap();
    assert!(matches!(
        read_mono(&header_only),
        Err(WavError::NoSamples { .. })
    ));
}

/// A canonical 44-byte RIFF/WAVE header (mono) followed by `data_len` zero bytes.
fn wav_header_bytes(format_tag: u16, bits: u16, rate: u32, data_len: u32) -> Vec<u8> {
    let block_align = bits / 8;
    let mut b = Vec::new();
    b.extend_from_slice(b"RIFF");
    b.extend_from_slice(&(36 + data_len).to_le_bytes());
    b.extend_from_slice(b"WAVEfmt ");
    b.extend_from_slice(&16u32.to_le_bytes());
    b.extend_from_slice(&format_tag.to_le_bytes());
    b.extend_from_slice(&1u16.to_le_bytes());
    b.extend_from_slice(&rate.to_le_bytes());
    b.extend_from_slice(&(rate * u32::from(block_align)).to_le_bytes());
    b.extend_from_slice(&block_align.to_le_bytes());
    b.extend_from_slice(&bits.to_le_bytes());
    b.extend_from_slice(b"data");
    b.extend_from_slice(&data_len.to_le_bytes());
    b.extend(std::iter::repeat_n(0u8, data_len as usize));
    b
}
