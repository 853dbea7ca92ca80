#!/usr/bin/env python3
"""Sketch of 'The Tide Clock' (SSAATTBB): melody, bass, harmony, rhythm and words.

Running it rewrites ``the-tide-clock.piece`` with the inner voices filled in by
``voicing.py``.  The .piece file is the score; compose.py builds it like the others.
"""

from pathlib import Path

from sketch import emit, realise

U = {"unison": True}
LETTERS = "CDEFGAB"
SEMIS = {"C": 0, "D": 2, "E": 4, "F": 5, "G": 7, "A": 9, "B": 11}


def up3(name: str) -> str:
    """Sketched in D major; sung a minor third higher, in F, where eight parts have room."""
    letter, rest = name[0], name[1:]
    octave = rest.lstrip("#b")
    alter = rest.count("#") - rest.count("b")
    i = LETTERS.index(letter) + 2
    new = LETTERS[i % 7]
    target = SEMIS[letter] + alter + 3
    new_alter = target - SEMIS[new] - (12 if i >= 7 else 0)
    acc = "#" * new_alter if new_alter > 0 else "b" * -new_alter
    if octave:
        octave = str(int(octave) + (1 if i >= 7 else 0))
    return new + acc + octave


def up3_tones(tones: str) -> str:
    return " ".join(up3(t) for t in tones.split())

D, Dsus = "D F# A", "D G A"
G, A, A7, Asus = "G B D", "A C# E", "A C# E G", "A D E"
Bm, Fsm, Em, Em7 = "B D F#", "F# A C#", "E G B", "E G B D"
# F major section
F, Dm, Gm, Bb, C7, Am, Csus = "F A C", "D F A", "G Bb D", "Bb D F", "C E G Bb", "A C E", "C F G"

# Voice ranges, sounding (Soprano I ... Bass II); common practice for a community choir.
RANGES = [("F4", "A5"), ("E4", "E5"), ("B3", "D5"), ("G3", "B4"),
          ("D3", "A4"), ("C3", "E4"), ("G2", "C4"), ("F2", "C4")]

BARS = [
    # Sketched in D major (F major section in the middle); sung a minor third higher.
    # A -- D major, 4/4: all four sections in unison
    {"attrs": "1", "dyn": "!p", "events": [
        ("h", "A4", D, "D3", "Slow,", U), ("q", "A4", D, "D3", "the", U), ("q", "B4", G, "G2", "tide", U)]},
    {"attrs": "2", "events": [("h", "A4", A, "A2", "comes", U), ("h", "F#4", D, "D3", "in;", U)]},
    {"attrs": "3", "events": [("h", "F#4", D, "D3", "~", U), ("h", "F#4", Bm, "B2", "~", U)]},
    {"attrs": "4", "events": [
        ("h", "A4", Fsm, "F#3", "slow,", U), ("q", "A4", Fsm, "F#3", "the", U), ("q", "B4", Em, "E3", "tide", U)]},
    {"attrs": "5", "events": [("h", "C#5", A, "C#3", "goes", {"unison": True, "nolt": True}), ("h", "A4", Fsm, "F#2", "out;", U)]},
    {"attrs": "6", "events": [("h", "A4", Fsm, "F#2", "~", U), ("h", "A4", D, "D3", "~", U)]},
    # the sections divide
    {"attrs": "7", "dyn": "!mf", "events": [
        ("q", "D5", G, "G2", "twice"), ("q", "D5", G, "B2", "a"), ("q", "C#5", A, "A2", "day"),
        ("q", "B4", Em, "G2", "the")]},
    {"attrs": "8", "events": [
        ("h", "A4", D, "F#2", "wa-"), ("q", "B4", Em7, "E2", "ter"), ("q", "G4", A7, "A2", "turns,")]},
    {"attrs": "9", "events": [("h", "G4", Dsus, "D3", "~"), ("h", "F#4", D, "D3", "~")]},
    {"attrs": "10", "dyn": "!mp", "events": [
        ("q", "F#4", D, "D3", "and"), ("q", "G4", G, "B2", "the"), ("h", "A4", Fsm, "F#2", "grey")]},
    {"attrs": "11", "events": [("h", "B4", G, "G2", "stones"), ("h", "A4", A, "A2", "wait.")]},
    {"attrs": "12 double", "events": [("h", "A4", Asus, "A2", "~"), ("h", "A4", A7, "A2", "~")]},
    # B -- F major, 3/4, moving on
    {"attrs": "13 key=-4 time=3/4 tempo=76 tempo-text=Moving,_tenderly", "dyn": "!mp", "events": [
        ("h", "A4", Dm, "D3", "Hush", U), ("e", "A4", Dm, "D3", "now,", U), ("e", "Bb4", Gm, "Bb2", "the", U)]},
    {"attrs": "14", "events": [("h", "C5", F, "A2", "boats", U), ("q", "D5", Bb, "Bb2", "are", U)]},
    {"attrs": "15", "events": [("h", "C5", F, "C3", "sleep-", U), ("q", "Bb4", C7, "C3", "~", U)]},
    {"attrs": "16", "events": [("h.", "A4", F, "F2", "ing;", U)]},
    {"attrs": "17", "dyn": "!cresc", "events": [
        ("h", "A4", Dm, "D3", "hush,"), ("e", "A4", Dm, "F2", "for"), ("e", "Bb4", Gm, "G2", "the")]},
    {"attrs": "18", "events": [("h", "C5", Am, "A2", "moon"), ("q", "D5", Bb, "Bb2", "is")]},
    {"attrs": "19", "dyn": "!end !f", "events": [("h", "F5", Dm, "D2", "high,", {"fixed": {
        1: "A4", 2: "F4", 3: "D4", 4: "A3", 5: "F3", 6: "A2"}}), ("q", "E5", A7, "A2", "~")]},
    {"attrs": "20 double", "dyn": "!dim", "events": [("h", "E5", Asus, "A2", "~"), ("q", "E5", A7, "A2", "~")]},
    # C -- D major again, 4/4, divided throughout
    {"attrs": "21 key=-1 time=4/4 tempo=56 tempo-text=Slowly,_as_at_first", "dyn": "!end !p", "events": [
        ("h", "A4", D, "D3", "Slow,"), ("q", "A4", D, "D3", "the"), ("q", "B4", G, "G2", "tide")]},
    {"attrs": "22", "events": [("h", "A4", A, "A2", "comes"), ("h", "F#4", D, "D3", "in;")]},
    {"attrs": "23", "events": [
        ("h", "A4", Fsm, "F#2", "slow,"), ("q", "A4", Fsm, "F#2", "the"), ("q", "B4", Em, "E2", "tide")]},
    {"attrs": "24", "events": [("h", "C#5", A, "C#3", "goes", {"nolt": True}), ("h", "A4", Fsm, "F#2", "out;")]},
    {"attrs": "25", "dyn": "!cresc", "events": [
        ("q", "F#4", D, "D3", "and"), ("q", "G4", G, "B2", "the"), ("h", "B4", Em, "G2", "grey")]},
    {"attrs": "26", "dyn": "!end !mf", "events": [("h", "D5", G, "G2", "stones"), ("h", "C#5", A7, "A2", "wait,")]},
    {"attrs": "27", "dyn": "!dim", "events": [("h", "D5", D, "D3", "~"), ("h", "D5", Bm, "B2", "~")]},
    {"attrs": "28", "events": [("h", "B4", Em7, "E3", "slow,"), ("h", "A4", A7, "A2", "~")]},
    {"attrs": "29", "dyn": "!end !pp", "events": [("h", "B4", G, "G2", "slow."), ("h", "A4", D, "D3", "~")]},
    {"attrs": "30 final", "events": [("w", "A4", D, "D2", "~", {"fixed": {
        5: "D3", 6: "A2"}})]},
]

HEADER = """\
# The Tide Clock -- SSAATTBB, the sections dividing.
# GENERATED by the-tide-clock.sketch.py from the sketch (melody, bass, harmony, words);
# inner voices filled in by voicing.py.  Pitches are sounding pitches.
@title The Tide Clock
@subtitle For the Wrenhaven Harbour Choir (SSAATTBB)
@composer Ambit sample scores (original composition)
@lyricist Words written for the Ambit project
@rights Copyright the Ambit contributors. MIT OR Apache-2.0.
@key -1
@time 4/4
@tempo 60
@tempo_text Slowly, like the turning tide
@lyrics_follow S
@part S "Soprano" S. treble 53
@part A "Alto" A. treble 53
@part T "Tenor" T. treble8 53
@part B "Bass" B. bass 53
"""


def transposed(bars):
    out = []
    for b in bars:
        nb = dict(b)
        nb["events"] = []
        for ev in b["events"]:
            opts = dict(ev[5]) if len(ev) > 5 else {}
            if "fixed" in opts:
                opts["fixed"] = {k: up3(v) for k, v in opts["fixed"].items()}
            nb["events"].append((ev[0], up3(ev[1]), up3_tones(ev[2]), up3(ev[3]), ev[4], opts))
        out.append(nb)
    return out


def in_f(bar) -> bool:
    number = int(bar["attrs"].split()[0])
    return 13 <= number <= 20


def main() -> None:
    bars = transposed(BARS)
    voiced = realise(bars, RANGES, lambda b: "G" if in_f(b) else "E")
    text = emit(HEADER, bars, voiced, in_f)
    # The final chord holds under a fermata.
    text = text.rstrip("\n").split("\n")
    last = [i for i, l in enumerate(text) if l.startswith("| 30")][0]
    text = text[:last + 1] + [l.replace(":w", ":w!") for l in text[last + 1:]]
    (Path(__file__).with_name("the-tide-clock.piece")).write_text("\n".join(text) + "\n", encoding="utf-8")


if __name__ == "__main__":
    main()
