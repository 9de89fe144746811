#!/usr/bin/env python3
"""Inputs for the byte-identity check of a restructure (tests/identity/check.sh): a fixed,
deterministic set of WAV files of several formats, rates and channel counts, written with
struct and numpy (seeded noise plus tones). Test data, not product data.

Layout by the RIFF/WAVE format (IBM/Microsoft, "Multimedia Programming Interface and Data
Specifications 1.0", 1991) and WAVE_FORMAT_EXTENSIBLE (Microsoft, "Multiple channel audio
data and WAVE files"). Run: python3 tests/identity/make_inputs.py OUTDIR
"""
import os
import struct
import sys

import numpy as np

PCM, FLOAT, EXTENSIBLE = 0x0001, 0x0003, 0xFFFE
GUID_TAIL = b"\x00\x00\x00\x00\x10\x00\x80\x00\x00\xaa\x00\x38\x9b\x71"

# name, rate, channels, encoding ("i16", "i24", "i32", "f32", "u8"), frames
CASES = [
    ("a_44k1_i16_2ch", 44100, 2, "i16", 44100),
    ("b_48k_i24_1ch", 48000, 1, "i24", 30001),
    ("c_96k_i24_6ch", 96000, 6, "i24", 20000),
    ("d_48k_f32_2ch", 48000, 2, "f32", 24000),
    ("e_32k_i32_3ch", 32000, 3, "i32", 9999),
    ("f_22k05_u8_1ch", 22050, 1, "u8", 5000),
]


def chunk(tag, body):
    pad = b"\x00" if len(body) % 2 else b""
    return tag + struct.pack("<I", len(body)) + body + pad


def fmt(tag, ch, rate, bits):
    align = ch * bits // 8
    base = struct.pack("<HHIIHH", EXTENSIBLE if (ch > 2 or bits > 16) and tag == PCM else tag, ch, rate, rate * align, align, bits)
    if (ch > 2 or bits > 16) and tag == PCM:
        mask = (1 << ch) - 1
        base += struct.pack("<HHI", 22, bits, mask) + struct.pack("<H", tag) + GUID_TAIL
    return base


def signal(frames, ch, rate, seed):
    rng = np.random.default_rng(seed)
    t = np.arange(frames)[:, None] / rate
    f = 440.0 * (1 + np.arange(ch))[None, :]
    x = 0.4 * np.sin(2 * np.pi * f * t) + 0.2 * np.sin(2 * np.pi * 0.37 * rate * t) + 0.1 * rng.standard_normal((frames, ch))
    return np.clip(x, -0.99, 0.99)


def encode(x, enc):
    if enc == "f32":
        return x.astype("<f4").tobytes()
    if enc == "u8":
        return (np.round(x * 127) + 128).astype(np.uint8).tobytes()
    bits = int(enc[1:])
    c = np.round(x * (2 ** (bits - 1) - 1)).astype("<i4")
    if bits == 16:
        return c.astype("<i2").tobytes()
    if bits == 24:
        return c.view(np.uint8).reshape(-1, 4)[:, :3].tobytes()
    return c.tobytes()


def main():
    out = sys.argv[1]
    os.makedirs(out, exist_ok=True)
    for i, (name, rate, ch, enc, frames) in enumerate(CASES):
        x = signal(frames, ch, rate, i)
        tag = FLOAT if enc == "f32" else PCM
        bits = 32 if enc == "f32" else (8 if enc == "u8" else int(enc[1:]))
        body = b"WAVE" + chunk(b"fmt ", fmt(tag, ch, rate, bits)) + chunk(b"data", encode(x.reshape(-1), enc))
        with open(os.path.join(out, name + ".wav"), "wb") as f:
            f.write(b"RIFF" + struct.pack("<I", len(body)) + body)


if __name__ == "__main__":
    main()
