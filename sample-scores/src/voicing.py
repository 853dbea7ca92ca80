"""A composer's aid: spread a chord progression over N voices with sound voice leading.

The composer chooses the melody, the bass, the harmony, the rhythm and the words; this
helper only fills in the inner voices.  It searches (beam search over the progression)
for voicings that

* keep every voice inside its range and the voices in order (no crossing);
* keep adjacent upper voices within an octave of each other;
* sound every chord tone (the fifth may be left out);
* avoid consecutive fifths and octaves between any two voices that both move, and
  unequal fifths (d5 -> P5) nowhere;
* do not double the leading tone (when one is named);
* move each voice as little as possible, preferring steps and common tones.

Rules of common-practice part writing as found in any harmony textbook (common practice,
from memory).  Used by the ``*.sketch.py`` files, which write ``*.piece`` sources.
"""

from __future__ import annotations

import itertools

NAMES = {"C": 0, "D": 2, "E": 4, "F": 5, "G": 7, "A": 9, "B": 11}


def midi(name: str) -> int:
    step, rest = name[0], name[1:]
    alter = 0
    while rest and rest[0] in "#b":
        alter += 1 if rest[0] == "#" else -1
        rest = rest[1:]
    return 12 * (int(rest) + 1) + NAMES[step] + alter


def pc(name: str) -> int:
    return midi(name + "4") % 12


def spell(m: int, flats: bool) -> str:
    names = ["C", "Db", "D", "Eb", "E", "F", "Gb", "G", "Ab", "A", "Bb", "B"] if flats else \
        ["C", "C#", "D", "D#", "E", "F", "F#", "G", "G#", "A", "A#", "B"]
    return f"{names[m % 12]}{m // 12 - 1}"


class Chord:
    def __init__(self, tones: str, top: str | None, bass: str, leading: str | None = None,
                 fixed: dict | None = None, omit_fifth_ok: bool = True, unison_pairs: bool = False):
        self.tones = [pc(t) for t in tones.split()]
        self.top = midi(top) if top else None
        self.bass = midi(bass)
        self.leading = pc(leading) if leading else None
        self.fixed = {k: midi(v) for k, v in (fixed or {}).items()}
        self.omit_fifth_ok = omit_fifth_ok
        self.unison_pairs = unison_pairs


def candidates(chord: Chord, ranges: list) -> list:
    n = len(ranges)
    options = []
    for i, (lo, hi) in enumerate(ranges):
        if i in chord.fixed:
            options.append([chord.fixed[i]])
        elif i == 0 and chord.top is not None:
            options.append([chord.top])
        elif i == n - 1 or (chord.unison_pairs and i == n - 2):
            options.append([chord.bass])
        elif chord.unison_pairs and i == 1 and chord.top is not None:
            options.append([chord.top])
        else:
            options.append([m for m in range(midi(lo), midi(hi) + 1) if m % 12 in chord.tones])
    out = []
    for combo in itertools.product(*options):
        if any(combo[i] < combo[i + 1] for i in range(n - 1)):
            continue  # voices in order, top first
        if any(combo[i] - combo[i + 1] > 12 for i in range(n - 3)):
            continue  # upper voices within an octave of each other
        if combo[n - 3] - combo[n - 2] > 19 or combo[n - 2] - combo[n - 1] > 19:
            continue  # the lowest voices may stand further apart
        pcs = {m % 12 for m in combo}
        needed = set(chord.tones)
        if chord.omit_fifth_ok and len(chord.tones) >= 3:
            needed.discard(chord.tones[2])
        if not needed <= pcs:
            continue
        heard = combo[::2] if chord.unison_pairs else combo  # a unison pair is one line
        if chord.leading is not None and sum(1 for m in heard if m % 12 == chord.leading) > 1:
            continue
        if chord.unison_pairs and any(combo[2 * k] != combo[2 * k + 1] for k in range(n // 2)):
            continue
        out.append(combo)
    return out


def bad_motion(a, b, pairs_linked: bool) -> bool:
    n = len(a)
    for i in range(n):
        for j in range(i + 1, n):
            if a[i] == a[j] and b[i] == b[j]:
                continue  # two voices in unison sing one line
            ia, ib = (a[i] - a[j]) % 12, (b[i] - b[j]) % 12
            mi, mj = b[i] - a[i], b[j] - a[j]
            if mi == 0 or mj == 0:
                continue
            if ia == ib and ia in (0, 7) and (mi > 0) == (mj > 0):
                return True
            if ia == ib == 0 and a[i] - a[j] != b[i] - b[j] and i == 0 and j == n - 1:
                return True  # octaves by contrary motion between the outer voices
            if ia == 6 and ib == 7 and (j == n - 1):
                return True  # d5 -> P5 against the bass
    return False


def cost(a, b) -> float:
    c = 0.0
    for x, y in zip(a, b):
        d = abs(x - y)
        c += d if d <= 2 else 2 + 2.5 * (d - 2)  # steps are cheap, leaps dear
        if d > 7:
            c += 6
    return c


def static_cost(v, centres) -> float:
    """Prefer each voice near the middle of its range, and sections that do not merge:
    a divided section in unison costs a little, two sections in unison a lot."""
    c = 0.0
    for i in range(len(v) - 1):
        if v[i] == v[i + 1]:
            c += 1.0 if (len(v) == 8 and i % 2 == 0) else 8.0
    for m, centre in zip(v, centres):
        c += 0.6 * abs(m - centre)
    return c


def voice(progression: list, ranges: list, start: tuple | None = None, beam: int = 60,
          pairs_linked: bool = False) -> list:
    """Return one tuple of MIDI numbers (top voice first) per chord."""
    centres = [(midi(lo) + midi(hi)) / 2 for lo, hi in ranges]
    states = [(0.0, [start])] if start else [(0.0, [])]
    for index, chord in enumerate(progression):
        cands = candidates(chord, ranges)
        if not cands:
            raise ValueError(f"chord {index}: no voicing for {chord.tones} top {chord.top} bass {chord.bass}")
        new = []
        for score, path in states:
            prev = path[-1] if path else None
            for c in cands:
                if prev is not None:
                    if bad_motion(prev, c, pairs_linked):
                        continue
                    s = score + cost(prev, c) + static_cost(c, centres)
                else:
                    s = score + static_cost(c, centres)
                new.append((s, path + [c]))
        if not new:
            raise ValueError(f"chord {index}: voice leading impossible into {chord.tones} top {chord.top}")
        new.sort(key=lambda x: x[0])
        states = new[:beam]
    best = states[0][1]
    return best[1:] if start else best
