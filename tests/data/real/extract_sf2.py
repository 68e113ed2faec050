#!/usr/bin/env python3
"""Extracts the real-strike corpus used by tests/real_corpus.rs from the
FluidR3 General MIDI sound font (Debian package fluid-soundfont-gm, MIT).

    python3 tests/data/real/extract_sf2.py [SF2_FILE] [OUT_DIR]

Defaults: /usr/share/sounds/sf2/FluidR3_GM.sf2 and the folder of this script.
Python 3 standard library only. It reads the RIFF chunks of the font (the
`pdta` list: phdr, pbag, pgen, inst, ibag, igen, shdr; and the `smpl` data),
follows each chosen preset through its instruments to the samples they play,
and writes every sample as a mono 16-bit WAV at its own sample rate (the
left and right halves of a stereo pair as two files), trimmed to where its
envelope has fallen 60 dB below its peak or to 1.5 s, whichever is sooner.
It also writes manifest.csv: one line per file with the preset, the sample's
name, channel, rate, its MIDI root key and pitch correction (shdr, or the
instrument's overriding root key), and the note the test expects.
"""

import csv
import math
import os
import struct
import sys
import wave

# General MIDI: program numbers (0-based) of bank 0, and percussion keys of
# the drum kit (bank 128, program 0).
MELODIC = [("marimba", 12), ("xylophone", 13)]
DRUM_KEYS = {
    76: "wood_block_hi",
    77: "wood_block_low",
    75: "claves",
    67: "agogo_hi",
    68: "agogo_low",
    65: "timbale_hi",
    66: "timbale_low",
}
MAX_SECONDS = 1.5
FALL_DB = 60.0
ENVELOPE_MS = 10.0

# Generator operators (SoundFont 2.04 specification, section 8.1.2).
GEN_KEY_RANGE = 43
GEN_INSTRUMENT = 41
GEN_SAMPLE_ID = 53
GEN_OVERRIDING_ROOT_KEY = 58
GEN_COARSE_TUNE = 51
GEN_FINE_TUNE = 52


def chunks(buf, offset, end):
    while offset + 8 <= end:
        chunk_id = buf[offset:offset + 4]
        (size,) = struct.unpack_from("<I", buf, offset + 4)
        yield chunk_id, offset + 8, size
        offset += 8 + size + (size & 1)


def read_font(path):
    with open(path, "rb") as f:
        data = f.read()
    if data[:4] != b"RIFF" or data[8:12] != b"sfbk":
        sys.exit(f"{path} is not a SoundFont 2 file")
    pdta, smpl = {}, None
    for chunk_id, offset, size in chunks(data, 12, len(data)):
        if chunk_id != b"LIST":
            continue
        kind = data[offset:offset + 4]
        for inner_id, inner_offset, inner_size in chunks(data, offset + 4, offset + size):
            if kind == b"pdta":
                pdta[inner_id.decode()] = data[inner_offset:inner_offset + inner_size]
            elif kind == b"sdta" and inner_id == b"smpl":
                smpl = memoryview(data)[inner_offset:inner_offset + inner_size]
    return pdta, smpl


def records(blob, fmt):
    size = struct.calcsize(fmt)
    return [struct.unpack_from(fmt, blob, i) for i in range(0, len(blob) - size + 1, size)]


def name_of(raw):
    return raw.split(b"\0", 1)[0].decode("latin-1").strip()


def zones(bags, gens, first_bag, end_bag):
    """Generators of each zone: a list of {operator: raw 2-byte amount}."""
    out = []
    for b in range(first_bag, end_bag):
        gen_start, gen_end = bags[b][0], bags[b + 1][0]
        zone = {}
        for g in range(gen_start, gen_end):
            op, amount = gens[g]
            zone[op] = amount
        out.append(zone)
    return out


def key_range(zone):
    raw = zone.get(GEN_KEY_RANGE)
    if raw is None:
        return (0, 127)
    return (raw & 0xFF, raw >> 8)


def signed(raw):
    return raw - 0x10000 if raw >= 0x8000 else raw


class Font:
    def __init__(self, path):
        pdta, self.smpl = read_font(path)
        self.phdr = records(pdta["phdr"], "<20sHHHIII")
        self.pbag = records(pdta["pbag"], "<HH")
        self.pgen = records(pdta["pgen"], "<HH")
        self.inst = records(pdta["inst"], "<20sH")
        self.ibag = records(pdta["ibag"], "<HH")
        self.igen = records(pdta["igen"], "<HH")
        self.shdr = records(pdta["shdr"], "<20sIIIIIBbHH")

    def preset(self, bank, program):
        for i, p in enumerate(self.phdr[:-1]):
            if p[1] == program and p[2] == bank:
                return i
        sys.exit(f"no preset bank {bank} program {program} in the font")

    def samples_for(self, preset_index, keys=None):
        """(sample index, root key, instrument name, preset key range) of every
        sample the preset plays for any of `keys` (all keys if None)."""
        p, nxt = self.phdr[preset_index], self.phdr[preset_index + 1]
        found = []
        for pzone in zones(self.pbag, self.pgen, p[3], nxt[3]):
            if GEN_INSTRUMENT not in pzone:
                continue
            plo, phi = key_range(pzone)
            inst_index = pzone[GEN_INSTRUMENT]
            inst, inst_next = self.inst[inst_index], self.inst[inst_index + 1]
            global_zone = {}
            for izone in zones(self.ibag, self.igen, inst[1], inst_next[1]):
                if GEN_SAMPLE_ID not in izone:
                    global_zone = izone
                    continue
                merged = dict(global_zone)
                merged.update(izone)
                ilo, ihi = key_range(merged)
                lo, hi = max(plo, ilo), min(phi, ihi)
                if lo > hi:
                    continue
                if keys is not None and not any(lo <= k <= hi for k in keys):
                    continue
                sample = merged[GEN_SAMPLE_ID]
                root = merged.get(GEN_OVERRIDING_ROOT_KEY)
                if root is not None and root > 127:
                    root = None
                tune_cents = 100 * signed(merged.get(GEN_COARSE_TUNE, 0)) + signed(
                    merged.get(GEN_FINE_TUNE, 0)
                )
                found.append((sample, root, name_of(inst[0]), (lo, hi), tune_cents))
        return found

    def pcm(self, sample_index):
        s = self.shdr[sample_index]
        start, end = s[1], s[2]
        raw = self.smpl[2 * start:2 * end]
        return list(struct.unpack(f"<{end - start}h", raw))


def trimmed(samples, rate):
    """Cut where the 10 ms RMS envelope has fallen FALL_DB under its peak
    (after the peak), or at MAX_SECONDS; a 5 ms half-cosine fade-out when
    the cut is inside the sound."""
    block = max(1, int(rate * ENVELOPE_MS / 1000))
    levels = []
    for i in range(0, len(samples), block):
        seg = samples[i:i + block]
        levels.append(math.sqrt(sum(x * x for x in seg) / len(seg)) if seg else 0.0)
    peak_block = max(range(len(levels)), key=lambda i: levels[i])
    limit = levels[peak_block] * 10 ** (-FALL_DB / 20)
    end = len(samples)
    for i in range(peak_block, len(levels)):
        if levels[i] < limit:
            end = min(end, (i + 1) * block)
            break
    end = min(end, int(MAX_SECONDS * rate))
    out = samples[:end]
    if end < len(samples):
        fade = max(1, int(0.005 * rate))
        for j in range(min(fade, len(out))):
            gain = 0.5 * (1 + math.cos(math.pi * (j + 1) / fade))
            out[len(out) - fade + j] = int(round(out[len(out) - fade + j] * gain))
    return out


CHANNELS = {1: "mono", 2: "R", 4: "L"}
NOTE_NAMES = ["C", "Cs", "D", "Ds", "E", "F", "Fs", "G", "Gs", "A", "As", "B"]


def note_name(midi):
    """Scientific pitch name of a MIDI key (60 = C4, 69 = A4 = 440 Hz)."""
    return f"{NOTE_NAMES[midi % 12]}{midi // 12 - 1}"


def write_wav(path, samples, rate):
    with wave.open(path, "wb") as w:
        w.setnchannels(1)
        w.setsampwidth(2)
        w.setframerate(rate)
        w.writeframes(struct.pack(f"<{len(samples)}h", *samples))


def main():
    sf2 = sys.argv[1] if len(sys.argv) > 1 else "/usr/share/sounds/sf2/FluidR3_GM.sf2"
    out_dir = sys.argv[2] if len(sys.argv) > 2 else os.path.dirname(os.path.abspath(__file__))
    font = Font(sf2)
    wanted = []  # (group, kind, preset found list)
    for group, program in MELODIC:
        for entry in font.samples_for(font.preset(0, program)):
            wanted.append((group, "pitched", entry))
    drums = font.preset(128, 0)
    for key, group in sorted(DRUM_KEYS.items()):
        for entry in font.samples_for(drums, [key]):
            wanted.append((group, "drum", entry))
    rows, seen = [], set()
    for group, kind, (sample, root_override, instrument, keys, tune_cents) in wanted:
        if (group, sample) in seen:
            continue
        seen.add((group, sample))
        s = font.shdr[sample]
        name, rate, original_key, correction, sample_type = name_of(s[0]), s[5], s[6], s[7], s[9]
        channel = CHANNELS.get(sample_type & 0x7, "mono")
        root = root_override if root_override is not None else original_key
        pcm = trimmed(font.pcm(sample), rate)
        # Pitched samples are named by the note they sound (scientific
        # pitch of the root key), drums by their sound; then the channel.
        side = {"L": "left", "R": "right"}.get(channel, "mono")
        if kind == "pitched":
            file_name = f"{group}_{note_name(root).lower()}_{side}.wav"
        else:
            file_name = f"{group}_{side}.wav"
        write_wav(os.path.join(out_dir, file_name), pcm, rate)
        rows.append({
            "file": file_name,
            "group": group,
            "kind": kind,
            "instrument": instrument,
            "sample_name": name,
            "channel": channel,
            "sample_rate_hz": rate,
            "shdr_original_key": original_key,
            "zone_root_key": "" if root_override is None else root_override,
            "root_key": root,
            "pitch_correction_cents": correction,
            "zone_tune_cents": tune_cents,
            "zone_keys": f"{keys[0]}-{keys[1]}",
            "root_note": note_name(root),
            "samples": len(pcm),
        })
    rows.sort(key=lambda r: r["file"])
    with open(os.path.join(out_dir, "manifest.csv"), "w", newline="") as f:
        writer = csv.DictWriter(f, fieldnames=list(rows[0].keys()))
        writer.writeheader()
        writer.writerows(rows)
    total = sum(os.path.getsize(os.path.join(out_dir, r["file"])) for r in rows)
    print(f"{len(rows)} files, {total / 1e6:.2f} MB, in {out_dir}")


if __name__ == "__main__":
    main()
