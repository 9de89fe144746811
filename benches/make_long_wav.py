#!/usr/bin/env python3
"""Write a long 24-bit PCM WAV (default: 1 hour, 96 kHz, stereo; about 2.07 GB) for the
memory benchmark, in chunks so the generator itself stays small. Demo-style content of our
own: a slow two-tone pattern plus low-level noise at about -12 dBFS.

Usage: python3 benches/make_long_wav.py OUT.wav [SECONDS] [RATE]
numpy (fixtures/requirements.txt) is the only dependency.
"""
import struct
import sys

import numpy as np


def main():
    out = sys.argv[1]
    seconds = float(sys.argv[2]) if len(sys.argv) > 2 else 3600.0
    rate = int(sys.argv[3]) if len(sys.argv) > 3 else 96_000
    channels, bits = 2, 24
    frames = int(seconds * rate)
    data_len = frames * channels * 3
    if data_len + 36 > 0xFFFFFFFF:
        sys.exit("too long for a RIFF WAV")
    align = channels * 3
    header = b"RIFF" + struct.pack("<I", 36 + data_len) + b"WAVE"
    header += b"fmt " + struct.pack("<IHHIIHH", 16, 1, channels, rate, rate * align, align, bits)
    header += b"data" + struct.pack("<I", data_len)
    rng = np.random.default_rng(2024)
    chunk = 1 << 20
    with open(out, "wb") as f:
        f.write(header)
        for start in range(0, frames, chunk):
            n = min(chunk, frames - start)
            t = (start + np.arange(n)) / rate
            left = 0.15 * np.sin(2 * np.pi * 997.0 * t) + 0.05 * rng.standard_normal(n)
            right = 0.15 * np.sin(2 * np.pi * 3001.0 * t) + 0.05 * rng.standard_normal(n)
            x = np.empty(2 * n)
            x[0::2], x[1::2] = left, right
            codes = np.clip(np.round(x * 8388608.0), -8388608, 8388607).astype("<i4")
            f.write(codes.view(np.uint8).reshape(-1, 4)[:, :3].tobytes())
    print(f"wrote {out}: {frames} frames, {rate} Hz, {channels} ch, 24-bit, {data_len + 44} bytes")


if __name__ == "__main__":
    main()
