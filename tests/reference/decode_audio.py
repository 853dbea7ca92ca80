"""Reference decoder: libsndfile through the soundfile package.

Usage: decode_audio.py FILE
Prints {"sample_rate": int, "channels": int, "samples": [float, ...]} where
samples are the mean of the channels (the same mono mix Ambit uses), as
float32 values in full scale ±1.
"""

import json
import sys

import soundfile


def main() -> None:
    data, rate = soundfile.read(sys.argv[1], dtype="float32", always_2d=True)
    mono = data.mean(axis=1)
    print(json.dumps({
        "sample_rate": int(rate),
        "channels": int(data.shape[1]),
        "samples": [float(x) for x in mono],
    }))


if __name__ == "__main__":
    main()
