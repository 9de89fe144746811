#!/usr/bin/env python3
"""Side by side: `rerate convert` (file to file) against scipy.signal.resample_poly (in memory)
with the same taps, on the same 60 s stereo signal.

The signal is demo material made here (a few tones, a slow sweep and some noise, all at
-12 dBFS or below); it is written as a 32-bit float WAV. For each case the filter that
`rerate` uses is exported with `rerate design --export`, and scipy gets exactly those taps
(`window=h`), so both run the same filter length. Runs alternate (rerate, scipy, rerate,
...) and the median of each is compared, in wall time and in CPU time (user + system; on a
machine shared with other work the CPU-time ratio is the steadier one). rerate's time
includes process start, designing the filter, reading and writing the WAV files and every
thread it uses; scipy's only the computation.

With `--files N`, each run converts N copies of the signal: rerate in one `convert` call
with all N files (a batch, which designs the filter once), scipy N calls; the ratio is then
that of a batch, as when converting a corpus.

Beside each ratio the floor is printed: the wall time of copying the same input files to
fresh files (`shutil.copyfile`), which no file-to-file converter can beat.

Before each timed rerate run the script calls `os.sync()` (not timed), so the run does not
share the disk with the write-back of files the script itself wrote just before (the
inputs, the floor's copies): rerate makes its outputs durable (fsync) and would otherwise
wait for them too.

With `--baseline BIN`, each round also runs the same command with another rerate build
(the two taking turns going first), and its medians are printed beside: a before/after
comparison in the same minutes.

Usage: python3 benches/compare_scipy.py [--rerate target/release/rerate] [--rounds 5]
       [--seconds 60] [--files 1] [--case 44100:48000:100 ...] [--baseline BIN] [--json]
Versions are pinned (fixtures/requirements.txt): numpy 2.4.6, scipy 1.17.1.
"""

import argparse
import json
import os
import resource
import shutil
import statistics
import subprocess
import sys
import tempfile
import time

import numpy as np
import scipy
import scipy.io.wavfile
import scipy.signal

PINNED = {"numpy": "2.4.6", "scipy": "1.17.1"}
SECONDS = 60
CASES = [
    (44100, 48000, 100.0),
    (44100, 48000, 140.0),
    (48000, 44100, 140.0),
    (44100, 16000, 100.0),
]


def demo_signal(rate: int, seconds: int = SECONDS) -> np.ndarray:
    """Demo: `seconds` (60) s stereo, tones + slow sweep + noise, peak about -6 dBFS."""
    n = seconds * rate
    t = np.arange(n) / rate
    rng = np.random.default_rng(2026)
    left = 0.25 * np.sin(2 * np.pi * 440.0 * t) + 0.1 * np.sin(2 * np.pi * 5000.0 * t)
    sweep_phase = 2 * np.pi * 20.0 * seconds / np.log(1000.0) * (np.exp(t / seconds * np.log(1000.0)) - 1)
    right = 0.25 * np.sin(sweep_phase) + 0.05 * rng.standard_normal(n)
    return np.stack([left, right], axis=1).astype(np.float32)


def child_cpu():
    r = resource.getrusage(resource.RUSAGE_CHILDREN)
    return r.ru_utime + r.ru_stime


def run(cmd):
    r = subprocess.run(cmd, capture_output=True, text=True)
    if r.returncode != 0:
        sys.exit(f"failed: {' '.join(cmd)}\n{r.stderr}")
    return r.stdout


def main():
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--rerate", default=os.path.join("target", "release", "rerate"))
    ap.add_argument("--rounds", type=int, default=5)
    ap.add_argument("--any-version", action="store_true", help="run with other numpy/scipy versions")
    ap.add_argument("--json", action="store_true", help="print the results as JSON")
    ap.add_argument("--seconds", type=int, default=SECONDS,
                    help="length of the demo signal (60 by default, as the target is stated)")
    ap.add_argument("--files", type=int, default=1,
                    help="files per run: rerate converts them in one call, scipy one by one")
    ap.add_argument("--baseline", metavar="BIN",
                    help="another rerate build, run with the same command right after each "
                         "timed rerate run (same rounds, same fresh-output rule): its medians are "
                         "printed beside, for before/after comparisons in the same minutes")
    ap.add_argument("--case", action="append", metavar="IN:OUT:DB",
                    help="run only this case (rates in Hz, stopband in dB), e.g. 44100:48000:100; "
                         "may be given more than once (default: the four cases)")
    args = ap.parse_args()
    if args.files < 1:
        sys.exit("--files must be at least 1")
    cases = CASES
    if args.case:
        try:
            cases = [(int(a), int(b), float(c)) for a, b, c in (x.split(":") for x in args.case)]
        except ValueError:
            sys.exit("--case takes IN:OUT:DB, e.g. 44100:48000:100")

    versions = {"numpy": np.__version__, "scipy": scipy.__version__}
    if versions != PINNED and not args.any_version:
        sys.exit(f"versions {versions} differ from the pinned {PINNED} (or pass --any-version)")
    rerate = os.path.abspath(args.rerate)
    results = []
    with tempfile.TemporaryDirectory() as tmp:
        for in_rate, out_rate, db in cases:
            x = demo_signal(in_rate, args.seconds)
            srcs = [os.path.join(tmp, f"demo_{in_rate}_{i}.wav") for i in range(args.files)]
            for src in srcs:
                scipy.io.wavfile.write(src, in_rate, x)
            taps_file = os.path.join(tmp, "taps.txt")
            design = json.loads(run([rerate, "design", "--in-rate", str(in_rate), "--out-rate",
                                     str(out_rate), "--stopband-db", str(db), "--export", taps_file,
                                     "--force", "--json"]))
            h = np.loadtxt(taps_file)
            up, down = design["up"], design["down"]
            # One file: to a file; several: into a folder (the outputs keep the inputs' names).
            dst = os.path.join(tmp, "out.wav" if args.files == 1 else "out")
            first_out = dst if args.files == 1 else os.path.join(dst, os.path.basename(srcs[0]))
            cmd = [rerate, "convert", *srcs, "--out-rate", str(out_rate), "-o", dst, "--float",
                   "--stopband-db", str(db), "--force"]
            ours, theirs, ours_cpu, theirs_cpu, floor = [], [], [], [], []
            base, base_cpu = [], []
            y_ref = None

            def timed(command):
                """Wall and CPU time of one rerate run, to a fresh output path."""
                # A fresh output path each run, as when converting a file for the first time
                # (replacing an existing file adds the time to free the old one's space).
                if os.path.isdir(dst):
                    shutil.rmtree(dst)
                elif os.path.exists(dst):
                    os.remove(dst)
                # Outside the timing: the disk writes back what is still pending (the
                # inputs just written, the previous round's copies), so that a timed run
                # does not wait behind another file's write-back when it makes its output
                # durable (an fsync waits for the disk).
                os.sync()
                t0, c0 = time.perf_counter(), child_cpu()
                run(command)
                return time.perf_counter() - t0, child_cpu() - c0

            runs = [(cmd, ours, ours_cpu)]
            if args.baseline:
                runs.append(([os.path.abspath(args.baseline), *cmd[1:]], base, base_cpu))
            for k in range(args.rounds):
                # With a baseline, the two builds take turns going first (the baseline first
                # in the last round, so that the output checked below is the one timed).
                first_last = (args.rounds - 1 - k) % 2 == 0
                for command, walls, cpus in (runs[::-1] if first_last else runs):
                    w, c = timed(command)
                    walls.append(w)
                    cpus.append(c)
                # The floor: the same bytes copied file to file, to fresh names.
                copies = [os.path.join(tmp, f"copy_{i}.wav") for i in range(args.files)]
                for c in copies:
                    if os.path.exists(c):
                        os.remove(c)
                t0 = time.perf_counter()
                for src, c in zip(srcs, copies):
                    shutil.copyfile(src, c)
                floor.append(time.perf_counter() - t0)
                x_mem = x.astype(np.float64)
                t0, c0 = time.perf_counter(), time.process_time()
                for _ in range(args.files):
                    y_ref = scipy.signal.resample_poly(x_mem, up, down, axis=0, window=h)
                theirs.append(time.perf_counter() - t0)
                theirs_cpu.append(time.process_time() - c0)
            _, y = scipy.io.wavfile.read(first_out)
            diff = float(np.max(np.abs(y.astype(np.float64) - y_ref))) if y.shape == y_ref.shape else float("nan")
            row = {
                "in_rate": in_rate, "out_rate": out_rate, "stopband_db": db,
                "taps": len(h), "taps_per_phase": design["taps_per_phase"],
                "rerate_s": statistics.median(ours), "scipy_s": statistics.median(theirs),
                "rerate_cpu_s": statistics.median(ours_cpu), "scipy_cpu_s": statistics.median(theirs_cpu),
                "max_abs_difference": diff,
                "copy_floor_s": statistics.median(floor),
            }
            row["ratio"] = row["scipy_s"] / row["rerate_s"]
            row["cpu_ratio"] = row["scipy_cpu_s"] / row["rerate_cpu_s"]
            if base:
                row["baseline_s"] = statistics.median(base)
                row["baseline_cpu_s"] = statistics.median(base_cpu)
                row["baseline_ratio"] = row["scipy_s"] / row["baseline_s"]
            results.append(row)
            if not args.json:
                print(f"{in_rate}->{out_rate} {db:.0f} dB, {len(h)} taps ({design['taps_per_phase']}/phase): "
                      f"rerate {row['rerate_s']:.3f} s (file to file), scipy {row['scipy_s']:.3f} s "
                      f"(in memory): {row['ratio']:.1f}x faster in wall time; CPU time rerate "
                      f"{row['rerate_cpu_s']:.3f} s, scipy {row['scipy_cpu_s']:.3f} s: {row['cpu_ratio']:.1f}x; "
                      f"max |difference| {diff:.2e}; floor (copying the input file to file) "
                      f"{row['copy_floor_s']:.3f} s",
                      flush=True)
                if base:
                    print(f"  baseline {args.baseline}: {row['baseline_s']:.3f} s, "
                          f"{row['baseline_ratio']:.1f}x; CPU time {row['baseline_cpu_s']:.3f} s",
                          flush=True)
    if args.json:
        print(json.dumps({"versions": versions, "rounds": args.rounds, "seconds": args.seconds,
                          "files": args.files, "channels": 2, "results": results}, indent=1))
    else:
        files = f" x {args.files} files per run" if args.files > 1 else ""
        print(f"numpy {versions['numpy']}, scipy {versions['scipy']}; {args.seconds} s stereo"
              f"{files}; median of {args.rounds} alternating runs")


if __name__ == "__main__":
    main()
