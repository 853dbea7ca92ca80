#!/usr/bin/env python3
"""Check the sample scores with outside libraries (music21 and pretty_midi, PyPI).

Run with the reference venv:  /root/.cache/ambit/venv/bin/python sample-scores/src/check.py

For every piece it
* parses the .musicxml, the .mxl and the .mid with music21 and the .mid with pretty_midi;
* prints each part's sounding range (music21 ``toSoundingPitch``) beside the usual choral
  range for that voice (common practice, from memory: S C4-A5, A G3-E5, T C3-A4, B E2-E4);
* plays out the repeats with music21 ``expandRepeats()`` and compares the number of bars
  and quarter notes with the MIDI file written by compose.py;
* flags consecutive (parallel) fifths and octaves between any two sung lines, a chord or a
  second voice in one staff counting as its own line.

It exits non-zero when a file fails to parse, a range leaves the usual compass by more than
what the piece's README entry allows, or the repeat expansion disagrees with the MIDI.
"""

import sys
from pathlib import Path

import music21 as m21
import pretty_midi

ROOT = Path(__file__).resolve().parent.parent

# Usual choral compass per voice (common practice, from memory), sounding MIDI numbers.
USUAL = {
    "Soprano": (60, 81),  # C4-A5
    "Alto": (55, 76),  # G3-E5
    "Tenor": (48, 69),  # C3-A4
    "Bass": (40, 64),  # E2-E4
}
# Pieces that go beyond the usual compass on purpose: (piece slug, voice) -> allowed range.
ALLOWED = {
    ("the-lamplighter", "Tenor"): (48, 70),  # B-flat 4 climax, written for this
}


def voice_of(name: str) -> str | None:
    for v in USUAL:
        if name.lower().startswith(v.lower()):
            return v
    return None


def lines_of(part) -> dict:
    """Split a part into melodic lines: (voice id, 'top'/'bottom') -> [(offset, end, midi, bar)]."""
    out = {}
    for n in part.recurse().notes:
        off = float(n.getOffsetInHierarchy(part))
        end = off + float(n.quarterLength)
        bar = n.measureNumber
        voice = n.getContextByClass(m21.stream.Voice)
        vid = voice.id if voice is not None else "1"
        midis = sorted(p.midi for p in n.pitches)
        if n.tie is not None and n.tie.type in ("stop", "continue"):
            # Held across the bar: extend the previous note rather than start a new one.
            for key, midi in ((("top",), midis[-1]), (("bottom",), midis[0])):
                seq = out.get((vid,) + key)
                if seq and seq[-1][2] == midi:
                    seq[-1] = (seq[-1][0], end, midi, seq[-1][3])
            continue
        out.setdefault((vid, "top"), []).append((off, end, midis[-1], bar))
        out.setdefault((vid, "bottom"), []).append((off, end, midis[0], bar))
    # A line with no chord has identical top and bottom; keep one.
    for vid in {k[0] for k in out}:
        if out.get((vid, "top")) == out.get((vid, "bottom")):
            del out[(vid, "bottom")]
    return out


def sounding_at(line, t):
    for off, end, midi, bar in line:
        if off <= t < end:
            return midi, off, bar
    return None


def parallels(score) -> list:
    lines = {}
    for part in score.parts:
        name = part.partName or part.id
        if voice_of(name) is None:
            continue  # accompaniment
        for key, seq in lines_of(part).items():
            lines[f"{name}{'' if key == ('1', 'top') else ' ' + '/'.join(map(str, key))}"] = seq
    onsets = sorted({off for seq in lines.values() for off, *_ in seq})
    found = []
    names = list(lines)
    for i, a in enumerate(names):
        for b in names[i + 1:]:
            prev = None
            for t in onsets:
                pa, pb = sounding_at(lines[a], t), sounding_at(lines[b], t)
                if pa is None or pb is None:
                    prev = None
                    continue
                if prev is not None:
                    (qa, oa, _), (qb, ob, _) = prev
                    moved_a, moved_b = pa[1] != oa, pb[1] != ob
                    unison_line = qa == qb and pa[0] == pb[0]  # a divided section singing one line
                    if moved_a and moved_b and pa[0] != qa and pb[0] != qb and not unison_line:
                        before, after = abs(qa - qb) % 12, abs(pa[0] - pb[0]) % 12  # voices may cross
                        same_dir = (pa[0] - qa) * (pb[0] - qb) > 0
                        if before == after and before in (0, 7) and same_dir and qa != qb and pa[0] != pb[0] or (
                            before == after == 0 and same_dir
                        ):
                            kind = "octaves/unisons" if before == 0 else "fifths"
                            found.append(f"bar {pa[2]}: parallel {kind} {a} / {b} "
                                         f"({m21.pitch.Pitch(qa).nameWithOctave}-{m21.pitch.Pitch(qb).nameWithOctave} -> "
                                         f"{m21.pitch.Pitch(pa[0]).nameWithOctave}-{m21.pitch.Pitch(pb[0]).nameWithOctave})")
                prev = (pa, pb)
    return found


def check(slug: str) -> bool:
    ok = True
    xml_path = ROOT / f"{slug}.musicxml"
    print(f"== {slug}")
    score = m21.converter.parse(xml_path)
    mxl = m21.converter.parse(ROOT / f"{slug}.mxl")
    if len(mxl.parts) != len(score.parts) or len(mxl.recurse().notes) != len(score.recurse().notes):
        print("  FAIL: .mxl differs from .musicxml")
        ok = False
    sounding = score.toSoundingPitch()
    print(f"  title: {score.metadata.title!r}; parts: {len(score.parts)}; "
          f"bars written: {len(score.parts[0].getElementsByClass('Measure'))}")
    for part in sounding.parts:
        name = part.partName
        pitches = [p for n in part.recurse().notes for p in n.pitches]
        lo, hi = min(pitches, key=lambda p: p.midi), max(pitches, key=lambda p: p.midi)
        voice = voice_of(name)
        note = ""
        if voice:
            allowed = ALLOWED.get((slug, voice), USUAL[voice])
            inside = allowed[0] <= lo.midi and hi.midi <= allowed[1]
            note = "within usual compass" if inside else "OUTSIDE usual compass"
            ok &= inside
        else:
            note = "accompaniment"
        durations = {}
        for n in part.recurse().notes:
            for p in n.pitches:
                durations[p.midi] = durations.get(p.midi, 0.0) + float(n.quarterLength)
        total = sum(durations.values())
        mean = sum(k * v for k, v in durations.items()) / total
        print(f"  {name:12s} {lo.nameWithOctave:>5s} - {hi.nameWithOctave:<5s} "
              f"(MIDI {lo.midi}-{hi.midi}), mean {m21.pitch.Pitch(round(mean)).nameWithOctave} "
              f"({mean:.1f}), {note}")
    expanded = score.expandRepeats()
    bars = len(expanded.parts[0].getElementsByClass("Measure"))
    quarters = max(float(n.getOffsetInHierarchy(expanded) + n.quarterLength) for n in expanded.recurse().notes)
    midi = pretty_midi.PrettyMIDI(str(ROOT / f"{slug}.mid"))
    midi_m21 = m21.converter.parse(ROOT / f"{slug}.mid")
    # Last note end (a stream's own duration is padded out to whole bars).
    midi_quarters = max(float(n.offset + n.quarterLength) for n in midi_m21.flatten().notes)
    tempi = midi.get_tempo_changes()
    print(f"  expandRepeats: {bars} bars, {quarters:g} quarters; MIDI: {midi_quarters:g} quarters, "
          f"{midi.get_end_time():.1f} s, tempi {sorted(set(round(x) for x in tempi[1]))}, "
          f"tracks {[i.name for i in midi.instruments]}")
    if abs(quarters - midi_quarters) > 1e-6:
        print("  FAIL: repeat expansion and MIDI length disagree")
        ok = False
    found = parallels(sounding)
    print(f"  parallel fifths/octaves between sung lines: {len(found)}")
    for f in found:
        print("    " + f)
    return ok


def main() -> int:
    slugs = sys.argv[1:] or sorted(p.stem for p in ROOT.glob("*.musicxml"))
    ok = all([check(s) for s in slugs])
    return 0 if ok else 1


if __name__ == "__main__":
    sys.exit(main())
