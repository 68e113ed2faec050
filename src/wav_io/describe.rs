//! Turning what `symphonia` reports into one plain sentence: which track is
//! the sound, what a file holds that cannot be decoded, where it is damaged.

use std::path::Path;

use symphonia::core::codecs::audio::well_known::profiles::{
    CODEC_PROFILE_AAC_HE, CODEC_PROFILE_AAC_HE_V2, CODEC_PROFILE_AAC_LC, CODEC_PROFILE_AAC_USAC,
};
use symphonia::core::codecs::audio::well_known::*;
use symphonia::core::codecs::audio::{AudioCodecParameters, CODEC_ID_NULL_AUDIO};
use symphonia::core::codecs::CodecParameters;
use symphonia::core::errors::Error as DecodeFailure;
use symphonia::core::formats::{FormatReader, Track, TrackType};

use super::WavError;

/// The formats read, in words (for messages and help texts).
pub const READABLE_FORMATS: &str =
    "WAV, AIFF, AIFC, CAF, FLAC, MP3, AAC-LC or ALAC in M4A/MP4, ADTS AAC and Ogg Vorbis";

/// How much of the start of a file is looked at to name a WAV encoding.
pub(super) const SNIFF_BYTES: usize = 1 << 16;

/// Where in the recording a fault lies, in words.
pub(super) fn position(frames_read: u64) -> String {
    if frames_read == 0 {
        "before its first sample".to_owned()
    } else {
        format!("after {frames_read} frames")
    }
}

/// A failure while finding the format and reading the header.
pub(super) fn header_error(failure: DecodeFailure, path: &Path) -> WavError {
    let path = path.to_owned();
    match failure {
        // The probe's own "no suitable format reader found": no format at
        // all. Any other refusal comes from a reader that knew the format.
        DecodeFailure::Unsupported(text) if text.starts_with("core (probe)") => {
            WavError::UnknownFormat {
                path,
                detail: "no known format was found in it".to_owned(),
            }
        }
        DecodeFailure::Unsupported(text) => WavError::Unsupported {
            path,
            detail: format!(
                "something its reader does not support ({})",
                failure_detail(&DecodeFailure::Unsupported(text))
            ),
        },
        DecodeFailure::IoError(error) if error.kind() == std::io::ErrorKind::UnexpectedEof => {
            WavError::Truncated {
                path,
                frames_read: 0,
                detail: "it ends inside its header".to_owned(),
            }
        }
        DecodeFailure::IoError(error) if error.kind() != std::io::ErrorKind::UnexpectedEof => {
            WavError::Read {
                path,
                detail: plain(&error.to_string()),
            }
        }
        other => WavError::Truncated {
            path,
            frames_read: 0,
            detail: format!("its header is malformed: {}", failure_detail(&other)),
        },
    }
}

/// The sound track: the default one, or the first whose codec is known.
/// An audio track whose codec is unknown is named as such; a file without
/// any audio track says what it holds instead.
pub(super) fn sound_track<'r>(
    reader: &'r dyn FormatReader,
    path: &Path,
) -> Result<&'r Track, WavError> {
    if let Some(track) = reader.default_track(TrackType::Audio) {
        return Ok(track);
    }
    match reader.first_track(TrackType::Audio) {
        Some(track) => Ok(track),
        None => Err(no_sound_track(reader, path)),
    }
}

/// Why a file has no sound track tapwright can read, from its other tracks.
/// symphonia 0.6.1 gives a track whose sample entry it does not know (an
/// encrypted `enca` or `drms` entry as DRM puts in an M4A, a data or hint
/// track) no codec parameters at all, so such a track cannot be told apart
/// further.
pub(super) fn no_sound_track(reader: &dyn FormatReader, path: &Path) -> WavError {
    let tracks = reader.tracks();
    let unknown = tracks.iter().any(|t| t.codec_params.is_none());
    let video = tracks
        .iter()
        .any(|t| matches!(t.codec_params, Some(CodecParameters::Video(_))));
    let detail = if unknown {
        "its tracks are of a kind tapwright does not know, or their sound is encrypted (DRM)"
    } else if video {
        "it holds video without sound"
    } else if tracks.is_empty() {
        "it holds no tracks at all"
    } else {
        "it holds no sound"
    };
    WavError::NoAudioTrack {
        path: path.to_owned(),
        detail: detail.to_owned(),
    }
}

/// A failure while making the decoder: the codec (or its profile) is not
/// one symphonia decodes, or its setup is damaged.
pub(super) fn codec_error(
    failure: DecodeFailure,
    params: &AudioCodecParameters,
    path: &Path,
) -> WavError {
    match failure {
        DecodeFailure::Unsupported(_) => WavError::Unsupported {
            path: path.to_owned(),
            detail: codec_name(params),
        },
        other => WavError::Truncated {
            path: path.to_owned(),
            frames_read: 0,
            detail: format!(
                "its {} setup cannot be read: {}",
                codec_name(params),
                failure_detail(&other)
            ),
        },
    }
}

/// The codec in words, for the ones met in phone, recorder and video files.
fn codec_name(params: &AudioCodecParameters) -> String {
    let codec = params.codec;
    if codec == CODEC_ID_AAC {
        return match params.profile {
            Some(CODEC_PROFILE_AAC_LC) => "AAC-LC".to_owned(),
            Some(CODEC_PROFILE_AAC_HE) => "HE-AAC (AAC with spectral band replication)".to_owned(),
            Some(CODEC_PROFILE_AAC_HE_V2) => {
                "HE-AAC v2 (AAC with spectral band replication and parametric stereo)".to_owned()
            }
            Some(CODEC_PROFILE_AAC_USAC) => "xHE-AAC (USAC)".to_owned(),
            _ => "AAC of a profile other than AAC-LC".to_owned(),
        };
    }
    let name = match codec {
        c if c == CODEC_ID_OPUS => "Opus",
        c if c == CODEC_ID_SPEEX => "Speex",
        c if c == CODEC_ID_AC3 => "Dolby AC-3",
        c if c == CODEC_ID_EAC3 => "Dolby E-AC-3",
        c if c == CODEC_ID_AC4 => "Dolby AC-4",
        c if c == CODEC_ID_DCA => "DTS",
        c if c == CODEC_ID_WMA => "Windows Media Audio",
        c if c == CODEC_ID_MP1 => "MPEG audio layer I",
        c if c == CODEC_ID_MP2 => "MPEG audio layer II",
        c if c == CODEC_ID_ADPCM_MS => "Microsoft ADPCM",
        c if c == CODEC_ID_ADPCM_IMA_WAV || c == CODEC_ID_ADPCM_IMA_QT => "IMA ADPCM",
        c if c == CODEC_ID_ADPCM_G722 => "G.722 ADPCM",
        c if c == CODEC_ID_ADPCM_G726 || c == CODEC_ID_ADPCM_G726LE => "G.726 ADPCM",
        c if c == CODEC_ID_WAVPACK => "WavPack",
        c if c == CODEC_ID_MONKEYS_AUDIO => "Monkey's Audio",
        c if c == CODEC_ID_TRUEHD => "Dolby TrueHD",
        c if c == CODEC_ID_ATRAC3 || c == CODEC_ID_ATRAC3PLUS || c == CODEC_ID_ATRAC9 => "ATRAC",
        c if c == CODEC_ID_NULL_AUDIO => "sound in a codec tapwright does not know",
        _ => return format!("sound in a codec tapwright does not decode (symphonia id {codec})"),
    };
    name.to_owned()
}

/// A symphonia failure as a clause: its text without the "malformed
/// stream:" lead and the name of the module that raised it.
pub(super) fn failure_detail(failure: &DecodeFailure) -> String {
    let text = match failure {
        DecodeFailure::IoError(error) if error.kind() == std::io::ErrorKind::UnexpectedEof => {
            return "the file ends inside a packet".to_owned();
        }
        DecodeFailure::DecodeError(text)
        | DecodeFailure::Unsupported(text)
        | DecodeFailure::LimitError(text) => (*text).to_owned(),
        other => other.to_string(),
    };
    // "isomp4 (stsd): missing sample entry" → "missing sample entry".
    let without_module = match text.split_once(": ") {
        Some((module, rest)) if !module.contains(' ') || module.ends_with(')') => rest,
        _ => text.as_str(),
    };
    plain(without_module)
}

/// A library message as a clause: no trailing full stop, lower-case start.
pub(super) fn plain(message: &str) -> String {
    let trimmed = message.trim().trim_end_matches('.');
    let mut chars = trimmed.chars();
    match chars.next() {
        Some(first) => first.to_lowercase().chain(chars).collect(),
        None => String::new(),
    }
}

/// Replaces a header error of a WAV file by the name of the encoding it
/// holds, when that encoding is one tapwright cannot decode.
pub(super) fn name_wave_encoding(error: WavError, path: &Path) -> WavError {
    use std::io::Read as _;
    if !is_header_error(&error) {
        return error;
    }
    let mut header = Vec::new();
    let read = std::fs::File::open(path)
        .and_then(|file| file.take(SNIFF_BYTES as u64).read_to_end(&mut header));
    match read {
        Ok(_) => name_wave_encoding_in(error, &header),
        Err(_) => error,
    }
}

/// As [`name_wave_encoding`], from the first bytes of the file.
pub(super) fn name_wave_encoding_in(error: WavError, header: &[u8]) -> WavError {
    if !is_header_error(&error) {
        return error;
    }
    match unreadable_wave_encoding(header) {
        Some(detail) => WavError::Unsupported {
            path: error_path(&error).to_owned(),
            detail,
        },
        None => error,
    }
}

fn is_header_error(error: &WavError) -> bool {
    matches!(
        error,
        WavError::UnknownFormat { .. }
            | WavError::Unsupported { .. }
            | WavError::Truncated { frames_read: 0, .. }
    )
}

fn error_path(error: &WavError) -> &Path {
    match error {
        WavError::Open { path, .. }
        | WavError::NotRegularFile { path, .. }
        | WavError::Empty { path }
        | WavError::UnknownFormat { path, .. }
        | WavError::Unsupported { path, .. }
        | WavError::NoAudioTrack { path, .. }
        | WavError::SampleRate { path, .. }
        | WavError::Truncated { path, .. }
        | WavError::Read { path, .. }
        | WavError::NoSamples { path }
        | WavError::Write { path, .. } => path,
    }
}

const WAVE_FORMAT_PCM: u16 = 0x0001;
const WAVE_FORMAT_IEEE_FLOAT: u16 = 0x0003;
const WAVE_FORMAT_ALAW: u16 = 0x0006;
const WAVE_FORMAT_MULAW: u16 = 0x0007;
const WAVE_FORMAT_EXTENSIBLE: u16 = 0xFFFE;

/// The encoding of a RIFF/WAVE file, in words, when it is one symphonia
/// 0.6.1 does not decode with the features tapwright enables; None when
/// it is one it decodes (so a failure is damage) or the bytes are no WAVE.
///
/// This much of the RIFF walk stays our own because symphonia 0.6.1
/// refuses these files with fixed texts that do not name the encoding
/// ("wav: unsupported wave format", "wav: malformed fmt_adpcm chunk", "wav:
/// bits per sample for fmt_ieee must be 32 or 64 bits", and for RF64 and
/// RIFX, which it does not read, "no suitable format reader found"), and a
/// maker should be told what the recorder wrote.
fn unreadable_wave_encoding(bytes: &[u8]) -> Option<String> {
    if bytes.len() < 12 || &bytes[8..12] != b"WAVE" {
        return None;
    }
    match &bytes[0..4] {
        b"RIFF" => {}
        b"RIFX" => return Some("big-endian RIFX WAV".to_owned()),
        b"RF64" => return Some("a 64-bit RF64 WAV container".to_owned()),
        _ => return None,
    }
    let fmt = riff_chunk(&bytes[12..], b"fmt ")?;
    if fmt.len() < 16 {
        return None;
    }
    let mut tag = le_u16(fmt, 0);
    let bits = le_u16(fmt, 14);
    let mut valid_bits = bits;
    if tag == WAVE_FORMAT_EXTENSIBLE && fmt.len() >= 40 {
        valid_bits = le_u16(fmt, 18);
        tag = le_u16(fmt, 24);
    }
    match tag {
        WAVE_FORMAT_PCM if matches!(bits, 8 | 16 | 24 | 32) => None,
        WAVE_FORMAT_PCM => Some(format!("{bits}-bit integer samples")),
        WAVE_FORMAT_IEEE_FLOAT if matches!(bits, 32 | 64) && valid_bits == bits => None,
        WAVE_FORMAT_IEEE_FLOAT => Some(format!("{bits}-bit float samples")),
        WAVE_FORMAT_ALAW | WAVE_FORMAT_MULAW => None,
        other => Some(format_tag_name(other)),
    }
}

/// The body of the first chunk called `id` among `chunks` (which follow
/// the 12-byte RIFF header), skipping the pad byte after any odd chunk; as
/// much of it as `chunks` holds.
fn riff_chunk<'b>(mut chunks: &'b [u8], id: &[u8; 4]) -> Option<&'b [u8]> {
    while chunks.len() >= 8 {
        let length = u32::from_le_bytes([chunks[4], chunks[5], chunks[6], chunks[7]]) as usize;
        let body = &chunks[8..];
        if &chunks[0..4] == id {
            return Some(&body[..length.min(body.len())]);
        }
        let next = length.saturating_add(length & 1);
        chunks = body.get(next..)?;
    }
    None
}

fn le_u16(bytes: &[u8], at: usize) -> u16 {
    u16::from_le_bytes([bytes[at], bytes[at + 1]])
}

/// Names the WAV encodings met in practice (format tags from the registered
/// list in Microsoft's mmreg.h, from memory).
fn format_tag_name(tag: u16) -> String {
    let name = match tag {
        0x0002 => "Microsoft ADPCM",
        0x0011 => "IMA ADPCM",
        0x0031 => "GSM 6.10",
        0x0050 => "MPEG audio",
        0x0055 => "MP3 inside a WAV file",
        0x0160..=0x0162 => "Windows Media Audio",
        0x2000 => "AC-3",
        0xF1AC => "FLAC inside a WAV file",
        _ => return format!("the WAV encoding with format tag 0x{tag:04X}"),
    };
    name.to_owned()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_library_message_becomes_a_clause() {
        let failure = DecodeFailure::DecodeError("isomp4 (stsd): missing sample entry");
        assert_eq!(failure_detail(&failure), "missing sample entry");
        let failure = DecodeFailure::DecodeError("wav: malformed fmt_pcm chunk");
        assert_eq!(failure_detail(&failure), "malformed fmt_pcm chunk");
        let failure = DecodeFailure::DecodeError("Invalid main_data_begin.");
        assert_eq!(failure_detail(&failure), "invalid main_data_begin");
    }

    #[test]
    fn a_refusal_by_a_format_reader_is_not_an_unknown_format() {
        let path = Path::new("take.caf");
        let failure = DecodeFailure::Unsupported("core (probe): no suitable format reader found");
        assert!(matches!(
            header_error(failure, path),
            WavError::UnknownFormat { .. }
        ));
        let failure = DecodeFailure::Unsupported("caf: unsupported codec");
        let error = header_error(failure, path);
        assert!(matches!(error, WavError::Unsupported { .. }), "{error}");
        assert!(error.to_string().contains("(unsupported codec)"), "{error}");
    }

    #[test]
    fn a_chunk_after_an_odd_one_is_found_past_its_pad_byte() {
        let mut chunks = Vec::new();
        chunks.extend_from_slice(b"note\x03\x00\x00\x00abc\x00");
        chunks.extend_from_slice(b"fmt \x02\x00\x00\x00xy");
        assert_eq!(riff_chunk(&chunks, b"fmt "), Some(&b"xy"[..]));
        assert_eq!(riff_chunk(&chunks[..10], b"fmt "), None);
    }
}
