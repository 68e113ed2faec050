//! The edit list of the tracks of an MP4/M4A file: which stretch of the
//! decoded sound is the recording.
//!
//! This stays our own because symphonia 0.6.1 parses the `elst` box but
//! does not apply it (its ISO/MP4 reader and AAC decoder have no gapless
//! support), so every AAC track comes out with the encoder's priming
//! frames in front (1024 from ffmpeg's encoder, 2112 from Apple's) and its
//! padding behind. Those priming frames rise from silence to the room's
//! noise, which the tap finder took for a tap, losing a first tap struck
//! within a second of the start. Players drop them by the edit list; so
//! does tapwright.

use std::io::{Read, Seek, SeekFrom};

/// The largest `moov` box read (its sample tables grow with the length of
/// the recording, about 4 bytes a packet: an hour of AAC takes 700 kB).
const MAX_MOOV_BYTES: u64 = 64 << 20;

/// One track's edit: the frames to drop in front, and how many to keep.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub(super) struct Edit {
    pub track_id: u32,
    /// Media time where the edit starts, in the track's media time scale.
    pub media_start: u64,
    pub media_time_scale: u32,
    /// Length of the edit, in the movie's time scale.
    pub duration: u64,
    pub movie_time_scale: u32,
}

impl Edit {
    /// Frames to drop at the start, at `sample_rate_hz`.
    pub fn skip_frames(&self, sample_rate_hz: u32) -> u64 {
        scale(self.media_start, sample_rate_hz, self.media_time_scale)
    }

    /// Frames the edit plays, at `sample_rate_hz`.
    pub fn play_frames(&self, sample_rate_hz: u32) -> u64 {
        scale(self.duration, sample_rate_hz, self.movie_time_scale)
    }
}

fn scale(ticks: u64, rate: u32, time_scale: u32) -> u64 {
    (u128::from(ticks) * u128::from(rate) / u128::from(time_scale.max(1))) as u64
}

/// The edits of the tracks that have exactly one edit that plays media (an
/// empty edit before it is allowed, as it only delays the track), read from
/// `source`, which is left where it was. Nothing for a file that is not
/// MP4, has no `moov`, or is damaged: then the sound is kept as decoded.
pub(super) fn track_edits<R: Read + Seek + ?Sized>(source: &mut R) -> Vec<Edit> {
    let Ok(start) = source.stream_position() else {
        return Vec::new();
    };
    let edits = read_moov(source).map(|moov| edits_of_moov(&moov));
    let _ = source.seek(SeekFrom::Start(start));
    edits.unwrap_or_default()
}

/// The body of the top-level `moov` box, if the file starts with `ftyp`.
fn read_moov<R: Read + Seek + ?Sized>(source: &mut R) -> Option<Vec<u8>> {
    source.seek(SeekFrom::Start(0)).ok()?;
    let mut first = true;
    loop {
        let (kind, body_len) = read_box_header(source)?;
        if first && &kind != b"ftyp" {
            return None;
        }
        first = false;
        if &kind == b"moov" {
            if body_len > MAX_MOOV_BYTES {
                return None;
            }
            let mut body = vec![0; body_len as usize];
            source.read_exact(&mut body).ok()?;
            return Some(body);
        }
        source
            .seek(SeekFrom::Current(i64::try_from(body_len).ok()?))
            .ok()?;
    }
}

/// A box header from `source`: its type and the length of its body.
fn read_box_header<R: Read + ?Sized>(source: &mut R) -> Option<([u8; 4], u64)> {
    let mut header = [0u8; 8];
    source.read_exact(&mut header).ok()?;
    let size = u64::from(u32::from_be_bytes([
        header[0], header[1], header[2], header[3],
    ]));
    let kind = [header[4], header[5], header[6], header[7]];
    match size {
        1 => {
            let mut large = [0u8; 8];
            source.read_exact(&mut large).ok()?;
            u64::from_be_bytes(large)
                .checked_sub(16)
                .map(|len| (kind, len))
        }
        0 => None, // "to the end of the file": no moov after it
        _ => size.checked_sub(8).map(|len| (kind, len)),
    }
}

/// The boxes directly inside `body`: (type, body).
fn children(mut body: &[u8]) -> Vec<([u8; 4], &[u8])> {
    let mut found = Vec::new();
    while body.len() >= 8 {
        let size = be_u32(body, 0) as usize;
        let kind = [body[4], body[5], body[6], body[7]];
        let (start, end) = match size {
            1 if body.len() >= 16 => (16, usize::try_from(be_u64(body, 8)).unwrap_or(usize::MAX)),
            0 => (8, body.len()),
            _ => (8, size),
        };
        if end < start || end > body.len() {
            break;
        }
        found.push((kind, &body[start..end]));
        body = &body[end..];
    }
    found
}

fn child<'b>(body: &'b [u8], kind: &[u8; 4]) -> Option<&'b [u8]> {
    children(body)
        .into_iter()
        .find(|(k, _)| k == kind)
        .map(|(_, b)| b)
}

fn edits_of_moov(moov: &[u8]) -> Vec<Edit> {
    let Some(movie_time_scale) = child(moov, b"mvhd").and_then(time_scale) else {
        return Vec::new();
    };
    children(moov)
        .into_iter()
        .filter(|(kind, _)| kind == b"trak")
        .filter_map(|(_, trak)| edit_of_track(trak, movie_time_scale))
        .collect()
}

fn edit_of_track(trak: &[u8], movie_time_scale: u32) -> Option<Edit> {
    let track_id = child(trak, b"tkhd").and_then(track_id)?;
    let media_time_scale = child(trak, b"mdia")
        .and_then(|mdia| child(mdia, b"mdhd"))
        .and_then(time_scale)?;
    let elst = child(trak, b"edts").and_then(|edts| child(edts, b"elst"))?;
    let (duration, media_start) = single_media_edit(elst)?;
    Some(Edit {
        track_id,
        media_start,
        media_time_scale,
        duration,
        movie_time_scale,
    })
}

/// (segment duration, media time) of the only edit that plays media;
/// empty edits (media time −1) are skipped.
fn single_media_edit(elst: &[u8]) -> Option<(u64, u64)> {
    let version = *elst.first()?;
    let count = be_u32(elst.get(4..8)?, 0) as usize;
    let entry_len = if version == 1 { 20 } else { 12 };
    let mut media = Vec::new();
    for index in 0..count {
        let entry = elst.get(8 + index * entry_len..8 + (index + 1) * entry_len)?;
        let (duration, media_time) = if version == 1 {
            (be_u64(entry, 0), be_u64(entry, 8) as i64)
        } else {
            (
                u64::from(be_u32(entry, 0)),
                i64::from(be_u32(entry, 4) as i32),
            )
        };
        if media_time >= 0 {
            media.push((duration, media_time as u64));
        }
    }
    match media.as_slice() {
        [single] => Some(*single),
        _ => None,
    }
}

/// The time scale of an `mvhd` or `mdhd` box.
fn time_scale(full_box: &[u8]) -> Option<u32> {
    let at = if *full_box.first()? == 1 { 20 } else { 12 };
    let scale = be_u32(full_box.get(at..at + 4)?, 0);
    (scale > 0).then_some(scale)
}

fn track_id(tkhd: &[u8]) -> Option<u32> {
    let at = if *tkhd.first()? == 1 { 20 } else { 12 };
    Some(be_u32(tkhd.get(at..at + 4)?, 0))
}

fn be_u32(bytes: &[u8], at: usize) -> u32 {
    u32::from_be_bytes([bytes[at], bytes[at + 1], bytes[at + 2], bytes[at + 3]])
}

fn be_u64(bytes: &[u8], at: usize) -> u64 {
    let mut word = [0u8; 8];
    word.copy_from_slice(&bytes[at..at + 8]);
    u64::from_be_bytes(word)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn mp4_box(kind: &[u8; 4], body: &[u8]) -> Vec<u8> {
        let mut b = ((body.len() + 8) as u32).to_be_bytes().to_vec();
        b.extend_from_slice(kind);
        b.extend_from_slice(body);
        b
    }

    /// A full box of version 0: version and flags, then the fields.
    fn full_box(kind: &[u8; 4], fields: &[u32]) -> Vec<u8> {
        let mut body = vec![0u8; 4];
        fields
            .iter()
            .for_each(|f| body.extend_from_slice(&f.to_be_bytes()));
        mp4_box(kind, &body)
    }

    /// ftyp, mdat, then a moov with one track whose edit list is `elst`
    /// (media time, segment duration) pairs: the layout of ffmpeg's M4A
    /// files (ISO/IEC 14496-12 box layouts; from memory).
    fn file_with_edits(elst: &[(i32, u32)]) -> Vec<u8> {
        let mut edits = vec![0u32, elst.len() as u32];
        for &(media_time, duration) in elst {
            edits.extend_from_slice(&[duration, media_time as u32, 0x0001_0000]);
        }
        let elst_box = mp4_box(
            b"elst",
            &edits
                .iter()
                .flat_map(|w| w.to_be_bytes())
                .collect::<Vec<u8>>()[..],
        );
        // mvhd/mdhd: creation, modification, time scale, duration.
        let mvhd = full_box(b"mvhd", &[0, 0, 1000, 2600]);
        let tkhd = full_box(b"tkhd", &[0, 0, 7, 0, 2600]);
        let mdia = mp4_box(b"mdia", &full_box(b"mdhd", &[0, 0, 48_000, 125_952]));
        let trak = mp4_box(b"trak", &[tkhd, mp4_box(b"edts", &elst_box), mdia].concat());
        [
            mp4_box(b"ftyp", b"M4A \0\0\0\0"),
            mp4_box(b"mdat", &[0u8; 100]),
            mp4_box(b"moov", &[mvhd, trak].concat()),
        ]
        .concat()
    }

    #[test]
    fn the_edit_of_an_aac_track_skips_the_priming_and_keeps_the_length() {
        // An empty edit first (it only delays the track), then the media.
        let bytes = file_with_edits(&[(-1, 0), (1024, 2500)]);
        let mut source = std::io::Cursor::new(bytes);
        source.set_position(5);
        let edits = track_edits(&mut source);
        assert_eq!(source.position(), 5, "left where it was");
        assert_eq!(edits.len(), 1);
        assert_eq!(edits[0].track_id, 7);
        assert_eq!(edits[0].skip_frames(48_000), 1024);
        assert_eq!(edits[0].play_frames(48_000), 120_000);
        // The same file resampled for the window: in proportion.
        assert_eq!(edits[0].skip_frames(24_000), 512);
    }

    #[test]
    fn no_edit_is_applied_when_it_is_unclear_or_damaged() {
        let two_edits = file_with_edits(&[(1024, 1000), (50_000, 1500)]);
        assert!(track_edits(&mut std::io::Cursor::new(two_edits)).is_empty());
        let whole = file_with_edits(&[(1024, 2500)]);
        for cut in [0, 10, 40, whole.len() - 1] {
            let edits = track_edits(&mut std::io::Cursor::new(&whole[..cut]));
            assert!(edits.is_empty(), "cut at {cut}: {edits:?}");
        }
        let mut not_mp4 = whole.clone();
        not_mp4[4..8].copy_from_slice(b"RIFF");
        assert!(track_edits(&mut std::io::Cursor::new(not_mp4)).is_empty());
    }
}
