#!/usr/bin/env python3
"""Times Ambit and music21 on the same Bach chorales, in one run.

For each chorale chosen by tests/reference/music21_chorales.py (the same
files the agreement test compares), this times:
  - Ambit: `ambit parts --json FILE` as a fresh process (parse, unroll,
    tempo map, full tessitura analysis, JSON out; process start included),
    best of --repeats runs;
  - music21: converter.parse(FILE, forceSource=True) plus the same per-part
    range and pitch -> quarter-length histogram the agreement test uses,
    in this process (no interpreter start counted), one run.
forceSource=True makes music21 read the MusicXML instead of a pickle it
cached on an earlier run, so both sides parse the same bytes.

Prints one line per file and a summary (median and minimum per-file ratio,
totals) as Markdown, ready for docs/PERFORMANCE.md.

Usage (from the project root, after `cargo build --release`):
  /root/.cache/ambit/venv/bin/python scripts/compare_music21_speed.py \
      [--count 60] [--repeats 3] [--ambit target/release/ambit]
"""

import argparse
import os
import statistics
import subprocess
import sys
import time

ROOT = os.path.dirname(os.path.dirname(os.path.abspath(__file__)))
sys.path.insert(0, os.path.join(ROOT, "tests", "reference"))

import music21  # noqa: E402
from music21 import converter  # noqa: E402

from music21_chorales import chorale_paths, part_summary  # noqa: E402


def time_ambit(ambit, path, repeats):
    best = float("inf")
    for _ in range(repeats):
        start = time.perf_counter()
        subprocess.run([ambit, "parts", "--json", path], check=True, stdout=subprocess.DEVNULL)
        best = min(best, time.perf_counter() - start)
    return best


def time_music21(path):
    start = time.perf_counter()
    score = converter.parse(path, forceSource=True)
    for part in score.parts:
        part_summary(part)
    return time.perf_counter() - start


def main():
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--count", type=int, default=60)
    parser.add_argument("--repeats", type=int, default=3)
    parser.add_argument("--ambit", default=os.path.join(ROOT, "target", "release", "ambit"))
    arguments = parser.parse_args()

    paths = chorale_paths(arguments.count)
    rows = []
    for path in paths:
        ambit_seconds = time_ambit(arguments.ambit, path, arguments.repeats)
        music21_seconds = time_music21(path)
        rows.append((os.path.basename(path), ambit_seconds, music21_seconds))

    print(f"music21 {music21.__version__}, {len(rows)} chorales, Ambit best of {arguments.repeats}\n")
    print("| file | ambit ms | music21 ms | ratio |")
    print("|---|---:|---:|---:|")
    for name, ours, theirs in rows:
        print(f"| {name} | {ours * 1000:.2f} | {theirs * 1000:.1f} | {theirs / ours:.0f}× |")
    ratios = [theirs / ours for _, ours, theirs in rows]
    total_ours = sum(ours for _, ours, _ in rows)
    total_theirs = sum(theirs for _, _, theirs in rows)
    print()
    print(f"- median per-file ratio: {statistics.median(ratios):.0f}×")
    print(f"- lowest per-file ratio: {min(ratios):.0f}×")
    print(f"- total: Ambit {total_ours:.3f} s, music21 {total_theirs:.2f} s "
          f"({total_theirs / total_ours:.0f}×)")
    print(f"- median per file: Ambit {statistics.median(r[1] for r in rows) * 1000:.2f} ms, "
          f"music21 {statistics.median(r[2] for r in rows) * 1000:.1f} ms")


if __name__ == "__main__":
    main()
