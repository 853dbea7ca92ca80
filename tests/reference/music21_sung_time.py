"""Sung time of each part of a score, by music21, for the rehearsal load check.

Usage: music21_sung_time.py SCORE FIRST LAST

The score is parsed and its repeats expanded (Stream.expandRepeats), as a
performance sings it. For every part with notes the script prints the length
in seconds of the union of its note intervals (chord tones and overlapping
voices counted once, rests not at all), over the whole piece and over the
measures printed FIRST..LAST (every pass of a repeated measure). Offsets
become seconds through the score's metronome marks
(Stream.metronomeMarkBoundaries), so tempo changes count.

Prints JSON: {"music21": version, "parts": [{"name", "whole_seconds",
"passage_seconds"}]}
"""

import json
import sys
import warnings

warnings.simplefilter("ignore")

import music21  # noqa: E402
from music21 import converter, stream  # noqa: E402


def union_length(spans):
    total, current = 0.0, None
    for start, end in sorted(spans):
        if end <= start:
            continue
        if current and start <= current[1]:
            current = (current[0], max(current[1], end))
        else:
            if current:
                total += current[1] - current[0]
            current = (start, end)
    return total + (current[1] - current[0] if current else 0.0)


def main():
    path, first, last = sys.argv[1], int(sys.argv[2]), int(sys.argv[3])
    score = converter.parse(path)
    expanded = score.expandRepeats()
    boundaries = expanded.metronomeMarkBoundaries()

    def seconds(offset):
        total = 0.0
        for start, end, mark in boundaries:
            start, end = float(start), float(end)
            if offset <= start:
                break
            span = min(offset, end) - start
            total += mark.durationToSeconds(span)
        return total

    parts = []
    for part in expanded.parts:
        whole, passage = [], []
        for measure in part.getElementsByClass(stream.Measure):
            measure_offset = float(measure.getOffsetInHierarchy(expanded))
            for element in measure.recurse().notes:
                if element.duration.isGrace or float(element.quarterLength) <= 0:
                    continue
                onset = measure_offset + float(element.getOffsetInHierarchy(measure))
                span = (seconds(onset), seconds(onset + float(element.quarterLength)))
                whole.append(span)
                if first <= measure.number <= last:
                    passage.append(span)
        if whole:
            parts.append(
                {
                    "name": part.partName,
                    "whole_seconds": union_length(whole),
                    "passage_seconds": union_length(passage),
                }
            )
    json.dump({"music21": music21.__version__, "parts": parts}, sys.stdout)


if __name__ == "__main__":
    main()
