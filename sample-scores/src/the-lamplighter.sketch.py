#!/usr/bin/env python3
"""Sketch of 'The Lamplighter' (SATB and piano; the tenors carry the tune, high).

The tenor line, the bass line, the harmony, the rhythm and the words are written here;
soprano and alto are filled in by ``voicing.py`` with the tenor held fixed (the altos sit
below the tenors, as often when tenors have the tune); the piano part is drawn from the
same harmony as an off-beat accompaniment.  Running it rewrites ``the-lamplighter.piece``.
"""

from pathlib import Path

from sketch import CODES, VALUES, fmt_single, merge, spell_in
from voicing import Chord, midi, voice

F, Dm, Gm, Bb, C, C7, Csus = "F A C", "D F A", "G Bb D", "Bb D F", "C E G", "C E G Bb", "C F G"
A, A7, Gm7 = "A C# E", "A C# E G", "G Bb D F"
SOLO = {"solo": True}   # the tenors alone (the others rest)
REST = {"rest": True}   # the choir rests, the piano plays

# Voices in pitch order for the voicing search: soprano, tenor (fixed), alto, bass.
RANGES = [("A4", "F5"), ("C4", "Bb4"), ("G3", "F4"), ("F2", "D4")]

BARS = [
    {"n": "1", "attrs": "1", "dyn": "!mp", "events": [("h", None, F, "F2", "", REST), ("h", None, Dm, "D2", "", REST)]},
    {"n": "2", "events": [("h", None, Bb, "Bb1", "", REST), ("h", None, C7, "C2", "", REST)]},
    {"n": "3", "events": [("h", None, F, "F2", "", REST), ("h", None, Dm, "D2", "", REST)]},
    {"n": "4", "events": [("h", None, Gm7, "G2", "", REST), ("h", None, C7, "C2", "", REST)]},
    # Verse 1: the tenors sing, the others hum a pad on "Oo"
    {"n": "5", "tdyn": "!mp", "events": [("h.", None, F, "F2", "", REST), ("q", "C4", C7, "C3", "I", SOLO)]},
    {"n": "6", "pad": True, "sdyn": "!p", "events": [
        ("q", "F4", F, "F2", "climb"), ("q", "G4", F, "F2", "the"), ("q", "A4", F, "F2", "har-"),
        ("q", "A4", Dm, "F3", "bour")]},
    {"n": "7", "pad": True, "events": [("q", "G4", C, "C3", "wall"), ("q", "F4", Dm, "D3", "at"), ("h", "G4", C, "C3", "dusk,")]},
    {"n": "8", "pad": True, "events": [("h.", "G4", C, "C3", "~"), ("q", "F4", Dm, "D3", "and")]},
    {"n": "9", "pad": True, "events": [
        ("q", "A4", F, "F2", "light"), ("q", "G4", F, "F2", "the"), ("q", "F4", Dm, "D3", "lamps"),
        ("q", "A4", Dm, "D3", "a-")]},
    {"n": "10", "pad": True, "events": [("q", "G4", Gm, "G2", "long"), ("q", "F4", Gm, "G2", "the"), ("h", "E4", C, "C3", "quay;")]},
    {"n": "11", "pad": True, "events": [("h.", "E4", C, "C3", "~"), ("q", "C4", C7, "C3", "each", SOLO)]},
    {"n": "12", "pad": True, "events": [
        ("q", "F4", F, "F2", "lit-"), ("q", "F4", F, "F2", "tle"), ("q", "A4", F, "C3", "flame"),
        ("q", "A4", F, "A2", "a")]},
    {"n": "13", "pad": True, "events": [("q", "A4", Dm, "D3", "prom-"), ("q", "G4", Gm, "Bb2", "ise"), ("h", "A4", A, "A2", "kept,")]},
    {"n": "14", "pad": True, "events": [("h.", "A4", A, "A2", "~"), ("q", "G4", A7, "A2", "to")]},
    {"n": "15", "pad": True, "events": [
        ("q", "F4", Dm, "D3", "ev-"), ("q", "G4", Gm, "Bb2", "ery"), ("q", "A4", F, "A2", "boat"),
        ("q", "G4", C, "E3", "up-")]},
    {"n": "16", "pad": True, "events": [("q", "F4", Bb, "Bb2", "on"), ("q", "E4", C, "C3", "the"), ("h", "F4", Csus, "C3", "sea.")]},
    # Verse 2: everyone sings the words
    {"n": "17", "pad": "first", "sdyn": "!mf", "events": [("h.", "F4", F, "F2", "~"), ("q", "F4", F, "F3", "The")]},
    {"n": "18", "events": [
        ("q", "A4", F, "F3", "wind"), ("q", "G4", C, "E3", "may"), ("q", "A4", F, "F3", "tug"),
        ("q", "A4", Dm, "D3", "my")]},
    {"n": "19", "events": [("q", "Bb4", Gm, "G2", "coat"), ("q", "A4", F, "A2", "and"), ("h", "G4", C, "C3", "cap,")]},
    {"n": "20", "events": [("h.", "G4", C, "C3", "~"), ("q", "F4", Dm, "D3", "the")]},
    {"n": "21", "sdyn": "!cresc", "events": [
        ("q", "A4", F, "F3", "rain"), ("q", "G4", C, "E3", "may"), ("q", "F4", Dm, "D3", "run"),
        ("q", "A4", F, "C3", "a-")]},
    {"n": "22", "events": [("q", "G4", C7, "Bb2", "long"), ("q", "F4", F, "A2", "the"), ("h", "E4", C, "G2", "stone,")]},
    {"n": "23", "events": [("h.", "E4", C, "C3", "~"), ("q", "A4", A7, "A2", "but")]},
    {"n": "24", "sdyn": "!end !f", "events": [
        ("q", "A4", Dm, "D3", "ev-"), ("q", "A4", Dm, "F3", "ery"), ("q", "Bb4", Gm, "G2", "lamp"),
        ("q", "A4", Dm, "F2", "that")]},
    {"n": "25", "events": [("q", "Bb4", Bb, "D3", "I"), ("q", "A4", F, "C3", "have"), ("h", "Bb4", Gm, "Bb2", "lit,")]},
    {"n": "26", "sdyn": "!ff", "events": [("h", "Bb4", Gm7, "G2", "~"), ("q", "Bb4", C7, "C3", "~"), ("q", "A4", F, "F2", "will")]},
    {"n": "27", "sdyn": "!dim", "events": [
        ("q", "G4", C, "E3", "guide"), ("q", "A4", F, "F3", "a"), ("q", "G4", C, "E3", "wea-"),
        ("q", "F4", Dm, "D3", "ry")]},
    {"n": "28", "events": [("q", "G4", Gm7, "Bb2", "sail-"), ("q", "E4", C7, "C3", "or"), ("h", "F4", F, "F2", "home.")]},
    {"n": "29", "sdyn": "!end !mp", "events": [("h.", "F4", F, "F2", "~"), ("q", "A4", F, "F3", "and")]},
    # Coda
    {"n": "30", "sdyn": "!cresc", "events": [("q", "A4", Dm, "D3", "bring"), ("q", "G4", C, "E3", "them"), ("h", "A4", F, "F2", "home,")]},
    {"n": "31", "events": [("h.", "A4", Bb, "Bb2", "~"), ("q", "A4", F, "F3", "and")]},
    {"n": "32", "attrs": "32 tempo=69 tempo-text=Broadening", "sdyn": "!end !f", "events": [
        ("q", "Bb4", Gm, "G2", "bring"), ("q", "A4", F, "C3", "them"), ("h", "G4", Csus, "C3", "home,")]},
    {"n": "33", "sdyn": "!dim", "events": [("w", "F4", F, "F2", "~")]},
    {"n": "34", "events": [("h", None, Bb, "Bb1", "", REST), ("h", None, F, "F2", "", REST)]},
    {"n": "35", "attrs": "35 final", "pdyn": "!pp", "events": [("w", None, F, "F2", "", REST)]},
]

HEADER = """\
# The Lamplighter -- SATB and piano; the tenors carry the tune, high, for long stretches.
# GENERATED by the-lamplighter.sketch.py (tenor line, bass, harmony and words are the
# sketch; soprano and alto drafted by voicing.py; piano drawn from the harmony).
# Pitches are sounding pitches.
@title The Lamplighter
@subtitle For the Wrenhaven Harbour Choir (SATB and piano)
@composer Ambit sample scores (original composition)
@lyricist Words written for the Ambit project
@rights Copyright the Ambit contributors. MIT OR Apache-2.0.
@key -1
@time 4/4
@tempo 84
@tempo_text Steady, with warmth
@lyrics_follow T
@part S "Soprano" S. treble 53
@part A "Alto" A. treble 53
@part T "Tenor" T. treble8 53
@part B "Bass" B. bass 53
@part P "Piano" Pno. treble,bass 1
"""


def sung(ev) -> bool:
    opts = ev[5] if len(ev) > 5 else {}
    return not opts.get("rest") and not opts.get("solo")


def main() -> None:
    progression = []
    for b in BARS:
        for ev in b["events"]:
            if sung(ev):
                progression.append(Chord(ev[2], None, ev[3], leading="E" if "E" in ev[2].split() else None,
                                         fixed={1: ev[1]}))
    voiced = iter(voice(progression, RANGES, beam=120))
    out = [HEADER.rstrip(), ""]
    prev = {}  # voice -> last note (to tie)
    collected = []
    for b in BARS:
        attrs = b.get("attrs", b["n"])
        parts = {"S": [], "A": [], "T": [], "B": []}
        order = ("S", "T", "A", "B")
        for ev in b["events"]:
            dur, syl = VALUES[ev[0]], ev[4]
            opts = ev[5] if len(ev) > 5 else {}
            if opts.get("rest"):
                for k in parts:
                    parts[k].append(["r", dur, None, False, ev[2]])
                    prev.pop(k, None)
                continue
            if opts.get("solo"):
                for k in parts:
                    if k == "T":
                        note = [midi(ev[1]), dur, syl, False, ev[2]]
                    else:
                        note = ["r", dur, None, False, ev[2]]
                        prev.pop(k, None)
                    parts[k].append(note)
                prev["T"] = parts["T"][-1]
                continue
            v = next(voiced)
            pad = b.get("pad") is True or (b.get("pad") == "first" and ev is b["events"][0])
            for k, m in zip(order, v):
                p = prev.get(k)
                hold = syl == "~" or (pad and k != "T")
                if hold and p is not None and p[0] == m:
                    p[3] = True
                    note = [m, dur, None, False, ev[2]]
                elif pad and k != "T":
                    note = [m, dur, "Oo" if p is None or p[0] == "r" else ".", False, ev[2]]
                else:
                    note = [m, dur, None if syl == "~" else syl, False, ev[2]]
                parts[k].append(note)
                prev[k] = note
        collected.append((b, attrs, parts))
    # Formatted only now: a tie is marked on a note when the next bar holds it.
    for b, attrs, parts in collected:
        out.append(f"| {attrs}")
        for k in ("S", "A", "T", "B"):
            dyn = b.get("tdyn" if k == "T" else "x", "") or b.get("sdyn", "")
            out.append(f"{k}: {(dyn + ' ') if dyn else ''}{fmt_line(parts[k], True)}")
        rh, lh = piano(b)
        pdyn = b.get("pdyn", b.get("dyn", ""))
        out.append(f"P: {(pdyn + ' ') if pdyn else ''}{rh}")
        out.append(f"P@2: {lh}")
    text = "\n".join(out) + "\n"
    # Last chord under a fermata.
    lines = text.rstrip("\n").split("\n")
    last = max(i for i, l in enumerate(lines) if l.startswith("| 35"))
    lines = lines[:last + 1] + [l.replace(":w", ":w!") for l in lines[last + 1:]]
    Path(__file__).with_name("the-lamplighter.piece").write_text("\n".join(lines) + "\n", encoding="utf-8")


def fmt_line(seq, lyric: bool) -> str:
    toks = []
    for m, d, syl, tie, tones in merge_rests(seq):
        if m == "r":
            toks.append("R" if d == 16 and len(seq) and all(n[0] == "r" for n in seq) else f"r:{CODES[d]}")
            continue
        t = f"{spell_in(m, tones, True)}:{CODES[d]}{'~' if tie else ''}"
        if syl:
            t += f":{syl}"
        toks.append(t)
    return " ".join(toks)


def merge_rests(seq):
    out = []
    for n in seq:
        if out and out[-1][0] == "r" and n[0] == "r" and (out[-1][1] + n[1]) in CODES:
            out[-1] = ["r", out[-1][1] + n[1], None, False, n[4]]
        else:
            out.append(list(n))
    return merge(out)


def close_chord(tones: str, low: int, high: int) -> list:
    out = []
    for t in tones.split():
        m = next(x for x in range(low, high + 1) if (x - midi(t + "4")) % 12 == 0)
        out.append(m)
    return sorted(out)


def piano(b) -> tuple:
    """Off-beat chords in the right hand, root and fifth in the left, per half bar."""
    rh, lh = [], []
    t = 0
    halves = []
    for ev in b["events"]:
        d = VALUES[ev[0]]
        start = t
        t += d
        for h in range(0, 16, 8):
            if start <= h < t:
                halves.append((h, ev))
    final = b["n"] == "35"
    for h, ev in halves:
        tones, bass = ev[2], midi(ev[3])
        if bass >= midi("C3"):
            bass -= 12
        chord = close_chord(tones, midi("F4"), midi("E5"))
        names = "+".join(spell_in(m, tones, True) for m in chord)
        if final:
            rh.append(f"{names}:w")
            lh.append(f"{spell_in(bass - 12, tones, True)}+{spell_in(bass, tones, True)}:w")
            break
        rh.append(f"r:e {names}:e {names}:e {names}:e")
        fifth = bass + 7
        top = fifth if any((fifth - midi(x + '4')) % 12 == 0 for x in tones.split()) else bass + 12
        lh.append(f"{spell_in(bass, tones, True)}:q {spell_in(top, tones, True)}:q")
    return " ".join(rh), " ".join(lh)


if __name__ == "__main__":
    main()
