#!/usr/bin/env python3
"""Times `ambit track --json` against librosa.pyin and librosa.yin on the same
60 s recording, in one run, and prints the ratios.

Usage (from the project root, after `cargo build --release`):

    /root/.cache/ambit/venv/bin/python scripts/compare_tracker_speed.py \
        [--seconds 60] [--runs 3] [--ambit target/release/ambit] [--one-core]

The test recording is a sung-like signal written by this script (harmonics
1-12 with a -6 dB/octave tilt, 5.5 Hz vibrato of +-50 cents, a phrase of
notes from 98 Hz to 784 Hz with breath noise between phrases), a 16-bit WAV
at 22 050 Hz (the analysis rate of both ambit and librosa's defaults), so
every tracker decodes the same file and none needs to resample.

All three trackers search 50-2100 Hz at a 10 ms hop (librosa: hop_length 220
at 22 050 Hz, the nearest whole number of samples). Times are wall clock
and CPU (user + system) seconds, each the median of --runs runs (default 3,
librosa.pyin included); on a shared, loaded machine the CPU figures are the
steadier, and the ratios are taken between CPU times. librosa is timed twice: analysis alone (audio already loaded
at 22 050 Hz) and load + analysis; ambit's time is always the whole command
(process start, decode, resample, track, JSON out).

--engine-example times `target/release/examples/track_wav FILE` instead of
the CLI: the same tracker and JSON output, reading the WAV with hound. It is
for branches where the audio module's decoder is not there yet.

--one-core pins every process to CPU 0 (taskset) and sets
RAYON_NUM_THREADS=1 for ambit and OPENBLAS/OMP/MKL/NUMBA thread counts of 1
for librosa, so the figures compare one core with one core.
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
import soundfile

RATE_FILE = 22_050
RATE_ANALYSIS = 22_050
FMIN, FMAX = 50.0, 2100.0
HOP_SECONDS = 0.01

ONE_THREAD_ENV = {
    "RAYON_NUM_THREADS": "1",
    "OPENBLAS_NUM_THREADS": "1",
    "OMP_NUM_THREADS": "1",
    "MKL_NUM_THREADS": "1",
    "NUMBA_NUM_THREADS": "1",
}


def sung_signal(seconds: float) -> np.ndarray:
    rng = np.random.default_rng(2026)
    t = np.arange(int(seconds * RATE_FILE)) / RATE_FILE
    notes_hz = [98.0, 131.0, 196.0, 262.0, 330.0, 392.0, 523.0, 659.0, 784.0, 440.0]
    note = (t / 0.8).astype(int) % len(notes_hz)
    f0 = np.array(notes_hz)[note] * 2 ** (50 / 1200 * np.sin(2 * np.pi * 5.5 * t))
    phase = 2 * np.pi * np.cumsum(f0) / RATE_FILE
    voice = np.zeros_like(t)
    for k in range(1, 13):
        audible = k * f0 < RATE_FILE / 2
        voice += audible * np.sin(k * phase) / k
    breath = ((t % 8.0) > 7.4).astype(float)  # 0.6 s breath every 8 s
    signal = 0.25 * voice * (1 - breath) + 0.01 * rng.standard_normal(t.size)
    return (signal / np.max(np.abs(signal)) * 0.7).astype(np.float32)


def child_cpu_seconds():
    usage = resource.getrusage(resource.RUSAGE_CHILDREN)
    return usage.ru_utime + usage.ru_stime


def median_times(command, env, runs):
    """Median wall-clock and median CPU (user + system) seconds over `runs`."""
    walls, cpus = [], []
    for _ in range(runs):
        cpu_before = child_cpu_seconds()
        start = time.perf_counter()
        done = subprocess.run(command, env=env, stdout=subprocess.PIPE, stderr=subprocess.PIPE)
        walls.append(time.perf_counter() - start)
        cpus.append(child_cpu_seconds() - cpu_before)
        if done.returncode != 0:
            sys.exit(f"{' '.join(command)} failed:\n{done.stderr.decode()}")
    return statistics.median(walls), statistics.median(cpus), cpus, done.stdout


LIBROSA_TIMER = r"""
import json, statistics, sys, time
import librosa
path, method, runs = sys.argv[1], sys.argv[2], int(sys.argv[3])
fmin, fmax, sr, hop = 50.0, 2100.0, 22050, 220
def analyse(y):
    if method == "pyin":
        return librosa.pyin(y, fmin=fmin, fmax=fmax, sr=sr, frame_length=2048, hop_length=hop)[0]
    return librosa.yin(y, fmin=fmin, fmax=fmax, sr=sr, frame_length=2048, hop_length=hop)
# Warm-up (numba compilation, FFT plans) on two seconds, not timed.
y, _ = librosa.load(path, sr=sr, duration=2.0)
analyse(y)
alone, whole, alone_cpu, whole_cpu = [], [], [], []
for _ in range(runs):
    start, start_cpu = time.perf_counter(), time.process_time()
    y, _ = librosa.load(path, sr=sr)
    loaded, loaded_cpu = time.perf_counter(), time.process_time()
    f0 = analyse(y)
    end, end_cpu = time.perf_counter(), time.process_time()
    alone.append(end - loaded)
    whole.append(end - start)
    alone_cpu.append(end_cpu - loaded_cpu)
    whole_cpu.append(end_cpu - start_cpu)
m = statistics.median
print(json.dumps({"analysis": m(alone), "load_and_analysis": m(whole),
                  "analysis_cpu": m(alone_cpu), "load_and_analysis_cpu": m(whole_cpu),
                  "analysis_cpu_runs": alone_cpu, "runs": runs, "frames": int(len(f0))}))
"""


def time_librosa(python, path, method, env, runs, pin):
    command = [python, "-c", LIBROSA_TIMER, path, method, str(runs)]
    if pin:
        command = ["taskset", "-c", "0"] + command
    done = subprocess.run(command, env=env, stdout=subprocess.PIPE, stderr=subprocess.PIPE)
    if done.returncode != 0:
        sys.exit(f"librosa.{method} failed:\n{done.stderr.decode()}")
    return json.loads(done.stdout)


def main():
    parser = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    parser.add_argument("--seconds", type=float, default=60.0)
    parser.add_argument("--runs", type=int, default=3)
    parser.add_argument("--ambit", default="target/release/ambit")
    parser.add_argument("--one-core", action="store_true")
    parser.add_argument("--engine-example", action="store_true")
    parser.add_argument("--skip-pyin", action="store_true", help="pyin is slow; skip it")
    arguments = parser.parse_args()
    if arguments.one_core and shutil.which("taskset") is None:
        sys.exit("--one-core needs taskset (util-linux)")

    env = dict(os.environ)
    # numba (librosa's JIT) crashes with a segmentation fault in librosa's
    # _parabolic_interpolation when it compiles for some AVX-512 hosts (seen
    # on an AMD EPYC); compiling for Haswell (AVX2) avoids it and keeps
    # librosa vectorised. An explicit NUMBA_CPU_NAME in the environment wins.
    env.setdefault("NUMBA_CPU_NAME", "haswell")
    if arguments.one_core:
        env.update(ONE_THREAD_ENV)
    pin = ["taskset", "-c", "0"] if arguments.one_core else []

    with tempfile.TemporaryDirectory() as directory:
        path = os.path.join(directory, "sung.wav")
        soundfile.write(path, sung_signal(arguments.seconds), RATE_FILE, subtype="PCM_16")

        if arguments.engine_example:
            command = ["target/release/examples/track_wav", path]
        else:
            command = [arguments.ambit, "track", "--json", path]
        ambit_seconds, ambit_cpu, ambit_cpus, output = median_times(pin + command, env, arguments.runs)
        ambit_frames = len(json.loads(output)["frames"])
        results = {
            "seconds_of_audio": arguments.seconds,
            "one_core": arguments.one_core,
            "ambit_command": " ".join(command[:1] + command[1:-1]),
            "ambit_track_json": {
                "wall_seconds": ambit_seconds,
                "cpu_seconds": ambit_cpu,
                "cpu_seconds_runs": ambit_cpus,
                "frames": ambit_frames,
            },
        }
        methods = ["yin"] if arguments.skip_pyin else ["yin", "pyin"]
        for method in methods:
            results[f"librosa_{method}"] = time_librosa(
                sys.executable, path, method, env, arguments.runs, arguments.one_core
            )

    print(json.dumps(results, indent=2))
    print()
    print(f"audio: {arguments.seconds:.0f} s; one core: {arguments.one_core}")
    print(
        f"ambit: wall {ambit_seconds:.3f} s = {arguments.seconds / ambit_seconds:.0f}x real time; "
        f"CPU {ambit_cpu:.3f} s = {arguments.seconds / ambit_cpu:.0f}x real time per CPU second"
    )
    for method in methods:
        figures = results[f"librosa_{method}"]
        print(
            f"librosa.{method}: analysis wall {figures['analysis']:.3f} s / CPU "
            f"{figures['analysis_cpu']:.3f} s; load+analysis wall {figures['load_and_analysis']:.3f} s / "
            f"CPU {figures['load_and_analysis_cpu']:.3f} s"
        )
        print(
            f"  ratio librosa.{method} analysis / ambit whole command: wall "
            f"{figures['analysis'] / ambit_seconds:.1f}x, CPU {figures['analysis_cpu'] / ambit_cpu:.1f}x"
        )


if __name__ == "__main__":
    main()
