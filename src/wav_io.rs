//! WAV files in and out (with `hound`): 8-, 16-, 24- and 32-bit integer and
//! 32-bit float, any number of channels (mixed to mono), 8–192 kHz.
//! Writing goes through a temporary file in the same folder, so a failed
//! save never leaves half a file behind.

use std::io::{BufReader, Read, Seek};
use std::path::{Path, PathBuf};

use thiserror::Error;

/// Sample rates tapwright accepts.
pub const MIN_SAMPLE_RATE_HZ: u32 = 8_000;
pub const MAX_SAMPLE_RATE_HZ: u32 = 192_000;

/// A mono recording in full-scale f32.
#[derive(Clone, Debug, PartialEq)]
pub struct MonoRecording {
    pub sample_rate_hz: u32,
    pub samples: Vec<f32>,
}

impl MonoRecording {
    pub fn duration_s(&self) -> f64 {
        self.samples.len() as f64 / f64::from(self.sample_rate_hz)
    }
}

/// What can go wrong with a WAV file. Each message is one sentence that
/// names the file.
#[derive(Debug, Error)]
pub enum WavError {
    #[error("cannot open {path}: {source}")]
    Open {
        path: PathBuf,
        source: std::io::Error,
    },
    #[error("{path} is empty")]
    Empty { path: PathBuf },
    #[error("{path} is not a WAV file ({detail})")]
    NotWav { path: PathBuf, detail: String },
    #[error("{path} uses an encoding tapwright cannot read ({detail}); use 16-, 24- or 32-bit integer or 32-bit float PCM")]
    Unsupported { path: PathBuf, detail: String },
    #[error("{path} has a sample rate of {rate_hz} Hz; tapwright reads 8 000 to 192 000 Hz")]
    SampleRate { path: PathBuf, rate_hz: u32 },
    #[error("{path} is cut short or damaged after {frames_read} frames ({detail})")]
    Truncated {
        path: PathBuf,
        frames_read: usize,
        detail: String,
    },
    #[error("{path} holds no samples")]
    NoSamples { path: PathBuf },
    #[error("cannot write {path}: {detail}")]
    Write { path: PathBuf, detail: String },
}

/// Reads a WAV file and mixes it to mono.
pub fn read_mono(path: &Path) -> Result<MonoRecording, WavError> {
    let file = std::fs::File::open(path).map_err(|source| WavError::Open {
        path: path.to_owned(),
        source,
    })?;
    let len = file.metadata().map(|m| m.len()).unwrap_or(0);
    if len == 0 {
        return Err(WavError::Empty {
            path: path.to_owned(),
        });
    }
    read_mono_from(BufReader::new(file), path)
}

/// Reads WAV bytes (e.g. a recording bundled in the program).
pub fn read_mono_bytes(bytes: &[u8], name: &Path) -> Result<MonoRecording, WavError> {
    if bytes.is_empty() {
        return Err(WavError::Empty {
            path: name.to_owned(),
        });
    }
    read_mono_from(std::io::Cursor::new(bytes), name)
}

fn read_mono_from<R: Read + Seek>(reader: R, path: &Path) -> Result<MonoRecording, WavError> {
    let reader = hound::WavReader::new(reader).map_err(|e| classify_open_error(e, path))?;
    let spec = reader.spec();
    if !(MIN_SAMPLE_RATE_HZ..=MAX_SAMPLE_RATE_HZ).contains(&spec.sample_rate) {
        return Err(WavError::SampleRate {
            path: path.to_owned(),
            rate_hz: spec.sample_rate,
        });
    }
    let channels = usize::from(spec.channels.max(1));
    let interleaved = read_samples(reader, spec, path)?;
    let frames = interleaved.len() / channels;
    if frames == 0 {
        return Err(WavError::NoSamples {
            path: path.to_owned(),
        });
    }
    let samples = interleaved
        .chunks_exact(channels)
        .map(|frame| frame.iter().sum::<f32>() / channels as f32)
        .collect();
    Ok(MonoRecording {
        sample_rate_hz: spec.sample_rate,
        samples,
    })
}

fn read_samples<R: Read>(
    reader: hound::WavReader<R>,
    spec: hound::WavSpec,
    path: &Path,
) -> Result<Vec<f32>, WavError> {
    let channels = usize::from(spec.channels.max(1));
    let truncated = |count: usize, e: hound::Error| WavError::Truncated {
        path: path.to_owned(),
        frames_read: count / channels,
        detail: plain(&e.to_string()),
    };
    let mut reader = reader;
    match (spec.sample_format, spec.bits_per_sample) {
        (hound::SampleFormat::Float, 32) => collect(reader.samples::<f32>(), truncated),
        (hound::SampleFormat::Int, bits @ (8 | 16 | 24 | 32)) => {
            let scale = 1.0 / (1u64 << (bits - 1)) as f64;
            collect(
                reader
                    .samples::<i32>()
                    .map(|s| s.map(|v| (f64::from(v) * scale) as f32)),
                truncated,
            )
        }
        (format, bits) => Err(WavError::Unsupported {
            path: path.to_owned(),
            detail: format!(
                "{bits}-bit {}",
                if format == hound::SampleFormat::Float {
                    "float"
                } else {
                    "integer"
                }
            ),
        }),
    }
}

fn collect(
    samples: impl Iterator<Item = Result<f32, hound::Error>>,
    truncated: impl Fn(usize, hound::Error) -> WavError,
) -> Result<Vec<f32>, WavError> {
    let mut out = Vec::new();
    for sample in samples {
        match sample {
            Ok(value) => out.push(if value.is_finite() { value } else { 0.0 }),
            Err(e) => return Err(truncated(out.len(), e)),
        }
    }
    Ok(out)
}

fn classify_open_error(error: hound::Error, path: &Path) -> WavError {
    let path = path.to_owned();
    let error = match error {
        hound::Error::IoError(e) if e.kind() == std::io::ErrorKind::UnexpectedEof => {
            return WavError::NotWav {
                path,
                detail: "it ends inside the header".into(),
            }
        }
        other => other,
    };
    match error {
        hound::Error::FormatError(detail) => WavError::NotWav {
            path,
            detail: detail.to_string(),
        },
        hound::Error::Unsupported => WavError::Unsupported {
            path,
            detail: "an unsupported format".into(),
        },
        other => WavError::NotWav {
            path,
            detail: plain(&other.to_string()),
        },
    }
}

/// A library message as a clause: no trailing full stop, lower-case start.
fn plain(message: &str) -> String {
    let trimmed = message.trim().trim_end_matches('.');
    let mut chars = trimmed.chars();
    match chars.next() {
        Some(first) => first.to_lowercase().chain(chars).collect(),
        None => String::new(),
    }
}

/// Writes mono 32-bit float samples (or 16-bit integer when `pcm16` is set)
/// atomically: a temporary file in the same folder, synced, then renamed.
pub fn write_mono(
    path: &Path,
    sample_rate_hz: u32,
    samples: &[f32],
    pcm16: bool,
) -> Result<(), WavError> {
    let fail = |detail: String| WavError::Write {
        path: path.to_owned(),
        detail,
    };
    let folder = match path.parent() {
        Some(p) if !p.as_os_str().is_empty() => p.to_owned(),
        _ => PathBuf::from("."),
    };
    let temp = tempfile::NamedTempFile::new_in(&folder).map_err(|e| fail(e.to_string()))?;
    let spec = hound::WavSpec {
        channels: 1,
        sample_rate: sample_rate_hz,
        bits_per_sample: if pcm16 { 16 } else { 32 },
        sample_format: if pcm16 {
            hound::SampleFormat::Int
        } else {
            hound::SampleFormat::Float
        },
    };
    {
        let file = temp
            .as_file()
            .try_clone()
            .map_err(|e| fail(e.to_string()))?;
        let mut writer = hound::WavWriter::new(std::io::BufWriter::new(file), spec)
            .map_err(|e| fail(e.to_string()))?;
        for &s in samples {
            let result = if pcm16 {
                writer.write_sample((f64::from(s).clamp(-1.0, 1.0) * 32767.0).round() as i16)
            } else {
                writer.write_sample(s)
            };
            result.map_err(|e| fail(e.to_string()))?;
        }
        writer.finalize().map_err(|e| fail(e.to_string()))?;
    }
    temp.as_file().sync_all().map_err(|e| fail(e.to_string()))?;
    temp.persist(path).map_err(|e| fail(e.error.to_string()))?;
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn round_trip_float_and_pcm16() {
        let dir = tempfile::tempdir().expect("temp dir");
        let samples: Vec<f32> = (0..1000).map(|i| ((i as f32) * 0.01).sin() * 0.5).collect();
        for pcm16 in [false, true] {
            let path = dir.path().join(format!("t{pcm16}.wav"));
            write_mono(&path, 44_100, &samples, pcm16).expect("write");
            let back = read_mono(&path).expect("read");
            assert_eq!(back.sample_rate_hz, 44_100);
            assert_eq!(back.samples.len(), samples.len());
            let tolerance = if pcm16 { 1.0 / 32767.0 } else { 0.0 };
            for (a, b) in back.samples.iter().zip(&samples) {
                assert!((a - b).abs() <= tolerance);
            }
        }
    }
}
