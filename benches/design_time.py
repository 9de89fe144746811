#!/usr/bin/env python3
"""Whole `rerate design` commands timed side by side: each given build runs the same design
in turn (A, B, A, B, ...) and the median and fastest wall time of each are printed, process
start included (what a user waits for). Alternating runs in the same minutes make the ratio
between builds the figure to quote; absolute times drift on a shared machine.

Usage: python3 benches/design_time.py BIN [BIN ...] [--runs 40] [--in-rate 44100]
       [--out-rate 48000] [--stopband-db 140]
"""
import argparse
import statistics
import subprocess
import time


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("bins", nargs="+", help="rerate binaries to compare")
    ap.add_argument("--runs", type=int, default=40)
    ap.add_argument("--in-rate", default="44100")
    ap.add_argument("--out-rate", default="48000")
    ap.add_argument("--stopband-db", default="140")
    args = ap.parse_args()
    cmd = ["design", "--in-rate", args.in_rate, "--out-rate", args.out_rate,
           "--stopband-db", args.stopband_db]
    times = {b: [] for b in args.bins}
    for _ in range(args.runs):
        for b in args.bins:
            t = time.perf_counter()
            subprocess.run([b] + cmd, stdout=subprocess.DEVNULL, check=True)
            times[b].append(time.perf_counter() - t)
    for b in args.bins:
        print(f"{b}: median {statistics.median(times[b]) * 1e3:.2f} ms, "
              f"fastest {min(times[b]) * 1e3:.2f} ms ({args.runs} runs)")


if __name__ == "__main__":
    main()
