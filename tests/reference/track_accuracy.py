"""Pitch-tracker accuracy by mir_eval, with librosa.pyin run alongside.

Reads a JSON list of cases (argument 1), each
    {"name": str, "wav": path, "truth": path, "ours": path,
     "fmin": float, "fmax": float}
where `truth` is a `time,f0_hz` CSV (0 = unvoiced; a header row is optional)
and `ours` is `ambit track --csv` output (`time,f0_hz,voiced,...`, empty f0
when unvoiced). Runs librosa.pyin on the same WAV with the same fmin/fmax and
a 10 ms hop, and prints JSON: per case, mir_eval's melody metrics for both.

Metrics are computed by mir_eval itself (mir_eval.melody.evaluate; Salamon,
Gómez, Ellis & Richard 2014; Raffel et al. 2014): raw pitch accuracy within
50 cents, raw chroma accuracy, voicing recall and voicing false alarm.
Both trackers give no f0 on frames they call unvoiced (ambit's frame
contract; librosa.pyin's default fill_na=NaN), so a reference-voiced frame
counts for raw pitch accuracy only if the tracker voices it and is within
50 cents.
"""

import csv
import json
import os
import sys
import time

# numba (under librosa) caches compiled code beside librosa's sources by
# default; a cache written concurrently by another process there has been
# seen to crash pyin with a segmentation fault. Keep our own cache instead.
os.environ.setdefault(
    "NUMBA_CACHE_DIR",
    os.path.join(os.environ.get("AMBIT_CACHE", os.path.expanduser("~/.cache/ambit")), "numba-track-accuracy"),
)

import librosa  # noqa: E402
import mir_eval  # noqa: E402
import numpy as np  # noqa: E402
import soundfile  # noqa: E402

HOP_SECONDS = 0.01


def load_truth(path):
    """time_seconds,f0_hz rows (0 = unvoiced), with or without a header."""
    times, freqs = [], []
    with open(path, newline="") as handle:
        for row in csv.reader(handle):
            if not row:
                continue
            try:
                t, f = float(row[0]), float(row[1])
            except ValueError:
                continue  # header
            times.append(t)
            freqs.append(f)
    return np.array(times), np.array(freqs)


def load_ambit_csv(path):
    """`ambit track --csv`: header time,f0_hz,voiced,... ; empty f0 = none."""
    times, freqs = [], []
    with open(path, newline="") as handle:
        for row in csv.DictReader(handle):
            times.append(float(row["time"]))
            text = (row.get("f0_hz") or "").strip()
            voiced = (row.get("voiced") or "true").strip().lower() in ("true", "1")
            freqs.append(float(text) if text and voiced else 0.0)
    return np.array(times), np.array(freqs)


def pyin_frame_length(sample_rate):
    # librosa's default 2048 samples is sized for 22.05-44.1 kHz; keep
    # about 46-64 ms (two periods of a 50 Hz f0 with YIN's half window).
    return 2048 if sample_rate >= 32000 else 1024


def run_pyin(wav_path, fmin, fmax):
    y, sample_rate = soundfile.read(wav_path, dtype="float32", always_2d=True)
    y = y.mean(axis=1)
    hop = int(round(HOP_SECONDS * sample_rate))
    started = time.perf_counter()
    f0, voiced, _ = librosa.pyin(
        y,
        fmin=fmin,
        fmax=fmax,
        sr=sample_rate,
        frame_length=pyin_frame_length(sample_rate),
        hop_length=hop,
    )
    seconds = time.perf_counter() - started
    times = librosa.times_like(f0, sr=sample_rate, hop_length=hop)
    freqs = np.where(voiced & np.isfinite(f0), f0, 0.0)
    return times, freqs, seconds, len(y) / sample_rate


def melody_metrics(ref_time, ref_freq, est_time, est_freq):
    scores = mir_eval.melody.evaluate(ref_time, ref_freq, est_time, est_freq)
    return {
        "raw_pitch_accuracy": scores["Raw Pitch Accuracy"],
        "raw_chroma_accuracy": scores["Raw Chroma Accuracy"],
        "voicing_recall": scores["Voicing Recall"],
        "voicing_false_alarm": scores["Voicing False Alarm"],
        "overall_accuracy": scores["Overall Accuracy"],
    }


def evaluate_case(case):
    ref_time, ref_freq = load_truth(case["truth"])
    ours_time, ours_freq = load_ambit_csv(case["ours"])
    pyin_time, pyin_freq, pyin_seconds, audio_seconds = run_pyin(
        case["wav"], case["fmin"], case["fmax"]
    )
    return {
        "name": case["name"],
        "audio_seconds": audio_seconds,
        "pyin_seconds": pyin_seconds,
        "voiced_reference_frames": int(np.count_nonzero(ref_freq > 0)),
        "ours": melody_metrics(ref_time, ref_freq, ours_time, ours_freq),
        "pyin": melody_metrics(ref_time, ref_freq, pyin_time, pyin_freq),
    }


def main():
    with open(sys.argv[1]) as handle:
        cases = json.load(handle)
    results = [evaluate_case(case) for case in cases]
    versions = {"librosa": librosa.__version__, "mir_eval": mir_eval.__version__}
    json.dump({"versions": versions, "cases": results}, sys.stdout)


if __name__ == "__main__":
    main()
