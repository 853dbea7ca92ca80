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

It also times one `ambit parts --json` over all the files, which takes
process start out of the per-file figure. Wall and CPU time (user + system,
from getrusage for the Ambit child process and process_time for music21) are
both reported: on a loaded machine wall time is mostly waiting for a core.

Prints one line per file and a summary as Markdown, ready for
docs/PERFORMANCE.md.

Usage (from the project root, after `cargo build --release`):
  /root/.cache/ambit/venv/bin/python scripts/compare_music21_speed.py \
      [--count 60] [--repeats 3] [--ambit target/release/ambit]
"""

import argparse
import os
import resource
import statistics
import subprocess
import sys
import time

ROOT = os.path.dirname(os.path.dirname(os.path.abspath(__file__)))
sys.path.insert(0, os.path.join(ROOT, "tests", "reference"))

import music21  # noqa: E402
from music21 import converter  # noqa: E402

from music21_chorales import chorale_paths, part_summary  # noqa: E402


def child_cpu_seconds():
    usage = resource.getrusage(resource.RUSAGE_CHILDREN)
    return usage.ru_utime + usage.ru_stime


def time_ambit(ambit, paths, repeats):
    """Best (wall, CPU) seconds of `ambit parts --json PATHS…` over `repeats` runs."""
    best_wall = best_cpu = float("inf")
    for _ in range(repeats):
        cpu_before = child_cpu_seconds()
        start = time.perf_counter()
        subprocess.run([ambit, "parts", "--json", *paths], check=True, stdout=subprocess.DEVNULL)
        best_wall = min(best_wall, time.perf_counter() - start)
        best_cpu = min(best_cpu, child_cpu_seconds() - cpu_before)
    return best_wall, best_cpu


def time_music21(path):
    """(wall, CPU) seconds of parsing one file and summarising its parts."""
    cpu_start = time.process_time()
    start = time.perf_counter()
    score = converter.parse(path, forceSource=True)
    for part in score.parts:
        part_summary(part)
    return time.perf_counter() - start, time.process_time() - cpu_start


def main():
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--count", type=int, default=60)
    parser.add_argument("--repeats", type=int, default=3)
    parser.add_argument("--ambit", default=os.path.join(ROOT, "target", "release", "ambit"))
    arguments = parser.parse_args()

    paths = chorale_paths(arguments.count)
    rows = []
    for path in paths:
        ambit_wall, ambit_cpu = time_ambit(arguments.ambit, [path], arguments.repeats)
        music21_wall, music21_cpu = time_music21(path)
        rows.append((os.path.basename(path), ambit_wall, ambit_cpu, music21_wall, music21_cpu))
    batch_wall, batch_cpu = time_ambit(arguments.ambit, paths, arguments.repeats)

    count = len(rows)
    print(f"music21 {music21.__version__}, {count} chorales, Ambit best of {arguments.repeats}, "
          f"{os.cpu_count()} CPUs, load average {os.getloadavg()[0]:.1f}\n")
    print("| file | Ambit wall ms | Ambit CPU ms | music21 wall ms | music21 CPU ms | wall ratio | CPU ratio |")
    print("|---|---:|---:|---:|---:|---:|---:|")
    for name, ours_wall, ours_cpu, theirs_wall, theirs_cpu in rows:
        cpu_ratio = f"{theirs_cpu / ours_cpu:.0f}×" if ours_cpu > 0 else "n/a"
        print(f"| {name} | {ours_wall * 1000:.1f} | {ours_cpu * 1000:.1f} | {theirs_wall * 1000:.0f} "
              f"| {theirs_cpu * 1000:.0f} | {theirs_wall / ours_wall:.0f}× | {cpu_ratio} |")
    total_theirs_wall = sum(row[3] for row in rows)
    total_theirs_cpu = sum(row[4] for row in rows)
    median = statistics.median
    print()
    print("Fresh `ambit` process per file (process start included):")
    print(f"- median per file: Ambit {median(r[1] for r in rows) * 1000:.1f} ms wall, "
          f"{median(r[2] for r in rows) * 1000:.1f} ms CPU; music21 {median(r[3] for r in rows) * 1000:.0f} ms wall, "
          f"{median(r[4] for r in rows) * 1000:.0f} ms CPU")
    print(f"- median per-file wall ratio: {median(r[3] / r[1] for r in rows):.0f}×")
    print()
    print(f"One `ambit parts --json` over all {count} files:")
    print(f"- Ambit {batch_wall:.3f} s wall, {batch_cpu:.3f} s CPU "
          f"({batch_wall / count * 1000:.2f} ms wall, {batch_cpu / count * 1000:.2f} ms CPU per file)")
    print(f"- music21 {total_theirs_wall:.2f} s wall, {total_theirs_cpu:.2f} s CPU")
    print(f"- ratio per file: {total_theirs_wall / batch_wall:.0f}× wall, "
          + (f"{total_theirs_cpu / batch_cpu:.0f}× CPU" if batch_cpu > 0 else "CPU below timer resolution"))


if __name__ == "__main__":
    main()
