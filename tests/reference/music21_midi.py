"""Same music in MIDI: music21 writes Bach chorales from its bundled corpus as
Standard MIDI Files, and prints the notes it holds for each part so that the
Rust test can read the MIDI with Ambit and compare.

Usage: music21_midi.py OUT_DIR COUNT

Chorales: the first COUNT corpus files named bach/bwv*, sorted by file name
(a fixed, deterministic list). For each one the script writes
OUT_DIR/<name>.mid with `stream.write('midi', fp=...)` and lists, per part
with notes, every sounding pitch as [midi, onset_quarters, duration_quarters].

The reference notes follow music21's own MIDI export rules, which the script
applies to the parsed score itself (music21.midi.translate,
prepareStreamForMidi and streamHierarchyToMidiTracks):
  * repeats are expanded (Stream.expandRepeats) when the score has measures;
  * ties are joined (Stream.stripTies(matchByPitch=True));
  * chords count every pitch.
A chorale music21 cannot write is listed under "skipped" with the reason.

Prints JSON: {"music21": version, "chorales": [{"name", "midi_path",
"parts": [{"name", "notes": [[midi, onset, duration], ...]}]}], "skipped": [...]}
"""

import json
import os
import sys
import warnings

warnings.simplefilter("ignore")

import music21  # noqa: E402
from music21 import corpus, stream  # noqa: E402


def chorale_paths(count):
    paths = [p for p in corpus.getComposer("bach") if os.path.basename(str(p)).startswith("bwv")]
    paths.sort(key=lambda p: os.path.basename(str(p)))
    return paths[:count]


def reference_parts(score):
    expanded = score.expandRepeats() if score[stream.Measure] else score
    parts = []
    for part in expanded.parts:
        joined = part.stripTies(matchByPitch=True)
        notes = []
        for element in joined.flatten().notes:
            onset = float(element.offset)
            duration = float(element.quarterLength)
            for pitch in element.pitches:
                notes.append([int(pitch.midi), onset, duration])
        if notes:
            parts.append({"name": part.partName, "notes": notes})
    return parts


def main():
    out_dir, count = sys.argv[1], int(sys.argv[2])
    chorales, skipped = [], []
    for path in chorale_paths(count):
        name = os.path.splitext(os.path.basename(str(path)))[0]
        try:
            score = corpus.parse(path)
            midi_path = os.path.join(out_dir, name + ".mid")
            score.write("midi", fp=midi_path)
            parts = reference_parts(score)
        except Exception as error:  # reported, never hidden
            skipped.append({"name": name, "reason": f"{type(error).__name__}: {error}"})
            continue
        chorales.append({"name": name, "midi_path": midi_path, "parts": parts})
    json.dump(
        {"music21": music21.__version__, "chorales": chorales, "skipped": skipped},
        sys.stdout,
    )


if __name__ == "__main__":
    main()
