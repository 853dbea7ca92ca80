"""Turn a chordal sketch (melody, bass, harmony, rhythm, words) into a ``.piece`` source.

A sketch lists bars of events ``(duration, melody, chord tones, bass, syllable, options)``.
The inner voices are filled in by ``voicing.voice``; the result is written out as the
four staves of a choir score.  Eight voices become four parts:

* Soprano I/II -> one staff, two voices (``S.1`` / ``S.2``) where they divide;
* Alto I/II and Tenor I/II -> one staff each, chords where they divide;
* Bass I/II -> one staff, two voices.

A syllable ``~`` continues the previous one: voices that keep their pitch are tied, the
others move on within the melisma.  Consecutive tied notes in a bar are merged when a
single note value covers them.
"""

from __future__ import annotations

from voicing import NAMES, Chord, spell, voice


def spell_in(m: int, tones: str, flats: bool) -> str:
    """Spell a MIDI number as the chord names it (A7 in F major keeps its C sharp)."""
    for name in tones.split():
        alter = name.count("#") - name.count("b")
        if (NAMES[name[0]] + alter - m) % 12 == 0:
            octave = (m - alter - NAMES[name[0]]) // 12 - 1
            return f"{name}{octave}"
    return spell(m, flats)

VALUES = {"w": 16, "h.": 12, "h": 8, "q.": 6, "q": 4, "e.": 3, "e": 2, "s": 1}
CODES = {v: k for k, v in VALUES.items()}


def chord_of(ev, leading):
    dur, top, tones, bass, syl, opts = (list(ev) + [{}])[:6]
    if opts.get("nolt"):
        leading = None  # the leading tone is not leading anywhere here (e.g. A/C# going to F#m)
    return Chord(tones, top, bass, leading=leading if leading and leading in tones.split() else None,
                 fixed=opts.get("fixed"), unison_pairs=opts.get("unison", False))


def realise(bars, ranges, leading_by_bar, beam=80):
    """bars: list of dicts {"attrs", "events", "dyn"}; returns (bars, voicings)."""
    progression = []
    for b in bars:
        for ev in b["events"]:
            progression.append(chord_of(ev, leading_by_bar(b)))
    voiced = voice(progression, ranges, beam=beam, pairs_linked=True)
    return voiced


def lines(bars, voiced, n):
    """Per bar, per voice: list of [midi, duration, syllable, tie_to_next]."""
    out = []
    k = 0
    prev = [None] * n
    for b in bars:
        bar_lines = [[] for _ in range(n)]
        for ev in b["events"]:
            dur, syl = VALUES[ev[0]], ev[4]
            v = voiced[k]
            k += 1
            for i in range(n):
                if syl == "~" and prev[i] is not None and prev[i][0] == v[i]:
                    prev[i][3] = True  # tie the previous note into this one
                    note = [v[i], dur, None, False, ev[2]]
                else:
                    note = [v[i], dur, None if syl == "~" else syl, False, ev[2]]
                bar_lines[i].append(note)
                prev[i] = note
        out.append(bar_lines)
    return out


def merge(seq):
    """Merge tied notes inside one bar when one note value covers them."""
    res = []
    for note in seq:
        if res and res[-1][3] and res[-1][0] == note[0] and (res[-1][1] + note[1]) in CODES:
            res[-1] = [note[0], res[-1][1] + note[1], res[-1][2], note[3], res[-1][4]]
        else:
            res.append(list(note))
    return res


def fmt_single(seq, flats, lyric=True):
    toks = []
    for m, d, syl, tie, tones in merge(seq):
        t = f"{spell_in(m, tones, flats)}:{CODES[d]}{'~' if tie else ''}"
        if lyric and syl:
            t += f":{syl}"
        toks.append(t)
    return " ".join(toks)


def fmt_chord(upper, lower, flats):
    """Two lines sharing rhythm, written as chords (one note where they agree)."""
    toks = []
    # Merge only where both lines tie together.
    pairs = []
    for a, b in zip(upper, lower):
        if pairs and pairs[-1][0][3] and pairs[-1][1][3] and pairs[-1][0][0] == a[0] \
                and pairs[-1][1][0] == b[0] and (pairs[-1][0][1] + a[1]) in CODES:
            pa, pb = pairs[-1]
            pairs[-1] = ([a[0], pa[1] + a[1], pa[2], a[3], pa[4]], [b[0], pb[1] + b[1], pb[2], b[3], pb[4]])
        else:
            pairs.append((list(a), list(b)))
    for a, b in pairs:
        if a[0] == b[0]:
            p = spell_in(a[0], a[4], flats)
            tie = "~" if a[3] else ""
            toks.append(f"{p}:{CODES[a[1]]}{tie}")
        else:
            pa = spell_in(a[0], a[4], flats) + ("~" if a[3] else "")
            pb = spell_in(b[0], b[4], flats) + ("~" if b[3] else "")
            toks.append(f"{pa}+{pb}:{CODES[a[1]]}")
    return " ".join(toks)


def emit(header, bars, voiced, flats_by_bar, part_keys=("S", "A", "T", "B")):
    n = len(voiced[0])
    per_bar = lines(bars, voiced, n)
    out = [header.rstrip(), ""]
    same = lambda x, y: [p[0] for p in x] == [p[0] for p in y]  # noqa: E731
    # A staff written as two voices in one bar stays so in the next bar when a tie
    # crosses the barline (a tie joins notes of one voice).
    split = {k: [not same(bl[i], bl[i + 1]) for bl in per_bar] for k, i in (("S", 0), ("B", 6))}
    changed = True
    while changed:
        changed = False
        for k, i in (("S", 0), ("B", 6)):
            for j in range(len(per_bar) - 1):
                tied = per_bar[j][i][-1][3] or per_bar[j][i + 1][-1][3]
                if tied and split[k][j] != split[k][j + 1]:
                    split[k][j] = split[k][j + 1] = True
                    changed = True
    for j, (b, bl) in enumerate(zip(bars, per_bar)):
        flats = flats_by_bar(b)
        out.append(f"| {b['attrs']}")
        dyn = b.get("dyn", "")
        pre = (dyn + " ") if dyn else ""
        s1, s2, a1, a2, t1, t2, b1, b2 = bl
        if not split["S"][j]:
            out.append(f"S: {pre}{fmt_single(s1, flats)}")
        else:
            out.append(f"S.1: {pre}{fmt_single(s1, flats)}")
            out.append(f"S.2: {fmt_single(s2, flats)}")
        out.append(f"A: {pre}{fmt_chord(a1, a2, flats)}")
        out.append(f"T: {pre}{fmt_chord(t1, t2, flats)}")
        if not split["B"][j]:
            out.append(f"B: {pre}{fmt_single(b1, flats, lyric=False)}")
        else:
            out.append(f"B.1: {pre}{fmt_single(b1, flats, lyric=False)}")
            out.append(f"B.2: {fmt_single(b2, flats, lyric=False)}")
    return "\n".join(out) + "\n"
