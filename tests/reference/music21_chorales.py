"""Per-part ranges and pitch -> quarter-length histograms of Bach chorales
from music21's bundled corpus, as the outside check for Ambit's MusicXML
reader (tests/it/music21_chorales.rs).

Usage: music21_chorales.py COUNT [--expand-repeats]

Chooses COUNT chorales deterministically (every k-th of the corpus's .mxl
Bach files in sorted path order, plus the one with endings) and prints JSON:
{"music21": version, "files": [{"path": str, "parts": [{"name", "lowest_midi",
"highest_midi", "histogram_quarters": {"<midi>": float}}], "error": str|null}]}

Counting rules (the same as Ambit's tessitura, stated in issue 2): every
chord tone counts its full quarter length, tied notes count their own
durations, grace notes count zero and do not enter the range, rests nothing.
With --expand-repeats the score is first unrolled by music21's
Score.expandRepeats(); a file where that raises gets "error" set instead.
"""

import json
import sys
from collections import defaultdict

import music21
from music21 import chord, converter, corpus, note


# The corpus's one chorale with first and second endings, always included so
# the unrolled comparison covers endings as well as plain repeats.
WITH_ENDINGS = "bwv8.6.mxl"


def chorale_paths(count):
    paths = sorted(
        str(path) for path in corpus.getComposer("bach") if str(path).endswith(".mxl")
    )
    step = max(1, len(paths) // count)
    chosen = paths[::step][:count]
    chosen += [path for path in paths if path.endswith("/" + WITH_ENDINGS) and path not in chosen]
    return chosen


def part_summary(part):
    histogram = defaultdict(float)
    lowest = None
    highest = None
    for element in part.recurse().notes:
        if element.duration.isGrace:
            continue
        quarters = float(element.quarterLength)
        if quarters <= 0:
            continue
        if isinstance(element, chord.Chord):
            pitches = element.pitches
        elif isinstance(element, note.Note):
            pitches = [element.pitch]
        else:
            continue  # unpitched
        for pitch in pitches:
            midi = int(round(pitch.ps))
            histogram[str(midi)] += quarters
            lowest = midi if lowest is None else min(lowest, midi)
            highest = midi if highest is None else max(highest, midi)
    return {
        "name": part.partName,
        "lowest_midi": lowest,
        "highest_midi": highest,
        "histogram_quarters": dict(histogram),
    }


def main():
    count = int(sys.argv[1])
    expand = "--expand-repeats" in sys.argv[2:]
    files = []
    for path in chorale_paths(count):
        score = converter.parse(path)
        error = None
        if expand:
            try:
                score = score.expandRepeats()
            except Exception as exception:  # music21 raises several types here
                error = f"{type(exception).__name__}: {exception}"
        parts = [] if error else [part_summary(part) for part in score.parts]
        files.append({"path": path, "parts": parts, "error": error})
    json.dump({"music21": music21.__version__, "files": files}, sys.stdout)


if __name__ == "__main__":
    main()
