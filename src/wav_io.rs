//! WAV files in and out. Reading: 8-, 16-, 24- and 32-bit integer (also
//! fewer valid bits in a wider container, e.g. 24 bits in 32) and 32- and
//! 64-bit float, plain or `WAVE_FORMAT_EXTENSIBLE`, any number of channels
//! (mixed to mono), 8–192 kHz, read block by block so a long recording
//! never has to fit in memory ([`WavStream`]). Writing (with `hound`) goes
//! through a temporary file in the same folder, so a failed save never
//! leaves half a file behind.
//!
//! The reader is our own because `hound` 3.5 reads three kinds of valid
//! file wrongly: it takes the low 24 bits of a 32-bit container (the
//! standard puts the valid bits at the top), it does not skip the pad byte
//! after a chunk of odd length, and it refuses 64-bit float.

use std::fs::File;
use std::io::{BufReader, Read};
use std::path::{Path, PathBuf};

use thiserror::Error;

/// Sample rates tapwright accepts.
pub const MIN_SAMPLE_RATE_HZ: u32 = 8_000;
pub const MAX_SAMPLE_RATE_HZ: u32 = 192_000;

/// Frames read at a time by [`read_mono`].
const READ_BLOCK_FRAMES: usize = 65_536;
/// `read_mono` reserves room for at most this many samples up front, so a
/// header that claims a huge data chunk cannot make it allocate at once.
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

/// What can go wrong with a WAV file. Each message is one sentence that
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
    #[error("{path} is not a WAV file ({detail})")]
    NotWav { path: PathBuf, detail: String },
    #[error("{path} uses an encoding tapwright cannot read ({detail}); use 8-, 16-, 24- or 32-bit integer or 32- or 64-bit float PCM")]
    Unsupported { path: PathBuf, detail: String },
    #[error("{path} has a sample rate of {rate_hz} Hz; tapwright reads 8 000 to 192 000 Hz")]
    SampleRate { path: PathBuf, rate_hz: u32 },
    #[error("{path} is cut short or damaged after {frames_read} frames ({detail})")]
    Truncated {
        path: PathBuf,
        frames_read: u64,
        detail: String,
    },
    #[error("{path} holds no samples")]
    NoSamples { path: PathBuf },
    #[error("cannot write {path}: {detail}")]
    Write { path: PathBuf, detail: String },
}

/// How the samples of a WAV file are stored.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum SampleEncoding {
    /// Integer PCM: `valid_bits` significant bits at the top of a
    /// `container_bytes`-byte little-endian word (8-bit is unsigned).
    Int {
        container_bytes: u8,
        valid_bits: u16,
    },
    /// IEEE float, 32 bits.
    Float32,
    /// IEEE float, 64 bits.
    Float64,
}

impl SampleEncoding {
    fn container_bytes(self) -> usize {
        match self {
            Self::Int {
                container_bytes, ..
            } => usize::from(container_bytes),
            Self::Float32 => 4,
            Self::Float64 => 8,
        }
    }

    /// Plain words: "24-bit integer in 32-bit words", "64-bit float".
    pub fn describe(self) -> String {
        match self {
            Self::Int {
                container_bytes,
                valid_bits,
            } if u16::from(container_bytes) * 8 != valid_bits => format!(
                "{valid_bits}-bit integer in {}-bit words",
                u16::from(container_bytes) * 8
            ),
            Self::Int { valid_bits, .. } => format!("{valid_bits}-bit integer"),
            Self::Float32 => "32-bit float".to_owned(),
            Self::Float64 => "64-bit float".to_owned(),
        }
    }

    /// One sample from its little-endian bytes, in full scale.
    fn decode(self, bytes: &[u8]) -> f32 {
        match self {
            Self::Int {
                container_bytes: 1, ..
            } => (f32::from(bytes[0]) - 128.0) / 128.0,
            Self::Int { .. } => {
                // Put the word at the top of an i32: the valid bits are the
                // most significant ones, the rest are zero padding.
                let mut word = [0u8; 4];
                word[4 - bytes.len()..].copy_from_slice(bytes);
                (f64::from(i32::from_le_bytes(word)) / 2_147_483_648.0) as f32
            }
            Self::Float32 => {
                let value = f32::from_le_bytes([bytes[0], bytes[1], bytes[2], bytes[3]]);
                if value.is_finite() {
                    value
                } else {
                    0.0
                }
            }
            Self::Float64 => {
                let mut word = [0u8; 8];
                word.copy_from_slice(bytes);
                let value = f64::from_le_bytes(word);
                if value.is_finite() {
                    value as f32
                } else {
                    0.0
                }
            }
        }
    }
}

/// What the `fmt ` chunk says.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct WavFormat {
    pub sample_rate_hz: u32,
    pub channels: u16,
    pub encoding: SampleEncoding,
}

impl WavFormat {
    fn frame_bytes(&self) -> usize {
        usize::from(self.channels) * self.encoding.container_bytes()
    }
}

/// A WAV file being read block by block, mixed to mono.
pub struct WavStream<R> {
    reader: R,
    path: PathBuf,
    format: WavFormat,
    frames_total: u64,
    frames_read: u64,
    bytes: Vec<u8>,
}

impl<R> std::fmt::Debug for WavStream<R> {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.debug_struct("WavStream")
            .field("path", &self.path)
            .field("format", &self.format)
            .field("frames_total", &self.frames_total)
            .field("frames_read", &self.frames_read)
            .finish_non_exhaustive()
    }
}

impl WavStream<BufReader<File>> {
    /// Opens a WAV file and reads its header. Refuses anything that is not
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
        Self::new(BufReader::with_capacity(1 << 16, file), path)
    }
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

impl<R: Read> WavStream<R> {
    /// Reads the header from `reader` (named `path` in errors) up to the
    /// first sample.
    pub fn new(mut reader: R, path: &Path) -> Result<Self, WavError> {
        let header = read_header(&mut reader).map_err(|problem| problem.into_error(path))?;
        Ok(Self {
            reader,
            path: path.to_owned(),
            format: header.format,
            frames_total: header.frames,
            frames_read: 0,
            bytes: Vec::new(),
        })
    }

    pub fn format(&self) -> WavFormat {
        self.format
    }

    pub fn sample_rate_hz(&self) -> u32 {
        self.format.sample_rate_hz
    }

    /// Frames the header promises.
    pub fn frames_total(&self) -> u64 {
        self.frames_total
    }

    /// Frames read so far.
    pub fn frames_read(&self) -> u64 {
        self.frames_read
    }

    pub fn duration_s(&self) -> f64 {
        self.frames_total as f64 / f64::from(self.format.sample_rate_hz)
    }

    /// Replaces `out` with up to `max_frames` mono samples (the mean of the
    /// channels). Returns how many; 0 at the end of the data.
    pub fn read_block(&mut self, out: &mut Vec<f32>, max_frames: usize) -> Result<usize, WavError> {
        out.clear();
        let left = self.frames_total - self.frames_read;
        let frames = (max_frames as u64).min(left) as usize;
        if frames == 0 {
            return Ok(0);
        }
        let frame_bytes = self.format.frame_bytes();
        self.bytes.resize(frames * frame_bytes, 0);
        let filled = fill(&mut self.reader, &mut self.bytes);
        let whole_frames = filled.as_ref().map_or_else(|(n, _)| *n, |n| *n) / frame_bytes;
        self.mix_to_mono(whole_frames, out);
        self.frames_read += whole_frames as u64;
        match filled {
            Ok(n) if n == self.bytes.len() => Ok(whole_frames),
            Ok(_) => Err(self.truncated("the data ends before the length its header gives".into())),
            Err((_, error)) => Err(self.truncated(plain(&error.to_string()))),
        }
    }

    fn mix_to_mono(&self, frames: usize, out: &mut Vec<f32>) {
        let encoding = self.format.encoding;
        let width = encoding.container_bytes();
        let channels = usize::from(self.format.channels);
        let scale = 1.0 / channels as f32;
        let frame_bytes = width * channels;
        out.extend(
            self.bytes[..frames * frame_bytes]
                .chunks_exact(frame_bytes)
                .map(|frame| {
                    if channels == 1 {
                        encoding.decode(frame)
                    } else {
                        frame
                            .chunks_exact(width)
                            .map(|s| encoding.decode(s))
                            .sum::<f32>()
                            * scale
                    }
                }),
        );
    }

    fn truncated(&self, detail: String) -> WavError {
        WavError::Truncated {
            path: self.path.clone(),
            frames_read: self.frames_read,
            detail,
        }
    }
}

/// Fills `buffer` from `reader`; Ok(bytes read) stops short only at the
/// end of the input, Err carries the bytes read before the failure.
fn fill(reader: &mut impl Read, buffer: &mut [u8]) -> Result<usize, (usize, std::io::Error)> {
    let mut filled = 0;
    while filled < buffer.len() {
        match reader.read(&mut buffer[filled..]) {
            Ok(0) => break,
            Ok(n) => filled += n,
            Err(e) if e.kind() == std::io::ErrorKind::Interrupted => {}
            Err(e) => return Err((filled, e)),
        }
    }
    Ok(filled)
}

/// Reads a WAV file and mixes it to mono.
pub fn read_mono(path: &Path) -> Result<MonoRecording, WavError> {
    collect_mono(WavStream::open(path)?)
}

/// Reads WAV bytes (e.g. a recording bundled in the program).
pub fn read_mono_bytes(bytes: &[u8], name: &Path) -> Result<MonoRecording, WavError> {
    if bytes.is_empty() {
        return Err(WavError::Empty {
            path: name.to_owned(),
        });
    }
    collect_mono(WavStream::new(bytes, name)?)
}

fn collect_mono<R: Read>(mut stream: WavStream<R>) -> Result<MonoRecording, WavError> {
    let mut samples = Vec::with_capacity(stream.frames_total().min(MAX_UP_FRONT_SAMPLES) as usize);
    let mut block = Vec::new();
    while stream.read_block(&mut block, READ_BLOCK_FRAMES)? > 0 {
        samples.extend_from_slice(&block);
    }
    Ok(MonoRecording {
        sample_rate_hz: stream.sample_rate_hz(),
        samples,
    })
}

/// The header's findings.
struct Header {
    format: WavFormat,
    frames: u64,
}

/// A header problem, before the file's name is attached.
enum HeaderProblem {
    NotWav(String),
    Unsupported(String),
    SampleRate(u32),
    NoSamples,
}

impl HeaderProblem {
    fn into_error(self, path: &Path) -> WavError {
        let path = path.to_owned();
        match self {
            Self::NotWav(detail) => WavError::NotWav { path, detail },
            Self::Unsupported(detail) => WavError::Unsupported { path, detail },
            Self::SampleRate(rate_hz) => WavError::SampleRate { path, rate_hz },
            Self::NoSamples => WavError::NoSamples { path },
        }
    }
}

const WAVE_FORMAT_PCM: u16 = 0x0001;
const WAVE_FORMAT_IEEE_FLOAT: u16 = 0x0003;
const WAVE_FORMAT_EXTENSIBLE: u16 = 0xFFFE;
/// The last 12 bytes of every `KSDATAFORMAT_SUBTYPE_*` GUID
/// (xxxxxxxx-0000-0010-8000-00aa00389b71), as stored in the file.
const KSDATAFORMAT_GUID_TAIL: [u8; 12] = [
    0x00, 0x00, 0x10, 0x00, 0x80, 0x00, 0x00, 0xAA, 0x00, 0x38, 0x9B, 0x71,
];

/// Walks the RIFF chunks up to `data`, skipping unknown chunks and the pad
/// byte after any chunk of odd length.
fn read_header(reader: &mut impl Read) -> Result<Header, HeaderProblem> {
    let mut riff = [0u8; 12];
    read_header_bytes(reader, &mut riff)?;
    match &riff[0..4] {
        b"RIFF" => {}
        b"RIFX" => return Err(HeaderProblem::Unsupported("big-endian RIFX".into())),
        b"RF64" => return Err(HeaderProblem::Unsupported("64-bit RF64 container".into())),
        _ => return Err(HeaderProblem::NotWav("it does not start with RIFF".into())),
    }
    if &riff[8..12] != b"WAVE" {
        return Err(HeaderProblem::NotWav(
            "it is a RIFF file but not WAVE".into(),
        ));
    }
    let mut format = None;
    loop {
        let mut chunk = [0u8; 8];
        read_header_bytes(reader, &mut chunk)?;
        let length = u64::from(u32::from_le_bytes([chunk[4], chunk[5], chunk[6], chunk[7]]));
        match &chunk[0..4] {
            b"fmt " => {
                let mut body = vec![0u8; length.min(1 << 16) as usize];
                read_header_bytes(reader, &mut body)?;
                skip(reader, length - body.len() as u64 + (length & 1))?;
                format = Some(parse_fmt(&body)?);
            }
            b"data" => {
                let format = format.ok_or_else(|| {
                    HeaderProblem::NotWav("its data chunk comes before its fmt chunk".into())
                })?;
                let frames = length / format.frame_bytes() as u64;
                if frames == 0 {
                    return Err(HeaderProblem::NoSamples);
                }
                return Ok(Header { format, frames });
            }
            _ => skip(reader, length + (length & 1))?,
        }
    }
}

fn read_header_bytes(reader: &mut impl Read, buffer: &mut [u8]) -> Result<(), HeaderProblem> {
    match fill(reader, buffer) {
        Ok(n) if n == buffer.len() => Ok(()),
        Ok(_) => Err(HeaderProblem::NotWav("it ends inside the header".into())),
        Err((_, e)) => Err(HeaderProblem::NotWav(plain(&e.to_string()))),
    }
}

fn skip(reader: &mut impl Read, bytes: u64) -> Result<(), HeaderProblem> {
    match std::io::copy(&mut reader.take(bytes), &mut std::io::sink()) {
        Ok(n) if n == bytes => Ok(()),
        Ok(_) => Err(HeaderProblem::NotWav("it ends inside the header".into())),
        Err(e) => Err(HeaderProblem::NotWav(plain(&e.to_string()))),
    }
}

fn le_u16(bytes: &[u8], at: usize) -> u16 {
    u16::from_le_bytes([bytes[at], bytes[at + 1]])
}

fn le_u32(bytes: &[u8], at: usize) -> u32 {
    u32::from_le_bytes([bytes[at], bytes[at + 1], bytes[at + 2], bytes[at + 3]])
}

/// The `fmt ` chunk: WAVEFORMAT, WAVEFORMATEX or WAVEFORMATEXTENSIBLE.
fn parse_fmt(body: &[u8]) -> Result<WavFormat, HeaderProblem> {
    if body.len() < 16 {
        return Err(HeaderProblem::NotWav(format!(
            "its fmt chunk is {} bytes long, shorter than the 16 a WAV file needs",
            body.len()
        )));
    }
    let mut tag = le_u16(body, 0);
    let channels = le_u16(body, 2);
    let sample_rate_hz = le_u32(body, 4);
    let block_align = le_u16(body, 12);
    let bits = le_u16(body, 14);
    let mut valid_bits = bits;
    if tag == WAVE_FORMAT_EXTENSIBLE {
        if body.len() < 40 || le_u16(body, 16) < 22 {
            return Err(HeaderProblem::NotWav(
                "its extensible fmt chunk is too short".into(),
            ));
        }
        if le_u16(body, 18) != 0 {
            valid_bits = le_u16(body, 18);
        }
        if body[28..40] != KSDATAFORMAT_GUID_TAIL {
            return Err(HeaderProblem::Unsupported(
                "an extensible format with an unknown sub-format".into(),
            ));
        }
        tag = le_u16(body, 24);
    }
    if tag != WAVE_FORMAT_PCM && tag != WAVE_FORMAT_IEEE_FLOAT {
        return Err(HeaderProblem::Unsupported(format_tag_name(tag)));
    }
    if channels == 0 {
        return Err(HeaderProblem::NotWav(
            "its fmt chunk says 0 channels".into(),
        ));
    }
    if block_align == 0 || block_align % channels != 0 {
        return Err(HeaderProblem::NotWav(format!(
            "its fmt chunk gives {block_align} bytes per frame for {channels} channels"
        )));
    }
    let container_bytes = block_align / channels;
    let encoding = sample_encoding(tag, bits, valid_bits, container_bytes)?;
    if !(MIN_SAMPLE_RATE_HZ..=MAX_SAMPLE_RATE_HZ).contains(&sample_rate_hz) {
        return Err(HeaderProblem::SampleRate(sample_rate_hz));
    }
    Ok(WavFormat {
        sample_rate_hz,
        channels,
        encoding,
    })
}

/// The encoding from the format tag, the bit depths and the bytes each
/// sample takes, or why it cannot be read.
fn sample_encoding(
    tag: u16,
    bits: u16,
    valid_bits: u16,
    container_bytes: u16,
) -> Result<SampleEncoding, HeaderProblem> {
    let container_bits = container_bytes * 8;
    let inconsistent = || {
        HeaderProblem::NotWav(format!(
            "its fmt chunk gives {bits}-bit samples ({valid_bits} valid bits) in {container_bytes}-byte words"
        ))
    };
    match tag {
        WAVE_FORMAT_PCM => {
            if bits == 0 || valid_bits == 0 || valid_bits > bits || bits > container_bits {
                return Err(inconsistent());
            }
            if container_bytes > 4 {
                return Err(HeaderProblem::Unsupported(format!("{bits}-bit integer")));
            }
            Ok(SampleEncoding::Int {
                container_bytes: container_bytes as u8,
                valid_bits,
            })
        }
        WAVE_FORMAT_IEEE_FLOAT => match (bits, container_bytes) {
            (32, 4) => Ok(SampleEncoding::Float32),
            (64, 8) => Ok(SampleEncoding::Float64),
            (32 | 64, _) => Err(inconsistent()),
            _ => Err(HeaderProblem::Unsupported(format!("{bits}-bit float"))),
        },
        other => Err(HeaderProblem::Unsupported(format_tag_name(other))),
    }
}

/// Names the compressed encodings met in practice (format tags from the
/// registered list in Microsoft's mmreg.h, from memory).
fn format_tag_name(tag: u16) -> String {
    let name = match tag {
        0x0002 => "Microsoft ADPCM",
        0x0006 => "A-law",
        0x0007 => "µ-law",
        0x0011 => "IMA ADPCM",
        0x0031 => "GSM 6.10",
        0x0050 => "MPEG audio",
        0x0055 => "MP3",
        0x0160..=0x0162 => "Windows Media Audio",
        0x2000 => "AC-3",
        0xF1AC => "FLAC",
        _ => return format!("format tag 0x{tag:04X}"),
    };
    name.to_owned()
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
    fn data_cut_short_is_truncated_after_the_whole_frames() {
        let dir = tempfile::tempdir().expect("temp dir");
        let path = dir.path().join("cut.wav");
        write_mono(&path, 48_000, &[0.25; 1000], true).expect("write");
        let bytes = std::fs::read(&path).expect("read back");
        // Keep the header and 100.5 frames of 16-bit mono.
        let header_len = bytes.len() - 2000;
        std::fs::write(&path, &bytes[..header_len + 201]).expect("cut");
        match read_mono(&path) {
            Err(WavError::Truncated { frames_read, .. }) => assert_eq!(frames_read, 100),
            other => panic!("{other:?}"),
        }
    }
}
