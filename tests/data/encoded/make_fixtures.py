#!/usr/bin/env python3
"""Makes the encoded fixtures in this folder (see README.md beside it).

The two source recordings are synthetic taps written by the test suite
(tests/encoded_fixtures/mod.rs); this script asks the tests to write them, then
encodes them with Debian's ffmpeg. Run from anywhere:

    python3 tests/data/encoded/make_fixtures.py

Needs cargo and ffmpeg (Debian's, built with libmp3lame, libvorbis and
libopus). ffmpeg's output can change between its versions, so the files
are kept in the repository and the tests never call ffmpeg.
"""

import os
import subprocess
import sys
import tempfile
from pathlib import Path

HERE = Path(__file__).resolve().parent
ROOT = HERE.parents[2]

# No encoder name, date or other tag in the files, so that a rerun with the
# same ffmpeg gives the same bytes.
QUIET = ["-hide_banner", "-loglevel", "error", "-y"]
BITEXACT = ["-map_metadata", "-1", "-fflags", "+bitexact", "-flags:a", "+bitexact"]


def ffmpeg(*args):
    subprocess.run(["ffmpeg", *QUIET, *args], check=True)


def write_sources(folder):
    env = dict(os.environ, TAPWRIGHT_WRITE_FIXTURE_SOURCES=str(folder))
    subprocess.run(
        ["cargo", "test", "--quiet", "--test", "audio_formats",
         "lossless_fixtures_are_the_source_sample_for_sample"],
        cwd=ROOT, env=env, check=True)
    return folder / "plate_16k.wav", folder / "accuracy_48k.wav"


def encode(plate, accuracy, work):
    out = HERE
    # Lossless and PCM containers, from the 16 kHz plate.
    ffmpeg("-i", plate, *BITEXACT, "-c:a", "pcm_s16be", out / "plate.aiff")
    ffmpeg("-i", plate, *BITEXACT, "-c:a", "pcm_s16le", "-f", "aiff", out / "plate.aifc")
    ffmpeg("-i", plate, *BITEXACT, "-c:a", "pcm_s16be", out / "plate.caf")
    ffmpeg("-i", plate, *BITEXACT, "-c:a", "flac", "-compression_level", "8", out / "plate.flac")
    ffmpeg("-i", plate, *BITEXACT, "-c:a", "alac", out / "plate_alac.m4a")
    # Small lossy ones from the plate, at 44.1 kHz as phones record (at
    # 16 kHz the codecs' blocks, and so their pre-echo, last three times as
    # long).
    ffmpeg("-i", plate, *BITEXACT, "-ar", "44100", "-c:a", "libvorbis", "-q:a", "3",
           out / "plate.ogg")
    ffmpeg("-i", plate, *BITEXACT, "-ar", "44100", "-c:a", "aac", "-b:a", "96k", "-f", "adts",
           out / "plate.aac")
    # VBR MP3 without a Xing header: its length can only be guessed.
    ffmpeg("-i", plate, *BITEXACT, "-ar", "44100", "-c:a", "libmp3lame", "-q:a", "4",
           "-write_xing", "0", out / "plate_vbr_noxing.mp3")
    # The lossy formats measured in README.md, from the accuracy taps.
    ffmpeg("-i", accuracy, *BITEXACT, "-c:a", "aac", "-b:a", "128k", out / "accuracy_aac128.m4a")
    ffmpeg("-i", accuracy, *BITEXACT, "-c:a", "libmp3lame", "-b:a", "192k",
           out / "accuracy_mp3_192.mp3")
    # Files tapwright cannot read.
    ffmpeg("-i", plate, *BITEXACT, "-c:a", "libopus", "-b:a", "24k", out / "bad_opus.ogg")
    ffmpeg("-f", "lavfi", "-i", "color=c=gray:s=32x32:d=1:r=5", *BITEXACT,
           "-c:v", "libx264", "-preset", "ultrafast", "-an", out / "bad_video_only.mp4")
    # Common Encryption (AES-CTR, as in DRM-protected MP4 audio); key and
    # key id made up for this file.
    ffmpeg("-i", plate, *BITEXACT, "-c:a", "aac", "-b:a", "32k",
           "-encryption_scheme", "cenc-aes-ctr",
           "-encryption_key", "00112233445566778899aabbccddeeff",
           "-encryption_kid", "0f1e2d3c4b5a69788796a5b4c3d2e1f0", out / "bad_encrypted.m4a")
    he_aac_from_lc(plate, work, out / "bad_he_aac.m4a")
    # Cut in the middle of the sound: an M4A with its index first, and FLAC.
    ffmpeg("-i", plate, *BITEXACT, "-c:a", "aac", "-b:a", "48k", "-movflags", "+faststart",
           work / "whole.m4a")
    cut_half(work / "whole.m4a", out / "bad_truncated.m4a")
    cut_half(out / "plate.flac", out / "bad_truncated.flac")


def cut_half(source, target):
    data = Path(source).read_bytes()
    Path(target).write_bytes(data[: len(data) // 2])


def he_aac_from_lc(plate, work, target):
    """An AAC-LC stream whose decoder configuration announces HE-AAC.

    Debian's ffmpeg has no HE-AAC encoder. HE-AAC in MP4 is announced in the
    AudioSpecificConfig of the `esds` box: object type 5 (SBR), the core
    rate, the output rate, then the core's object type (ISO/IEC 14496-3,
    1.6.2.1; from memory). tapwright refuses such a file from that
    configuration, before decoding any audio, so the payload can stay LC.
    """
    lc = work / "lc_16k.m4a"
    ffmpeg("-i", plate, *BITEXACT, "-c:a", "aac", "-b:a", "32k", lc)
    data = lc.read_bytes()
    bits = "".join([
        format(5, "05b"),   # audioObjectType: SBR
        format(8, "04b"),   # samplingFrequencyIndex: 16 000 Hz (core)
        format(1, "04b"),   # channelConfiguration: mono
        format(5, "04b"),   # extensionSamplingFrequencyIndex: 32 000 Hz
        format(2, "05b"),   # audioObjectType of the core: AAC LC
        "000",              # GASpecificConfig: 1024 frames, no core coder, no extension
    ])
    bits += "0" * (-len(bits) % 8)
    he_config = bytes(int(bits[i:i + 8], 2) for i in range(0, len(bits), 8))
    Path(target).write_bytes(replace_decoder_config(data, he_config))


CONTAINERS = {b"moov", b"trak", b"mdia", b"minf", b"stbl"}


def replace_decoder_config(data, config):
    """Rebuilds the boxes of an MP4 file with a new DecoderSpecificInfo.

    Only box sizes before the sample data change size: the file must have
    its `moov` after `mdat` (ffmpeg's default), so that no chunk offset
    moves.
    """
    out = bytearray()
    pos = 0
    seen_mdat = False
    while pos < len(data):
        size = int.from_bytes(data[pos:pos + 4], "big")
        kind = data[pos + 4:pos + 8]
        body = data[pos + 8:pos + size]
        if kind == b"mdat":
            seen_mdat = True
        if kind == b"moov":
            assert seen_mdat, "moov must come after mdat"
            body = rewrite_children(body, config)
        out += box(kind, body)
        pos += size
    return bytes(out)


def rewrite_children(body, config):
    out = bytearray()
    pos = 0
    while pos < len(body):
        size = int.from_bytes(body[pos:pos + 4], "big")
        kind = body[pos + 4:pos + 8]
        child = body[pos + 8:pos + size]
        if kind in CONTAINERS:
            child = rewrite_children(child, config)
        elif kind == b"stsd":
            # Full box header and entry count, then the sample entries.
            child = child[:8] + rewrite_children(child[8:], config)
        elif kind == b"mp4a":
            # The audio sample entry's 28 bytes, then its boxes.
            child = child[:28] + rewrite_children(child[28:], config)
        elif kind == b"esds":
            child = child[:4] + rewrite_descriptor(child[4:], config)
        out += box(kind, child)
        pos += size
    return bytes(out)


def read_descriptor(data, pos):
    tag = data[pos]
    pos += 1
    length = 0
    while True:
        byte = data[pos]
        pos += 1
        length = (length << 7) | (byte & 0x7F)
        if byte & 0x80 == 0:
            break
    return tag, data[pos:pos + length], pos + length


def descriptor(tag, body):
    n = len(body)
    size = bytes([0x80 | ((n >> 21) & 0x7F), 0x80 | ((n >> 14) & 0x7F),
                  0x80 | ((n >> 7) & 0x7F), n & 0x7F])
    return bytes([tag]) + size + body


def rewrite_descriptor(data, config):
    """ES_Descriptor(3) > DecoderConfigDescriptor(4) > DecoderSpecificInfo(5)."""
    out = bytearray()
    pos = 0
    while pos < len(data):
        tag, body, pos = read_descriptor(data, pos)
        if tag == 0x03:
            body = body[:3] + rewrite_descriptor(body[3:], config)
        elif tag == 0x04:
            body = body[:13] + rewrite_descriptor(body[13:], config)
        elif tag == 0x05:
            body = config
        out += descriptor(tag, body)
    return bytes(out)


def box(kind, body):
    return (len(body) + 8).to_bytes(4, "big") + kind + body


def main():
    with tempfile.TemporaryDirectory() as work:
        work = Path(work)
        plate, accuracy = write_sources(work)
        encode(plate, accuracy, work)
    total = 0
    for path in sorted(HERE.iterdir()):
        if path.suffix not in (".py", ".md"):
            total += path.stat().st_size
            print(f"{path.stat().st_size:8d}  {path.name}")
    print(f"{total:8d}  in all")


if __name__ == "__main__":
    sys.exit(main())
