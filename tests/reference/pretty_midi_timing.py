"""Note timing in seconds by pretty_midi, the reference for Ambit's MIDI
tempo map.

Usage: pretty_midi_timing.py FILE.mid ...

For each file prints every note pretty_midi finds as
[track_name, pitch, start_seconds, end_seconds], twice:

  "notes": pretty_midi reading the file after every Set Tempo event has been
      moved, at its absolute tick, into the first track. pretty_midi reads
      tempo only from the first track (PrettyMIDI._load_tempo_changes looks
      at midi_data.tracks[0]) and warns about tempo events elsewhere; the SMF
      specification lets format 1 files put them on any track, and Ambit
      merges all tracks' tempo events. Moving them is a lossless rewrite of
      the same tempo map, so this is pretty_midi's tick -> seconds arithmetic
      applied to the full map.
  "raw_notes": pretty_midi on the file as it is (first-track tempo only),
      to show the difference this convention makes.

pretty_midi groups notes into instruments per (program, channel, track); the
instrument name is the track name, which is how the Rust test matches parts.

Prints JSON: {"pretty_midi": version, "files": [{"path", "notes", "raw_notes"}]}
"""

import json
import sys
import warnings

warnings.simplefilter("ignore")

import mido  # noqa: E402
import pretty_midi  # noqa: E402


def notes_of(midi):
    notes = []
    for instrument in midi.instruments:
        for note in instrument.notes:
            notes.append([instrument.name, int(note.pitch), float(note.start), float(note.end)])
    notes.sort(key=lambda n: (n[0], n[2], n[1], n[3]))
    return notes


def with_tempos_in_first_track(path):
    midi = mido.MidiFile(path)
    absolute = []
    for index, track in enumerate(midi.tracks):
        tick = 0
        events = []
        for message in track:
            tick += message.time
            events.append((tick, message))
        absolute.append(events)
    moved = [(tick, m) for events in absolute[1:] for tick, m in events if m.type == "set_tempo"]
    first = absolute[0] + moved
    # Stable sort by tick: the first track's own events first at a shared
    # tick, then the moved ones in track order (Ambit's merge order). End of
    # Track must stay last.
    first.sort(key=lambda item: (item[0], item[1].type == "end_of_track"))
    rebuilt = [first] + [
        [(tick, m) for tick, m in events if m.type != "set_tempo"] for events in absolute[1:]
    ]
    for index, events in enumerate(rebuilt):
        track = mido.MidiTrack()
        previous = 0
        for tick, message in events:
            track.append(message.copy(time=tick - previous))
            previous = tick
        midi.tracks[index] = track
    return midi


def main():
    files = []
    for path in sys.argv[1:]:
        merged = pretty_midi.PrettyMIDI(mido_object=with_tempos_in_first_track(path))
        raw = pretty_midi.PrettyMIDI(path)
        files.append({"path": path, "notes": notes_of(merged), "raw_notes": notes_of(raw)})
    json.dump({"pretty_midi": pretty_midi.__version__, "files": files}, sys.stdout)


if __name__ == "__main__":
    main()
