//! Recordings in and out. Reading, with `symphonia`: WAV (8-, 16-, 24- and
//! 32-bit integer, also fewer valid bits in a wider word; 32- and 64-bit
//! float; A-law and µ-law; plain or `WAVE_FORMAT_EXTENSIBLE`), AIFF and
//! AIFC, CAF, FLAC, MP3, AAC-LC and ALAC in MP4/M4A (and raw ADTS `.aac`),
//! and Ogg Vorbis; any number of channels (mixed to mono), 8–192 kHz,
//! decoded packet by packet so a long recording never has to fit in memory
//! ([`WavStream`]). Writing (with `hound`) goes through a temporary file in
//! the same folder, so a failed save never leaves half a file behind.
//!
//! The names keep "wav" from the days when only WAV was read; [`AudioStream`]
//! and [`AudioError`] are the same types under format-neutral names.

mod describe;
mod mp4_edit;

use std::fs::File;
use std::path::{Path, PathBuf};

use symphonia::core::codecs::audio::{AudioDecoder, AudioDecoderOptions};
use symphonia::core::errors::Error as DecodeFailure;
use symphonia::core::formats::probe::Hint;
use symphonia::core::formats::well_known::{
    FORMAT_ID_ADTS, FORMAT_ID_MP1, FORMAT_ID_MP2, FORMAT_ID_MP3,
};
use symphonia::core::formats::{FormatOptions, FormatReader};
use symphonia::core::io::{MediaSource, MediaSourceStream, MediaSourceStreamOptions};
use symphonia::core::meta::MetadataOptions;
use thiserror::Error;

pub use describe::READABLE_FORMATS;

/// Sample rates tapwright accepts.
pub const MIN_SAMPLE_RATE_HZ: u32 = 8_000;
pub const MAX_SAMPLE_RATE_HZ: u32 = 192_000;

/// File-name extensions of the recordings tapwright reads (lower case; a
/// file dialog or a drop target should also accept them in upper case).
/// The reader looks at the content, not the name: these are for choosing.
pub const READABLE_EXTENSIONS: &[&str] = &[
    "wav", "wave", "aif", "aiff", "aifc", "caf", "flac", "mp3", "m4a", "mp4", "aac", "ogg", "oga",
];

/// Frames read at a time by [`read_mono`].
const READ_BLOCK_FRAMES: usize = 65_536;
/// `read_mono` reserves room for at most this many samples up front, so a
/// header that claims a huge length cannot make it allocate at once.
const MAX_UP_FRONT_SAMPLES: u64 = 48_000 * 600;

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

/// What can go wrong with a recording. Each message is one sentence that
/// names the file.
#[derive(Debug, Error)]
pub enum WavError {
    #[error("cannot open {path}: {source}")]
    Open {
        path: PathBuf,
        source: std::io::Error,
    },
    #[error(
        "{path} is {kind}, not a regular file: save the recording to a file and give its path"
    )]
    NotRegularFile { path: PathBuf, kind: &'static str },
    #[error("{path} is empty")]
    Empty { path: PathBuf },
    #[error(
        "{path} is not a recording tapwright can read ({detail}); it reads {READABLE_FORMATS}"
    )]
    UnknownFormat { path: PathBuf, detail: String },
    #[error("{path} holds {detail}, which tapwright cannot decode; export the recording as WAV, FLAC or AAC-LC instead")]
    Unsupported { path: PathBuf, detail: String },
    #[error("{path} has no sound track tapwright can read ({detail})")]
    NoAudioTrack { path: PathBuf, detail: String },
    #[error("{path} has a sample rate of {rate_hz} Hz; tapwright reads 8 000 to 192 000 Hz")]
    SampleRate { path: PathBuf, rate_hz: u32 },
    #[error("{path} is cut short or damaged {} ({detail})", describe::position(*frames_read))]
    Truncated {
        path: PathBuf,
        frames_read: u64,
        detail: String,
    },
    #[error("cannot read {path}: {detail}")]
    Read { path: PathBuf, detail: String },
    #[error("{path} holds no samples")]
    NoSamples { path: PathBuf },
    #[error("cannot write {path}: {detail}")]
    Write { path: PathBuf, detail: String },
}

/// The stream under a name that does not suggest WAV only.
pub type AudioStream = WavStream;
/// The error under a name that does not suggest WAV only.
pub type AudioError = WavError;

/// A recording being decoded packet by packet, mixed to mono. Memory holds
/// one decoded packet at a time (at most a few thousand frames for the
/// compressed formats, about 1 s for PCM), however long the file.
pub struct WavStream {
    path: PathBuf,
    reader: Box<dyn FormatReader>,
    decoder: Box<dyn AudioDecoder>,
    track_id: u32,
    sample_rate_hz: u32,
    channels: usize,
    frames_total: Option<u64>,
    /// Whether `frames_total` is only an estimate, so that a shorter
    /// recording is not a sign of a cut.
    length_is_guessed: bool,
    /// Decoded frames still to drop in front (the MP4 edit list's start).
    skip_frames: u64,
    /// Frames the MP4 edit list plays, when it gives them.
    play_frames: Option<u64>,
    frames_read: u64,
    /// Frames decoded so far (read or pending).
    frames_decoded: u64,
    /// Mono samples decoded but not handed out yet, from `pending_at` on.
    pending: Vec<f32>,
    pending_at: usize,
    /// Scratch: the last packet's samples, interleaved.
    interleaved: Vec<f32>,
    finished: bool,
}

impl std::fmt::Debug for WavStream {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.debug_struct("WavStream")
            .field("path", &self.path)
            .field("sample_rate_hz", &self.sample_rate_hz)
            .field("channels", &self.channels)
            .field("frames_total", &self.frames_total)
            .field("frames_read", &self.frames_read)
            .finish_non_exhaustive()
    }
}

impl WavStream {
    /// Opens a recording and reads its header. Refuses anything that is not
    /// a regular file (a named pipe would block in `open`, a folder reads
    /// as nothing) before opening it.
    pub fn open(path: &Path) -> Result<Self, WavError> {
        let metadata = std::fs::metadata(path).map_err(|source| WavError::Open {
            path: path.to_owned(),
            source,
        })?;
        if let Some(kind) = not_regular_kind(&metadata.file_type()) {
            return Err(WavError::NotRegularFile {
                path: path.to_owned(),
                kind,
            });
        }
        if metadata.len() == 0 {
            return Err(WavError::Empty {
                path: path.to_owned(),
            });
        }
        let file = File::open(path).map_err(|source| WavError::Open {
            path: path.to_owned(),
            source,
        })?;
        Self::new(Box::new(file), path).map_err(|error| describe::name_wave_encoding(error, path))
    }

    /// A recording held in memory (e.g. one bundled in the program), named
    /// `name` in errors.
    pub fn from_bytes(bytes: Vec<u8>, name: &Path) -> Result<Self, WavError> {
        if bytes.is_empty() {
            return Err(WavError::Empty {
                path: name.to_owned(),
            });
        }
        let header = bytes[..bytes.len().min(describe::SNIFF_BYTES)].to_vec();
        Self::new(Box::new(std::io::Cursor::new(bytes)), name)
            .map_err(|error| describe::name_wave_encoding_in(error, &header))
    }

    /// Finds the format, picks the sound track and makes its decoder.
    fn new(mut source: Box<dyn MediaSource>, path: &Path) -> Result<Self, WavError> {
        let edits = mp4_edit::track_edits(&mut source);
        let stream = MediaSourceStream::new(source, MediaSourceStreamOptions::default());
        let mut hint = Hint::new();
        if let Some(extension) = path.extension().and_then(|e| e.to_str()) {
            hint.with_extension(extension);
        }
        let reader = symphonia::default::get_probe()
            .probe(
                &hint,
                stream,
                FormatOptions::default(),
                MetadataOptions::default(),
            )
            .map_err(|failure| describe::header_error(failure, path))?;
        let track = describe::sound_track(reader.as_ref(), path)?;
        let params = track
            .codec_params
            .as_ref()
            .and_then(|p| p.audio())
            .cloned()
            .ok_or_else(|| describe::no_sound_track(reader.as_ref(), path))?;
        let track_id = track.id;
        let edit = edits.iter().find(|e| e.track_id == track_id).copied();
        // MPEG audio without a Xing header and ADTS AAC give a length
        // guessed from the file's size and first bit rate.
        let format = reader.format_info().format;
        let length_is_guessed =
            [FORMAT_ID_MP1, FORMAT_ID_MP2, FORMAT_ID_MP3, FORMAT_ID_ADTS].contains(&format);
        let frames_total = match (edit, params.sample_rate) {
            (Some(edit), Some(rate_hz)) => Some(edit.play_frames(rate_hz)),
            _ => track.num_frames,
        };
        if frames_total == Some(0) {
            return Err(WavError::NoSamples {
                path: path.to_owned(),
            });
        }
        // Gapless on (the default) drops the encoder's delay and padding
        // where the file gives them (MP3 with a LAME header, Ogg). Off for
        // MPEG audio without them: symphonia 0.6.1 then trims the packets
        // past its length guessed from the file's size, which for a VBR
        // file without a Xing header cut a fifth of the recording off.
        let gapless = !length_is_guessed || track.delay.is_some() || track.padding.is_some();
        let decoder = symphonia::default::get_codecs()
            .make_audio_decoder(&params, &AudioDecoderOptions::default().gapless(gapless))
            .map_err(|failure| describe::codec_error(failure, &params, path))?;
        let sample_rate_hz = params.sample_rate.ok_or_else(|| WavError::Truncated {
            path: path.to_owned(),
            frames_read: 0,
            detail: "its header gives no sample rate".to_owned(),
        })?;
        check_sample_rate(sample_rate_hz, path)?;
        Ok(Self {
            path: path.to_owned(),
            reader,
            decoder,
            track_id,
            sample_rate_hz,
            channels: params.channels.as_ref().map_or(1, |c| c.count().max(1)),
            frames_total,
            length_is_guessed,
            skip_frames: edit.map_or(0, |e| e.skip_frames(sample_rate_hz)),
            play_frames: edit.map(|e| e.play_frames(sample_rate_hz)),
            frames_read: 0,
            frames_decoded: 0,
            pending: Vec::new(),
            pending_at: 0,
            interleaved: Vec::new(),
            finished: false,
        })
    }

    pub fn sample_rate_hz(&self) -> u32 {
        self.sample_rate_hz
    }

    /// Channels in the file (they are mixed to mono).
    pub fn channels(&self) -> usize {
        self.channels
    }

    /// Frames the header promises, when it says (for MP3 without a Xing
    /// header and for ADTS AAC, an estimate from the file's size).
    pub fn frames_total(&self) -> Option<u64> {
        self.frames_total
    }

    /// Frames read so far.
    pub fn frames_read(&self) -> u64 {
        self.frames_read
    }

    /// Length in seconds, when the header says.
    pub fn duration_s(&self) -> Option<f64> {
        self.frames_total
            .map(|frames| frames as f64 / f64::from(self.sample_rate_hz))
    }

    /// Replaces `out` with up to `max_frames` mono samples (the mean of the
    /// channels). Returns how many; 0 at the end of the recording.
    pub fn read_block(&mut self, out: &mut Vec<f32>, max_frames: usize) -> Result<usize, WavError> {
        out.clear();
        while out.len() < max_frames {
            if self.pending_at == self.pending.len() && !self.decode_next_packet()? {
                break;
            }
            let take = (max_frames - out.len()).min(self.pending.len() - self.pending_at);
            out.extend_from_slice(&self.pending[self.pending_at..self.pending_at + take]);
            self.pending_at += take;
        }
        self.frames_read += out.len() as u64;
        Ok(out.len())
    }

    /// Decodes the next packet of the sound track into `pending`. False at
    /// the end of the recording.
    fn decode_next_packet(&mut self) -> Result<bool, WavError> {
        self.pending.clear();
        self.pending_at = 0;
        if self.finished {
            return Ok(false);
        }
        loop {
            let packet = match self.reader.next_packet() {
                Ok(Some(packet)) => packet,
                Ok(None) => return self.at_end(),
                Err(failure) => return Err(self.damaged(failure)),
            };
            if packet.track_id != self.track_id {
                continue;
            }
            let decoded = match self.decoder.decode(&packet) {
                Ok(decoded) => decoded,
                Err(failure) => return Err(self.damaged(failure)),
            };
            if decoded.frames() == 0 {
                continue;
            }
            let rate_hz = decoded.spec().rate();
            let channels = decoded.spec().channels().count().max(1);
            decoded.copy_to_vec_interleaved(&mut self.interleaved);
            if rate_hz != self.sample_rate_hz {
                return Err(WavError::Unsupported {
                    path: self.path.clone(),
                    detail: format!(
                        "audio whose sample rate changes from {} to {rate_hz} Hz partway",
                        self.sample_rate_hz
                    ),
                });
            }
            mix_to_mono(&self.interleaved, channels, &mut self.pending);
            self.apply_edit();
            if self.pending.is_empty() {
                continue;
            }
            self.frames_decoded += self.pending.len() as u64;
            return Ok(true);
        }
    }

    /// Drops from `pending` the frames before the MP4 edit and after it.
    fn apply_edit(&mut self) {
        let skip = self.skip_frames.min(self.pending.len() as u64) as usize;
        self.pending.drain(..skip);
        self.skip_frames -= skip as u64;
        if let Some(play) = self.play_frames {
            let left = play.saturating_sub(self.frames_decoded);
            self.pending
                .truncate(left.min(self.pending.len() as u64) as usize);
        }
    }

    /// The end of the packets: fewer frames than the header promised means
    /// the file was cut short.
    fn at_end(&mut self) -> Result<bool, WavError> {
        self.finished = true;
        let decoded = self.frames_decoded;
        if let Some(total) = self.frames_total.filter(|_| !self.length_is_guessed) {
            if decoded < total {
                return Err(self.truncated(format!(
                    "the sound ends {} frames before the length its header gives",
                    total - decoded
                )));
            }
        }
        if decoded == 0 {
            return Err(WavError::NoSamples {
                path: self.path.clone(),
            });
        }
        Ok(false)
    }

    fn damaged(&mut self, failure: DecodeFailure) -> WavError {
        self.finished = true;
        match failure {
            DecodeFailure::ResetRequired => WavError::Unsupported {
                path: self.path.clone(),
                detail: "several streams chained one after another".to_owned(),
            },
            DecodeFailure::IoError(error) if error.kind() != std::io::ErrorKind::UnexpectedEof => {
                WavError::Read {
                    path: self.path.clone(),
                    detail: describe::plain(&error.to_string()),
                }
            }
            other => self.truncated(describe::failure_detail(&other)),
        }
    }

    fn truncated(&self, detail: String) -> WavError {
        WavError::Truncated {
            path: self.path.clone(),
            frames_read: self.frames_read,
            detail,
        }
    }
}

fn check_sample_rate(rate_hz: u32, path: &Path) -> Result<(), WavError> {
    if (MIN_SAMPLE_RATE_HZ..=MAX_SAMPLE_RATE_HZ).contains(&rate_hz) {
        Ok(())
    } else {
        Err(WavError::SampleRate {
            path: path.to_owned(),
            rate_hz,
        })
    }
}

/// Appends the mean of each frame's channels to `out`; a sample that is not
/// finite (a float file can hold NaN or infinity) counts as silence.
fn mix_to_mono(interleaved: &[f32], channels: usize, out: &mut Vec<f32>) {
    let finite = |s: f32| if s.is_finite() { s } else { 0.0 };
    if channels == 1 {
        out.extend(interleaved.iter().map(|&s| finite(s)));
        return;
    }
    let scale = 1.0 / channels as f32;
    out.extend(
        interleaved
            .chunks_exact(channels)
            .map(|frame| frame.iter().map(|&s| finite(s)).sum::<f32>() * scale),
    );
}

/// What a non-regular file is, in words; None for a regular file.
fn not_regular_kind(file_type: &std::fs::FileType) -> Option<&'static str> {
    if file_type.is_file() {
        return None;
    }
    if file_type.is_dir() {
        return Some("a folder");
    }
    #[cfg(unix)]
    {
        use std::os::unix::fs::FileTypeExt;
        if file_type.is_fifo() {
            return Some("a pipe");
        }
        if file_type.is_socket() {
            return Some("a socket");
        }
        if file_type.is_char_device() || file_type.is_block_device() {
            return Some("a device");
        }
    }
    Some("not a plain file")
}

/// Reads a recording and mixes it to mono.
pub fn read_mono(path: &Path) -> Result<MonoRecording, WavError> {
    collect_mono(WavStream::open(path)?)
}

/// Reads a recording held in memory (e.g. one bundled in the program).
pub fn read_mono_bytes(bytes: &[u8], name: &Path) -> Result<MonoRecording, WavError> {
    collect_mono(WavStream::from_bytes(bytes.to_vec(), name)?)
}

fn collect_mono(mut stream: WavStream) -> Result<MonoRecording, WavError> {
    let up_front = stream.frames_total().unwrap_or(0).min(MAX_UP_FRONT_SAMPLES);
    let mut samples = Vec::with_capacity(up_front as usize);
    let mut block = Vec::new();
    while stream.read_block(&mut block, READ_BLOCK_FRAMES)? > 0 {
        samples.extend_from_slice(&block);
    }
    Ok(MonoRecording {
        sample_rate_hz: stream.sample_rate_hz(),
        samples,
    })
}

/// Writes mono 32-bit float samples (or 16-bit integer when `pcm16` is set)
/// atomically (see [`crate::atomic_file`]).
pub fn write_mono(
    path: &Path,
    sample_rate_hz: u32,
    samples: &[f32],
    pcm16: bool,
) -> Result<(), WavError> {
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
    let as_io = |e: hound::Error| match e {
        hound::Error::IoError(e) => e,
        other => std::io::Error::other(other.to_string()),
    };
    crate::atomic_file::write_atomically(path, |file| {
        let mut writer =
            hound::WavWriter::new(std::io::BufWriter::new(file), spec).map_err(as_io)?;
        for &s in samples {
            let result = if pcm16 {
                writer.write_sample((f64::from(s).clamp(-1.0, 1.0) * 32767.0).round() as i16)
            } else {
                writer.write_sample(s)
            };
            result.map_err(as_io)?;
        }
        writer.finalize().map_err(as_io)
    })
    .map_err(|e| WavError::Write {
        path: path.to_owned(),
        detail: e.to_string(),
    })
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

    #[test]
    fn data_cut_short_is_truncated_after_what_was_whole() {
        let dir = tempfile::tempdir().expect("temp dir");
        let path = dir.path().join("cut.wav");
        let samples: Vec<f32> = (0..100_000)
            .map(|i| ((i % 200) as f32 - 100.0) / 400.0)
            .collect();
        write_mono(&path, 48_000, &samples, true).expect("write");
        let bytes = std::fs::read(&path).expect("read back");
        // Keep the header and 60 000.5 frames of 16-bit mono.
        let header_len = bytes.len() - 200_000;
        std::fs::write(&path, &bytes[..header_len + 120_001]).expect("cut");
        let mut stream = WavStream::open(&path).expect("the header is whole");
        let mut block = Vec::new();
        let mut read = Vec::new();
        let error = loop {
            match stream.read_block(&mut block, 10_000) {
                Ok(0) => panic!("the cut went unnoticed after {} frames", read.len()),
                Ok(_) => read.extend_from_slice(&block),
                Err(error) => break error,
            }
        };
        match error {
            WavError::Truncated { frames_read, .. } => {
                assert_eq!(frames_read, read.len() as u64);
                assert!(frames_read <= 60_000, "{frames_read}");
            }
            other => panic!("{other:?}"),
        }
        // What came before the cut is the recording itself.
        for (a, b) in read.iter().zip(&samples) {
            assert!((a - b).abs() <= 1.0 / 32767.0);
        }
    }

    #[test]
    fn mono_is_the_mean_of_the_channels_and_not_finite_is_silence() {
        let mut out = Vec::new();
        mix_to_mono(&[0.5, -0.1, f32::NAN, 0.4, 1.0, 1.0], 2, &mut out);
        assert_eq!(out, vec![0.2, 0.2, 1.0]);
        out.clear();
        mix_to_mono(&[0.25, f32::INFINITY], 1, &mut out);
        assert_eq!(out, vec![0.25, 0.0]);
    }
}
