//! WAV reading: every encoding the analysis accepts, mixed to mono, at any
//! sample rate from 8 to 192 kHz; and clear errors, naming the encoding, for
//! what it does not.

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
        (hound::SampleFormat::Int, 8, 1, 22_050),
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
        // 8-bit: half a step of rounding, plus up to half a step from the
        // writer's full scale of 127 against the reader's 128.
        let tolerance = if bits == 8 { 1.0 / 128.0 } else { 1e-4 };
        assert!(worst < tolerance, "{bits}-bit: worst sample error {worst}");
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

#[test]
fn reads_a_law_and_mu_law() {
    // ITU-T G.711 code words and their 16-bit values (checked against
    // ffmpeg's G.711 decoder): A-law 0xD5 → +8, 0x55 → −8, 0xAA → +32 256,
    // 0x2A → −32 256; µ-law 0x80 → +32 124, 0x00 → −32 124, 0xFF → 0.
    let dir = tempfile::tempdir().unwrap();
    let cases: [(&str, u16, Vec<u8>, Vec<i32>); 2] = [
        (
            "alaw.wav",
            6,
            vec![0xD5, 0x55, 0xAA, 0x2A],
            vec![8, -8, 32_256, -32_256],
        ),
        (
            "mulaw.wav",
            7,
            vec![0x80, 0x00, 0xFF, 0x7F],
            vec![32_124, -32_124, 0, 0],
        ),
    ];
    for (name, tag, codes, values) in cases {
        let path = dir.path().join(name);
        // G.711 in WAV has an 18-byte fmt chunk (WAVEFORMATEX, cbSize 0).
        let mut fmt = fmt_body(tag, 1, 8_000, 8, None);
        fmt.extend_from_slice(&0u16.to_le_bytes());
        std::fs::write(&path, riff_wave(&fmt, &[], &codes)).unwrap();
        let recording = read_mono(&path).unwrap_or_else(|e| panic!("{name}: {e}"));
        let expected: Vec<f32> = values.iter().map(|&v| v as f32 / 32_768.0).collect();
        assert_eq!(recording.samples, expected, "{name}");
    }
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

/// A RIFF/WAVE file from its `fmt ` chunk body, any chunks to put between
/// `fmt ` and `data` (id, body; an odd body gets its pad byte), and the
/// sample bytes.
fn riff_wave(fmt: &[u8], extra_chunks: &[(&[u8; 4], &[u8])], data: &[u8]) -> Vec<u8> {
    let mut body = Vec::new();
    body.extend_from_slice(b"WAVE");
    let mut chunk = |id: &[u8; 4], bytes: &[u8]| {
        body.extend_from_slice(id);
        body.extend_from_slice(&(bytes.len() as u32).to_le_bytes());
        body.extend_from_slice(bytes);
        if bytes.len() % 2 == 1 {
            body.push(0); // the pad byte after a chunk of odd length
        }
    };
    chunk(b"fmt ", fmt);
    for (id, bytes) in extra_chunks {
        chunk(id, bytes);
    }
    chunk(b"data", data);
    let mut file = Vec::new();
    file.extend_from_slice(b"RIFF");
    file.extend_from_slice(&(body.len() as u32).to_le_bytes());
    file.extend_from_slice(&body);
    file
}

/// A 16-byte (WAVEFORMAT) or 40-byte (WAVEFORMATEXTENSIBLE) fmt body.
/// Layout from Microsoft's WAVEFORMATEX / WAVEFORMATEXTENSIBLE structures
/// (mmreg.h; from memory).
fn fmt_body(
    tag: u16,
    channels: u16,
    rate: u32,
    container_bits: u16,
    extensible: Option<(u16, u16)>,
) -> Vec<u8> {
    let block_align = channels * container_bits / 8;
    let mut b = Vec::new();
    let stored_tag = if extensible.is_some() { 0xFFFE } else { tag };
    b.extend_from_slice(&stored_tag.to_le_bytes());
    b.extend_from_slice(&channels.to_le_bytes());
    b.extend_from_slice(&rate.to_le_bytes());
    b.extend_from_slice(&(rate * u32::from(block_align)).to_le_bytes());
    b.extend_from_slice(&block_align.to_le_bytes());
    b.extend_from_slice(&container_bits.to_le_bytes());
    if let Some((valid_bits, sub_tag)) = extensible {
        b.extend_from_slice(&22u16.to_le_bytes());
        b.extend_from_slice(&valid_bits.to_le_bytes());
        b.extend_from_slice(&0x4u32.to_le_bytes()); // front centre
                                                    // KSDATAFORMAT_SUBTYPE_*: sub_tag-0000-0010-8000-00aa00389b71.
        b.extend_from_slice(&u32::from(sub_tag).to_le_bytes());
        b.extend_from_slice(&[
            0x00, 0x00, 0x10, 0x00, 0x80, 0x00, 0x00, 0xAA, 0x00, 0x38, 0x9B, 0x71,
        ]);
    }
    b
}

/// The tap signal as 24-bit values.
fn as_i24(signal: &[f64]) -> Vec<i32> {
    signal
        .iter()
        .map(|v| (v * 8_388_607.0).round() as i32)
        .collect()
}

fn assert_close_to(
    recording: &tapwright::wav_io::MonoRecording,
    signal: &[f64],
    tolerance: f64,
    what: &str,
) {
    assert_eq!(recording.samples.len(), signal.len(), "{what}");
    let worst = recording
        .samples
        .iter()
        .zip(signal)
        .map(|(a, b)| (f64::from(*a) - b).abs())
        .fold(0.0, f64::max);
    assert!(worst < tolerance, "{what}: worst sample error {worst}");
}

#[test]
fn reads_24_bit_samples_in_32_bit_extensible_words() {
    // WAVE_FORMAT_EXTENSIBLE puts the valid bits at the top of the
    // container and zero in the rest (Microsoft, "Multiple channel audio
    // data and WAVE files"; from memory).
    let dir = tempfile::tempdir().unwrap();
    let signal = tap_signal(48_000, 1.5);
    let data: Vec<u8> = as_i24(&signal)
        .iter()
        .flat_map(|&v| (v << 8).to_le_bytes())
        .collect();
    let path = dir.path().join("24_in_32.wav");
    std::fs::write(
        &path,
        riff_wave(&fmt_body(1, 1, 48_000, 32, Some((24, 1))), &[], &data),
    )
    .unwrap();
    let recording = read_mono(&path).unwrap();
    assert_close_to(&recording, &signal, 2e-7, "24 in 32");
    // Nothing near full scale: the old misreading made every sample clip.
    assert!(recording.samples.iter().all(|s| s.abs() < 0.6));
}

#[test]
fn skips_the_pad_byte_after_an_odd_chunk() {
    let dir = tempfile::tempdir().unwrap();
    let signal = tap_signal(44_100, 1.5);
    let data: Vec<u8> = signal
        .iter()
        .flat_map(|v| ((v * 32_767.0).round() as i16).to_le_bytes())
        .collect();
    let path = dir.path().join("odd_chunk.wav");
    let note: &[u8] = b"an odd note"; // 11 bytes, then a pad byte
    std::fs::write(
        &path,
        riff_wave(&fmt_body(1, 1, 44_100, 16, None), &[(b"note", note)], &data),
    )
    .unwrap();
    assert_close_to(&read_mono(&path).unwrap(), &signal, 5e-5, "odd chunk");
}

#[test]
fn reads_64_bit_float() {
    let dir = tempfile::tempdir().unwrap();
    let signal = tap_signal(96_000, 1.5);
    for (name, extensible) in [("f64.wav", None), ("f64_ext.wav", Some((64, 3)))] {
        let data: Vec<u8> = signal
            .iter()
            .flat_map(|v| [*v, *v])
            .flat_map(f64::to_le_bytes)
            .collect();
        let path = dir.path().join(name);
        std::fs::write(
            &path,
            riff_wave(&fmt_body(3, 2, 96_000, 64, extensible), &[], &data),
        )
        .unwrap();
        let recording = read_mono(&path).unwrap();
        assert_eq!(recording.sample_rate_hz, 96_000);
        assert_close_to(&recording, &signal, 1e-7, name);
        let report = analyze_recording(
            &recording.samples,
            96_000.0,
            &TriggerSettings::default(),
            &AnalysisSettings::default(),
        );
        assert_eq!(report.taps_used(), 1, "{name}");
    }
}

#[test]
fn names_the_encodings_it_cannot_read() {
    let dir = tempfile::tempdir().unwrap();
    let cases: [(&str, Vec<u8>, &str); 6] = [
        (
            "adpcm.wav",
            fmt_body(2, 1, 22_050, 4, None),
            "Microsoft ADPCM",
        ),
        ("ima.wav", fmt_body(0x11, 1, 22_050, 4, None), "IMA ADPCM"),
        ("gsm.wav", fmt_body(0x31, 1, 8_000, 8, None), "GSM 6.10"),
        ("half.wav", fmt_body(3, 1, 48_000, 16, None), "16-bit float"),
        (
            "ext_mp3.wav",
            fmt_body(0x55, 1, 44_100, 16, Some((16, 0x55))),
            "MP3 inside a WAV file",
        ),
        (
            "twelve.wav",
            fmt_body(1, 1, 48_000, 12, None),
            "12-bit integer",
        ),
    ];
    for (name, fmt, encoding) in cases {
        let path = dir.path().join(name);
        std::fs::write(&path, riff_wave(&fmt, &[], &[0u8; 64])).unwrap();
        let error = read_mono(&path).unwrap_err();
        assert!(
            matches!(error, WavError::Unsupported { .. }),
            "{name}: {error}"
        );
        let text = error.to_string();
        assert!(text.contains(encoding) && text.contains(name), "{text}");
    }
    // The 64-bit RF64 container and big-endian RIFX are named too.
    let pcm = riff_wave(&fmt_body(1, 1, 48_000, 16, None), &[], &[0u8; 64]);
    for (name, id, words) in [("big.wav", b"RF64", "RF64"), ("be.wav", b"RIFX", "RIFX")] {
        let mut bytes = pcm.clone();
        bytes[0..4].copy_from_slice(id);
        let path = dir.path().join(name);
        std::fs::write(&path, &bytes).unwrap();
        let text = read_mono(&path).unwrap_err().to_string();
        assert!(text.contains(words) && text.contains(name), "{text}");
    }
}

#[test]
fn refuses_what_is_not_a_regular_file() {
    let dir = tempfile::tempdir().unwrap();
    let error = read_mono(dir.path()).unwrap_err();
    assert!(
        matches!(
            error,
            WavError::NotRegularFile {
                kind: "a folder",
                ..
            }
        ),
        "{error}"
    );
    #[cfg(unix)]
    {
        let fifo = dir.path().join("pipe.wav");
        let made = std::process::Command::new("mkfifo")
            .arg(&fifo)
            .status()
            .unwrap();
        assert!(made.success());
        // Opening a pipe with no writer would block for ever; this returns.
        let error = read_mono(&fifo).unwrap_err();
        assert!(
            matches!(error, WavError::NotRegularFile { kind: "a pipe", .. }),
            "{error}"
        );
        assert!(error.to_string().contains("pipe.wav"));
    }
}

#[test]
fn a_long_file_read_in_blocks_gives_what_the_whole_file_gives() {
    use tapwright::analysis::synth::NoiseGenerator;
    use tapwright::analysis::RecordingAnalyzer;
    use tapwright::wav_io::WavStream;
    // Ten minutes at 16 kHz, quiet but for four taps, the last near the end.
    const FS: u32 = 16_000;
    let fs = f64::from(FS);
    let mut x = vec![0.0; 600 * FS as usize];
    for at_s in [2.0, 150.0, 420.0, 597.5] {
        add_modes(
            &mut x,
            fs,
            (at_s * fs) as usize,
            &[
                SynthMode::new(210.0, 40.0, 0.3),
                SynthMode::new(530.0, 50.0, 0.2),
            ],
        );
    }
    let mut noise = NoiseGenerator::new(7);
    for v in &mut x {
        *v += 1e-4 * noise.gaussian();
    }
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("ten_minutes.wav");
    let spec = hound::WavSpec {
        channels: 1,
        sample_rate: FS,
        bits_per_sample: 16,
        sample_format: hound::SampleFormat::Int,
    };
    write(&path, spec, &x);
    drop(x);

    let trigger = TriggerSettings::default();
    let analysis = AnalysisSettings::default();
    let whole = read_mono(&path).unwrap();
    let in_memory = analyze_recording(&whole.samples, fs, &trigger, &analysis);
    drop(whole);

    let mut stream = WavStream::open(&path).unwrap();
    assert_eq!(stream.frames_total(), Some(600 * u64::from(FS)));
    let mut analyzer = RecordingAnalyzer::new(&trigger, &analysis, fs);
    let mut block = Vec::new();
    // An odd block length, so taps straddle blocks.
    while stream.read_block(&mut block, 10_007).unwrap() > 0 {
        analyzer.push(&block);
    }
    let streamed = analyzer.finish();

    assert_eq!(streamed.taps.len(), 4, "{:?}", streamed.taps);
    assert_eq!(streamed.taps_used(), 4);
    assert!((streamed.taps[3].onset_s - 597.5).abs() < 0.01);
    assert!((streamed.duration_s - 600.0).abs() < 1e-9);
    assert_eq!(streamed, in_memory);
}
