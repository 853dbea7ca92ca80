"""Note pitches by librosa.pyin, for the note segments Ambit found.

Reads a JSON list of cases (argument 1), each
    {"name": str, "wav": path, "fmin": float, "fmax": float,
     "segments": [[start_seconds, end_seconds], ...]}
runs librosa.pyin (Mauch & Dixon 2014, as implemented in librosa) on the WAV
with that fmin/fmax and a 10 ms hop, and prints JSON: per case, per segment,
the median of pyin's f0 over the voiced frames whose centre lies inside the
segment, as a MIDI number (librosa.hz_to_midi: A4 = 440 Hz = MIDI 69, equal
temperament), and how many frames it is the median of.
"""

import json
import os
import sys

# numba (under librosa) compiles for the host CPU; on some AVX-512 hosts that
# code crashes pyin (scripts/test-all.sh sets the same). Its cache lives
# outside librosa's sources, where concurrent writers have crashed it.
os.environ.setdefault("NUMBA_CPU_NAME", "haswell")
os.environ.setdefault(
    "NUMBA_CACHE_DIR",
    os.path.join(
        os.environ.get("AMBIT_CACHE", os.path.expanduser("~/.cache/ambit")),
        "numba-pyin-note-pitch",
    ),
)

import librosa  # noqa: E402
import numpy as np  # noqa: E402
import soundfile  # noqa: E402

HOP_SECONDS = 0.01


def pyin_track(wav_path, fmin, fmax):
    y, sample_rate = soundfile.read(wav_path, dtype="float32", always_2d=True)
    y = y.mean(axis=1)
    hop = int(round(HOP_SECONDS * sample_rate))
    # librosa's default 2048 samples suits 32-48 kHz; keep ~46 ms below.
    frame_length = 2048 if sample_rate >= 32000 else 1024
    f0, voiced, _ = librosa.pyin(
        y,
        fmin=fmin,
        fmax=fmax,
        sr=sample_rate,
        frame_length=frame_length,
        hop_length=hop,
    )
    times = librosa.times_like(f0, sr=sample_rate, hop_length=hop)
    return times, np.where(voiced & np.isfinite(f0), f0, np.nan)


def evaluate_case(case):
    times, f0 = pyin_track(case["wav"], case["fmin"], case["fmax"])
    segments = []
    for start, end in case["segments"]:
        inside = (times >= start) & (times <= end) & np.isfinite(f0)
        frames = int(np.count_nonzero(inside))
        median_midi = float(librosa.hz_to_midi(np.median(f0[inside]))) if frames else None
        segments.append({"median_midi": median_midi, "frames": frames})
    return {"name": case["name"], "segments": segments}


def main():
    with open(sys.argv[1]) as handle:
        cases = json.load(handle)
    results = [evaluate_case(case) for case in cases]
    json.dump({"librosa": librosa.__version__, "cases": results}, sys.stdout)


if __name__ == "__main__":
    main()
