#!/usr/bin/env python3
"""The input and the checks of benches/rf64_output.sh (demo content of our own).

  python3 benches/rf64_check.py make IN.wav SECONDS    write the 48 kHz input
  python3 benches/rf64_check.py check OUT.wav SECONDS  check the 192 kHz float output

The input: 48 kHz stereo 24-bit, 997 Hz left and 3001 Hz right at -12 dBFS, no noise, with a
'bext' chunk (EBU Tech 3285: TimeReference, u32 low at 338 and high at 342, of 01:00:00 =
172800000 samples at 48 kHz) and a 'cue ' chunk (RIFF MCI specification) with one point at
frame 4800, both before the audio, written in pieces so memory stays small.

The checks of the output (read by seeking; the file is never loaded whole):
- RF64 (EBU Tech 3306, from memory): 'RF64', RIFF size 0xFFFFFFFF, 'WAVE', then 'ds64' with
  riffSize = file size - 8, dataSize = the data chunk's true size, sampleCount = frames; the
  data chunk's 32-bit size is 0xFFFFFFFF; frames = ceil(n x 4) for a 1:4 conversion.
- 'bext' TimeReference = 691200000 (01:00:00 at 192 kHz); 'cue ' point at 19200 (4800 x 4).
- Spot samples, past the 4 GiB mark too: a tone through a linear-phase low-pass whose
  passband holds it, with the delay compensated, is the same tone at the new rate: sample m
  of the left channel is 10^(-12/20) sin(2 pi 997 m / 192000) (and 3001 Hz right), to within
  the 24-bit input's quantization and the passband ripple (tolerance 1e-6).
- scipy.io.wavfile.read(..., mmap=True) reads it, with the same rate, shape and samples.
"""
import math
import os
import struct
import sys

import numpy as np

RATE_IN, RATE_OUT, AMP = 48000, 192000, 10 ** (-12 / 20)
FREQS = (997.0, 3001.0)


def make(path, seconds):
    frames = int(seconds * RATE_IN)
    align = 6
    bext = b"rerate demo: generated tones for the RF64 benchmark".ljust(256, b"\0")
    bext += b"rerate demo".ljust(32, b"\0") + b"\0" * 32 + b"2026:12:02" + b"15:00:00"
    bext += struct.pack("<IIH", 172800000, 0, 2) + b"\0" * (64 + 10 + 180)
    bext += b"A=PCM,F=48000,W=24,M=stereo,T=demo generator\r\n"
    cue = struct.pack("<III4sIII", 1, 1, 4800, b"data", 0, 0, 4800)
    fmt = struct.pack("<HHIIHH", 1, 2, RATE_IN, RATE_IN * align, align, 24)
    chunks = b"fmt " + struct.pack("<I", 16) + fmt
    for cid, body in ((b"bext", bext), (b"cue ", cue)):
        chunks += cid + struct.pack("<I", len(body)) + body + b"\0" * (len(body) % 2)
    data_len = frames * align
    if 4 + len(chunks) + 8 + data_len > 0xFFFFFFFF:
        sys.exit("too long for a RIFF input")
    with open(path, "wb") as f:
        f.write(b"RIFF" + struct.pack("<I", 4 + len(chunks) + 8 + data_len) + b"WAVE")
        f.write(chunks + b"data" + struct.pack("<I", data_len))
        step = 1 << 20
        for start in range(0, frames, step):
            n = min(step, frames - start)
            t = (start + np.arange(n)) / RATE_IN
            x = np.empty(2 * n)
            x[0::2] = AMP * np.sin(2 * np.pi * FREQS[0] * t)
            x[1::2] = AMP * np.sin(2 * np.pi * FREQS[1] * t)
            codes = np.clip(np.round(x * 2 ** 23), -(2 ** 23), 2 ** 23 - 1).astype("<i4")
            f.write(codes.view(np.uint8).reshape(-1, 4)[:, :3].tobytes())
    print("wrote %s: %d frames, %d bytes" % (path, frames, os.path.getsize(path)))


def check(path, seconds):
    errors = []
    size = os.path.getsize(path)
    with open(path, "rb") as f:
        head = f.read(1 << 16)
        if head[:4] != b"RF64" or struct.unpack_from("<I", head, 4)[0] != 0xFFFFFFFF or head[8:12] != b"WAVE":
            errors.append("not RF64 with RIFF size 0xFFFFFFFF: %r" % head[:12])
        if head[12:16] != b"ds64":
            errors.append("first chunk %r, not 'ds64'" % head[12:16])
        riff_size, data_size, sample_count = struct.unpack_from("<QQQ", head, 20)
        frames_in = int(seconds * RATE_IN)
        frames = frames_in * (RATE_OUT // RATE_IN)
        if riff_size != size - 8:
            errors.append("ds64 riffSize %d, file size - 8 = %d" % (riff_size, size - 8))
        if sample_count != frames or data_size != frames * 8:
            errors.append("ds64 dataSize %d sampleCount %d, expected %d frames" % (data_size, sample_count, frames))
        pos, found = 12, {}
        while pos + 8 <= len(head):
            cid = head[pos:pos + 4]
            (n,) = struct.unpack_from("<I", head, pos + 4)
            found[cid] = (pos + 8, n)
            if cid == b"data":
                break
            pos += 8 + n + n % 2
        if b"data" not in found or found[b"data"][1] != 0xFFFFFFFF:
            errors.append("data chunk's 32-bit size is not 0xFFFFFFFF: %r" % (found.get(b"data"),))
        data_at = found.get(b"data", (0, 0))[0]
        if b"bext" in found:
            b = found[b"bext"][0]
            tr = struct.unpack_from("<I", head, b + 338)[0] | struct.unpack_from("<I", head, b + 342)[0] << 32
            if tr != 691200000:
                errors.append("bext TimeReference %d, expected 691200000" % tr)
        else:
            errors.append("no bext chunk")
        if b"cue " in found:
            c = found[b"cue "][0]
            if struct.unpack_from("<I", head, c + 8)[0] != 19200:
                errors.append("cue position %d, expected 19200" % struct.unpack_from("<I", head, c + 8)[0])
        else:
            errors.append("no cue chunk")
        # Spot samples: the first second, the middle, just past 4 GiB, the end.
        past_4g = (2 ** 32 - data_at) // 8 + 1
        worst = 0.0
        spots = [m for m in (1000, frames // 2, past_4g, frames - 2000) if 0 <= m <= frames - 1000]
        if past_4g not in spots:
            errors.append("the output does not pass 4 GiB")
            past_4g = frames // 2
        for m0 in spots:
            f.seek(data_at + 8 * m0)
            y = np.frombuffer(f.read(8 * 1000), dtype="<f4").reshape(-1, 2)
            m = m0 + np.arange(y.shape[0])
            for c in range(2):
                want = AMP * np.sin(2 * np.pi * FREQS[c] * m / RATE_OUT)
                worst = max(worst, float(np.max(np.abs(y[:, c] - want))))
        print("spot samples: worst difference from the exact tones %.3g (tolerance 1e-6)" % worst)
        if not worst < 1e-6:
            errors.append("spot samples differ by %.3g" % worst)
    try:
        from scipy.io import wavfile
        import warnings
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")  # it names the 'bext' and 'cue ' chunks it skips
            rate, x = wavfile.read(path, mmap=True)
        ok = rate == RATE_OUT and x.shape == (frames, 2)
        with open(path, "rb") as f:
            f.seek(data_at + 8 * past_4g)
            same = np.frombuffer(f.read(8), "<f4").tolist() == [float(v) for v in x[past_4g]]
        print("scipy.io.wavfile.read (mmap): rate %d, shape %s, sample past 4 GiB the same: %s"
              % (rate, x.shape, same))
        if not (ok and same):
            errors.append("scipy.io.wavfile.read disagrees")
    except Exception as e:  # reported, not hidden
        errors.append("scipy.io.wavfile.read refuses it: %s: %s" % (type(e).__name__, e))
    for e in errors:
        print("FAIL:", e)
    print("RF64 output %s: %d bytes, %d frames: %s" % (path, size, frames, "ok" if not errors else "NOT OK"))
    return 1 if errors else 0


if __name__ == "__main__":
    if len(sys.argv) != 4 or sys.argv[1] not in ("make", "check"):
        sys.stderr.write(__doc__)
        sys.exit(2)
    if sys.argv[1] == "make":
        make(sys.argv[2], float(sys.argv[3]))
    else:
        sys.exit(check(sys.argv[2], float(sys.argv[3])))
