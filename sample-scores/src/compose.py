#!/usr/bin/env python3
"""Build Ambit's sample scores from their plain-text sources.

Each piece lives in one ``*.piece`` file next to this script, written in a small
bar-by-bar notation (described in ``NOTATION.md``).  This script turns every
source into

* ``<slug>.musicxml`` -- uncompressed MusicXML 4.0 ``score-partwise``;
* ``<slug>.mxl``      -- the same document as compressed MusicXML (zip with
  ``mimetype`` stored first and ``META-INF/container.xml`` naming the root file);
* ``<slug>.mid``      -- a Standard MIDI File, format 1, written here directly:
  one conductor track (tempo map, time and key signatures) and one track per
  part, with the repeats played out in performance order.

Only the Python standard library is used, so the scores can be rebuilt on any
machine with ``python3 sample-scores/src/compose.py``.  The output is
byte-for-byte reproducible (fixed dates inside the zip and the XML).

Pitches in the sources are *sounding* pitches.  A part declared with the
``treble8`` clef (the tenor's octave-treble clef) is written an octave higher
and carries ``<transpose><octave-change>-1</octave-change></transpose>``, as
MusicXML requires, so readers must apply the transposition to get the sound.
"""

from __future__ import annotations

import re
import struct
import sys
import zipfile
from dataclasses import dataclass, field
from pathlib import Path
from xml.sax.saxutils import escape

HERE = Path(__file__).resolve().parent
OUT_DIR = HERE.parent
ENCODING_DATE = "2026-12-02"
ZIP_DATE = (2026, 12, 2, 0, 0, 0)

# MusicXML divisions per quarter note used by every piece (16ths are the
# smallest value the sources use).
DIVISIONS = 4

DURATIONS = {"w": 16, "h": 8, "q": 4, "e": 2, "s": 1}
TYPE_NAMES = {16: "whole", 8: "half", 4: "quarter", 2: "eighth", 1: "16th", 32: "breve"}
STEPS = "CDEFGAB"
STEP_SEMITONES = {"C": 0, "D": 2, "E": 4, "F": 5, "G": 7, "A": 9, "B": 11}
SHARP_ORDER = "FCGDAEB"
FLAT_ORDER = "BEADGCF"
ACCIDENTAL_NAMES = {-2: "flat-flat", -1: "flat", 0: "natural", 1: "sharp", 2: "double-sharp"}
# MusicXML <sound dynamics> is a percentage of a forte-ish velocity 90; these
# are the usual values written by notation programs (from memory).
DYNAMIC_SOUND = {"ppp": 18, "pp": 36, "p": 54, "mp": 71, "mf": 89, "f": 106, "ff": 124, "fff": 141}
# MIDI velocities for the same marks (from memory; common practice in sequencers).
DYNAMIC_VELOCITY = {"ppp": 20, "pp": 33, "p": 49, "mp": 64, "mf": 80, "f": 96, "ff": 112, "fff": 127}
# General MIDI programs (1-based) that mark a part as sung: choir aahs, voice oohs, synth voice.
VOICE_PROGRAMS = (53, 54, 55)
CLEFS = {
    "treble": ("G", 2, 0),
    "treble8": ("G", 2, -1),
    "bass": ("F", 4, 0),
}


class SourceError(Exception):
    """A mistake in a ``.piece`` source, with file and line."""


@dataclass
class PartDef:
    key: str
    name: str
    abbreviation: str
    clefs: list  # one clef name per staff
    program: int  # General MIDI program number, 1-based as in MusicXML

    @property
    def staves(self) -> int:
        return len(self.clefs)

    @property
    def octave_change(self) -> int:
        return CLEFS[self.clefs[0]][2] if self.staves == 1 else 0


@dataclass
class Note:
    rest: bool
    pitches: list  # list of (step, alter, octave), sounding
    duration: int  # in divisions
    tie_starts: list = field(default_factory=list)  # per pitch: tied on to the next note
    tie_stops: list = field(default_factory=list)  # per pitch: tied from the previous note
    lyrics: list = field(default_factory=list)  # one entry per verse; None = none
    measure_rest: bool = False
    fermata: bool = False


@dataclass
class Direction:
    kind: str  # "dynamic", "wedge", "words"
    value: str


@dataclass
class Voice:
    staff: int
    number: int
    events: list = field(default_factory=list)  # Note or Direction, in order

    def length(self) -> int:
        return sum(e.duration for e in self.events if isinstance(e, Note))


@dataclass
class Bar:
    number: str
    line: int
    implicit: bool = False
    repeat_start: bool = False
    repeat_end: bool = False
    ending: str | None = None
    tempo: int | None = None
    tempo_text: str | None = None
    key: int | None = None
    time: tuple | None = None
    final: bool = False
    double: bool = False
    words: str | None = None
    parts: dict = field(default_factory=dict)  # part key -> list[Voice]


@dataclass
class Piece:
    slug: str
    title: str = ""
    subtitle: str = ""
    composer: str = ""
    lyricist: str = ""
    rights: str = ""
    key: int = 0
    mode: str = "major"
    time: tuple = (4, 4)
    tempo: int = 90
    tempo_text: str = ""
    lyrics_follow: str = ""  # part whose syllables the other voice parts take where onsets agree
    parts: list = field(default_factory=list)
    bars: list = field(default_factory=list)


PITCH_RE = re.compile(r"^([A-G])(##|bb|#|b|n)?(-?\d)$")


def parse_pitch(text: str, where: str) -> tuple:
    m = PITCH_RE.match(text)
    if not m:
        raise SourceError(f"{where}: bad pitch {text!r}")
    acc = {None: 0, "n": 0, "#": 1, "##": 2, "b": -1, "bb": -2}[m.group(2)]
    return (m.group(1), acc, int(m.group(3)))


def parse_duration(text: str, where: str) -> int:
    if not text or text[0] not in DURATIONS:
        raise SourceError(f"{where}: bad duration {text!r}")
    base = DURATIONS[text[0]]
    total, add = base, base
    for ch in text[1:]:
        if ch != ".":
            raise SourceError(f"{where}: bad duration {text!r}")
        add //= 2
        total += add
    return total


def parse_note(token: str, verses: int, where: str) -> Note:
    # PITCH[+PITCH...]:DUR[~][!][:lyric[|lyric...]]
    fields = token.split(":", 2)
    if len(fields) < 2:
        raise SourceError(f"{where}: note {token!r} needs PITCH:DURATION")
    pitch_text, dur_text = fields[0], fields[1]
    tie = dur_text.endswith("~") or dur_text.endswith("~!")
    fermata = "!" in dur_text
    dur_text = dur_text.replace("~", "").replace("!", "")
    duration = parse_duration(dur_text, where)
    lyrics = []
    if len(fields) == 3:
        lyrics = fields[2].split("|")
        lyrics = [None if s in ("", ".") else s.replace("+", " ") for s in lyrics]
    if pitch_text == "r":
        return Note(True, [], duration, fermata=fermata)
    # A '~' after one pitch of a chord ties that pitch only; after the duration, all of them.
    texts = pitch_text.split("+")
    pitches = [parse_pitch(p.rstrip("~"), where) for p in texts]
    ties = [tie or p.endswith("~") for p in texts]
    return Note(False, pitches, duration, tie_starts=ties, tie_stops=[False] * len(pitches),
                lyrics=lyrics, fermata=fermata)


def parse_source(path: Path) -> Piece:
    piece = Piece(slug=path.stem)
    current: Bar | None = None
    parts_by_key = {}
    for lineno, raw in enumerate(path.read_text(encoding="utf-8").splitlines(), 1):
        # Comments start with '#' at the line start or after a space ('C#4' is a pitch).
        line = re.sub(r"(^|\s)#.*$", "", raw).rstrip()
        where = f"{path.name}:{lineno}"
        if not line.strip():
            continue
        if line.startswith("@"):
            name, _, value = line[1:].partition(" ")
            value = value.strip()
            if name == "part":
                # @part KEY "Name" ABBR clef[,clef] program
                m = re.match(r'(\S+)\s+"([^"]+)"\s+(\S+)\s+(\S+)\s+(\d+)$', value)
                if not m:
                    raise SourceError(f"{where}: bad @part line")
                clefs = m.group(4).split(",")
                for c in clefs:
                    if c not in CLEFS:
                        raise SourceError(f"{where}: unknown clef {c}")
                p = PartDef(m.group(1), m.group(2), m.group(3), clefs, int(m.group(5)))
                piece.parts.append(p)
                parts_by_key[p.key] = p
            elif name in ("title", "subtitle", "composer", "lyricist", "rights", "tempo_text", "mode", "lyrics_follow"):
                setattr(piece, name, value)
            elif name == "key":
                piece.key = int(value)
            elif name == "time":
                a, b = value.split("/")
                piece.time = (int(a), int(b))
            elif name == "tempo":
                piece.tempo = int(value)
            else:
                raise SourceError(f"{where}: unknown header @{name}")
            continue
        if line.startswith("|"):
            words = line[1:].split()
            current = Bar(number=words[0], line=lineno)
            for attr in words[1:]:
                k, _, v = attr.partition("=")
                if k == "implicit":
                    current.implicit = True
                elif k == "repeat-start":
                    current.repeat_start = True
                elif k == "repeat-end":
                    current.repeat_end = True
                elif k == "ending":
                    current.ending = v
                elif k == "tempo":
                    current.tempo = int(v)
                elif k == "tempo-text":
                    current.tempo_text = v.replace("_", " ")
                elif k == "words":
                    current.words = v.replace("_", " ")
                elif k == "key":
                    current.key = int(v)
                elif k == "time":
                    a, b = v.split("/")
                    current.time = (int(a), int(b))
                elif k == "final":
                    current.final = True
                elif k == "double":
                    current.double = True
                else:
                    raise SourceError(f"{where}: unknown bar attribute {attr}")
            piece.bars.append(current)
            continue
        m = re.match(r"^\s*([A-Za-z0-9]+)(?:@(\d))?(?:\.(\d))?:\s*(.*)$", line)
        if not m or current is None:
            raise SourceError(f"{where}: cannot read line {raw!r}")
        key = m.group(1)
        if key not in parts_by_key:
            raise SourceError(f"{where}: unknown part {key}")
        staff = int(m.group(2) or 1)
        number = int(m.group(3) or (1 if staff == 1 else 5))
        voice = Voice(staff, number)
        for token in m.group(4).split():
            if token.startswith("!"):
                body = token[1:]
                if body in DYNAMIC_SOUND:
                    voice.events.append(Direction("dynamic", body))
                elif body in ("cresc", "dim", "end"):
                    voice.events.append(Direction("wedge", body))
                elif body.startswith("w:"):
                    voice.events.append(Direction("words", body[2:].replace("_", " ")))
                else:
                    raise SourceError(f"{where}: unknown direction {token}")
            elif token == "R":
                voice.events.append(Note(True, [], 0, measure_rest=True))
            else:
                voice.events.append(parse_note(token, 1, where))
        voices = current.parts.setdefault(key, [])
        if any(v.staff == staff and v.number == number for v in voices):
            raise SourceError(f"{where}: voice {number} on staff {staff} given twice in bar {current.number}")
        voices.append(voice)
    return piece


def check_and_fill(piece: Piece) -> None:
    """Check every voice fills its bar; fill measure rests; mark tie stops."""
    time = piece.time
    pending = {}  # (part, staff, voice, midi) -> True
    for bar in piece.bars:
        if bar.time:
            time = bar.time
        full = time[0] * DIVISIONS * 4 // time[1]
        for part in piece.parts:
            if part.key not in bar.parts:
                raise SourceError(f"bar {bar.number} (line {bar.line}): part {part.key} missing")
        lengths = set()
        for key, voices in bar.parts.items():
            for v in voices:
                for e in v.events:
                    if isinstance(e, Note) and e.measure_rest:
                        e.duration = full
                lengths.add(v.length())
        expected = full if not bar.implicit else max(lengths)
        for key, voices in bar.parts.items():
            for v in voices:
                if v.length() != expected:
                    raise SourceError(
                        f"bar {bar.number} (line {bar.line}): part {key} staff {v.staff} voice {v.number} "
                        f"has {v.length()} divisions, expected {expected}"
                    )
                for e in v.events:
                    if not isinstance(e, Note) or e.rest:
                        continue
                    ident = (key, v.staff, v.number)
                    for k, p in enumerate(e.pitches):
                        m = midi_of(p)
                        if pending.pop((ident, m), None):
                            e.tie_stops[k] = True
                        if e.tie_starts[k]:
                            pending[(ident, m)] = True
    if pending:
        raise SourceError(f"unfinished ties: {sorted(pending)}")
    if piece.lyrics_follow:
        copy_lyrics(piece)


def copy_lyrics(piece: Piece) -> None:
    """Homophonic writing: a voice part's note with no syllable of its own takes the
    leading part's syllables when both notes start together (ties and rests excepted)."""
    for bar in piece.bars:
        leader = {}
        t = 0
        for e in bar.parts[piece.lyrics_follow][0].events:
            if isinstance(e, Note):
                if not e.rest and e.lyrics:
                    leader[t] = e.lyrics
                t += e.duration
        for part in piece.parts:
            if part.program not in VOICE_PROGRAMS:
                continue
            for n_voice, voice in enumerate(bar.parts[part.key]):
                if part.key == piece.lyrics_follow and n_voice == 0:
                    continue
                t = 0
                for e in voice.events:
                    if not isinstance(e, Note):
                        continue
                    if not e.rest and not all(e.tie_stops) and not e.lyrics and t in leader:
                        e.lyrics = list(leader[t])
                    t += e.duration


def midi_of(p: tuple) -> int:
    step, alter, octave = p
    return 12 * (octave + 1) + STEP_SEMITONES[step] + alter


def key_alters(fifths: int) -> dict:
    alters = {s: 0 for s in STEPS}
    if fifths > 0:
        for s in SHARP_ORDER[:fifths]:
            alters[s] = 1
    elif fifths < 0:
        for s in FLAT_ORDER[:-fifths]:
            alters[s] = -1
    return alters


def note_type(duration: int) -> tuple:
    """Return (type name, dots) for a duration in divisions."""
    for base in sorted(TYPE_NAMES, reverse=True):
        if duration == base:
            return TYPE_NAMES[base], 0
        if duration == base + base // 2 and base >= 2:
            return TYPE_NAMES[base], 1
        if duration == base + base // 2 + base // 4 and base >= 4:
            return TYPE_NAMES[base], 2
    raise SourceError(f"no single note value lasts {duration} divisions")


# ---------------------------------------------------------------- MusicXML


def write_musicxml(piece: Piece) -> str:
    out = []
    w = out.append
    w('<?xml version="1.0" encoding="UTF-8" standalone="no"?>')
    w('<!DOCTYPE score-partwise PUBLIC "-//Recordare//DTD MusicXML 4.0 Partwise//EN" '
      '"http://www.musicxml.org/dtds/partwise.dtd">')
    w('<score-partwise version="4.0">')
    w(f"  <work><work-title>{escape(piece.title)}</work-title></work>")
    w("  <identification>")
    w(f'    <creator type="composer">{escape(piece.composer)}</creator>')
    if piece.lyricist:
        w(f'    <creator type="lyricist">{escape(piece.lyricist)}</creator>')
    w(f"    <rights>{escape(piece.rights)}</rights>")
    w("    <encoding>")
    w("      <software>Ambit sample-scores/src/compose.py</software>")
    w(f"      <encoding-date>{ENCODING_DATE}</encoding-date>")
    w('      <supports element="accidental" type="yes"/>')
    w('      <supports element="beam" type="no"/>')
    w("    </encoding>")
    w("  </identification>")
    w("  <credit page=\"1\"><credit-type>title</credit-type>"
      f"<credit-words justify=\"center\" valign=\"top\" font-size=\"20\">{escape(piece.title)}</credit-words></credit>")
    if piece.subtitle:
        w("  <credit page=\"1\"><credit-type>subtitle</credit-type>"
          f"<credit-words justify=\"center\" valign=\"top\" font-size=\"12\">{escape(piece.subtitle)}</credit-words></credit>")
    w("  <part-list>")
    voice_parts = [p for p in piece.parts if p.program in VOICE_PROGRAMS]
    for i, part in enumerate(piece.parts, 1):
        if voice_parts and part is voice_parts[0]:
            w('    <part-group type="start" number="1"><group-symbol>bracket</group-symbol></part-group>')
        pid = f"P{i}"
        w(f'    <score-part id="{pid}">')
        w(f"      <part-name>{escape(part.name)}</part-name>")
        w(f"      <part-abbreviation>{escape(part.abbreviation)}</part-abbreviation>")
        instrument = "Voice" if part in voice_parts else "Piano"
        w(f'      <score-instrument id="{pid}-I1"><instrument-name>{instrument}</instrument-name></score-instrument>')
        w(f'      <midi-instrument id="{pid}-I1"><midi-channel>{i}</midi-channel>'
          f"<midi-program>{part.program}</midi-program><volume>80</volume></midi-instrument>")
        w("    </score-part>")
        if voice_parts and part is voice_parts[-1]:
            w('    <part-group type="stop" number="1"/>')
    w("  </part-list>")
    for i, part in enumerate(piece.parts, 1):
        w(f'  <part id="P{i}">')
        write_part(piece, part, i == 1, w)
        w("  </part>")
    w("</score-partwise>")
    return "\n".join(out) + "\n"


def write_part(piece: Piece, part: PartDef, first: bool, w) -> None:
    fifths = piece.key
    time = piece.time
    ending_open = None
    words = {}  # ((staff, voice), verse) -> the last syllable left its word open
    for index, bar in enumerate(piece.bars):
        nxt = piece.bars[index + 1] if index + 1 < len(piece.bars) else None
        attrs = ' implicit="yes"' if bar.implicit else ""
        w(f'    <measure number="{bar.number}"{attrs}>')
        # Left barline: forward repeat and the start of an ending bracket.
        starts_ending = bar.ending and (index == 0 or piece.bars[index - 1].ending != bar.ending)
        if bar.repeat_start or starts_ending:
            w('      <barline location="left">')
            if bar.repeat_start:
                w("        <bar-style>heavy-light</bar-style>")
            if starts_ending:
                w(f'        <ending number="{bar.ending}" type="start">{bar.ending}.</ending>')
                ending_open = bar.ending
            if bar.repeat_start:
                w('        <repeat direction="forward"/>')
            w("      </barline>")
        if index == 0 or bar.key is not None or bar.time is not None:
            if bar.key is not None:
                fifths = bar.key
            if bar.time is not None:
                time = bar.time
            w("      <attributes>")
            if index == 0:
                w(f"        <divisions>{DIVISIONS}</divisions>")
            if index == 0 or bar.key is not None:
                w(f"        <key><fifths>{fifths}</fifths><mode>{piece.mode}</mode></key>")
            if index == 0 or bar.time is not None:
                w(f"        <time><beats>{time[0]}</beats><beat-type>{time[1]}</beat-type></time>")
            if index == 0:
                if part.staves > 1:
                    w(f"        <staves>{part.staves}</staves>")
                for s, clef in enumerate(part.clefs, 1):
                    sign, line, octave = CLEFS[clef]
                    num = f' number="{s}"' if part.staves > 1 else ""
                    extra = f"<clef-octave-change>{octave}</clef-octave-change>" if octave else ""
                    w(f"        <clef{num}><sign>{sign}</sign><line>{line}</line>{extra}</clef>")
                if part.octave_change:
                    w("        <transpose><diatonic>0</diatonic><chromatic>0</chromatic>"
                      f"<octave-change>{part.octave_change}</octave-change></transpose>")
            w("      </attributes>")
        if first:
            tempo = piece.tempo if index == 0 else bar.tempo
            text = (piece.tempo_text if index == 0 else bar.tempo_text) or ""
            if tempo is not None:
                w('      <direction placement="above"><direction-type>')
                if text:
                    w(f'        <words font-weight="bold">{escape(text)}</words></direction-type><direction-type>')
                w(f"        <metronome parentheses=\"no\"><beat-unit>quarter</beat-unit><per-minute>{tempo}</per-minute></metronome>")
                w(f'      </direction-type><sound tempo="{tempo}"/></direction>')
            if bar.words:
                w(f'      <direction placement="above"><direction-type><words font-style="italic">{escape(bar.words)}</words></direction-type></direction>')
        voices = bar.parts[part.key]
        bar_length = voices[0].length()
        alters = {}  # (staff, step, octave) -> alter in force in this bar
        key_alt = key_alters(fifths)
        multi = {}  # staff -> number of voices on it
        for v in voices:
            multi[v.staff] = multi.get(v.staff, 0) + 1
        for vi, voice in enumerate(voices):
            if vi > 0:
                w(f"      <backup><duration>{bar_length}</duration></backup>")
            for e in voice.events:
                if isinstance(e, Direction):
                    write_direction(e, voice, part, w)
                    continue
                write_note(e, voice, part, multi[voice.staff] > 1, alters, key_alt, words, w)
        # Right barline.
        ends_ending = bar.ending and (nxt is None or nxt.ending != bar.ending)
        if bar.repeat_end or ends_ending or bar.final or bar.double:
            w('      <barline location="right">')
            style = "light-heavy" if (bar.repeat_end or bar.final) else ("light-light" if bar.double else None)
            if style:
                w(f"        <bar-style>{style}</bar-style>")
            if ends_ending:
                kind = "stop" if bar.repeat_end or bar.final else "discontinue"
                w(f'        <ending number="{bar.ending}" type="{kind}"/>')
                ending_open = None
            if bar.repeat_end:
                w('        <repeat direction="backward"/>')
            w("      </barline>")
        w("    </measure>")
    assert ending_open is None


def write_direction(d: Direction, voice: Voice, part: PartDef, w) -> None:
    staff = f"<staff>{voice.staff}</staff>" if part.staves > 1 else ""
    if d.kind == "dynamic":
        w(f'      <direction placement="below"><direction-type><dynamics><{d.value}/></dynamics></direction-type>'
          f'<voice>{voice.number}</voice>{staff}<sound dynamics="{DYNAMIC_SOUND[d.value]}"/></direction>')
    elif d.kind == "wedge":
        kind = {"cresc": "crescendo", "dim": "diminuendo", "end": "stop"}[d.value]
        w(f'      <direction placement="below"><direction-type><wedge type="{kind}" number="1"/></direction-type>'
          f"<voice>{voice.number}</voice>{staff}</direction>")
    else:
        w(f'      <direction placement="above"><direction-type><words font-style="italic">{escape(d.value)}</words>'
          f"</direction-type><voice>{voice.number}</voice>{staff}</direction>")


def write_note(n: Note, voice: Voice, part: PartDef, shared_staff: bool, alters: dict, key_alt: dict,
               words: dict, w) -> None:
    staff = f"<staff>{voice.staff}</staff>" if part.staves > 1 else ""
    if n.rest:
        rest = '<rest measure="yes"/>' if n.measure_rest else "<rest/>"
        kind = ""
        if not n.measure_rest:
            name, dots = note_type(n.duration)
            kind = f"<type>{name}</type>" + "<dot/>" * dots
        notations = "<notations><fermata type=\"upright\"/></notations>" if n.fermata else ""
        w(f"      <note>{rest}<duration>{n.duration}</duration><voice>{voice.number}</voice>{kind}{staff}{notations}</note>")
        return
    name, dots = note_type(n.duration)
    # Written pitch: the sounding pitch moved by the clef's octave (tenor clef sounds an octave lower).
    shift = -part.octave_change if part.staves == 1 else 0
    for k, (step, alter, octave) in enumerate(n.pitches):
        tie_start, tie_stop = n.tie_starts[k], n.tie_stops[k]
        woct = octave + shift
        parts = ["<note>"]
        if k > 0:
            parts.append("<chord/>")
        alter_xml = f"<alter>{alter}</alter>" if alter else ""
        parts.append(f"<pitch><step>{step}</step>{alter_xml}<octave>{woct}</octave></pitch>")
        parts.append(f"<duration>{n.duration}</duration>")
        if tie_stop:
            parts.append('<tie type="stop"/>')
        if tie_start:
            parts.append('<tie type="start"/>')
        parts.append(f"<voice>{voice.number}</voice><type>{name}</type>" + "<dot/>" * dots)
        # Accidentals as printed: against the key signature and earlier notes in the bar.
        slot = (voice.staff, step, woct)
        in_force = alters.get(slot, key_alt[step])
        if alter != in_force and not tie_stop:
            parts.append(f"<accidental>{ACCIDENTAL_NAMES[alter]}</accidental>")
        if not tie_stop or slot in alters:
            alters[slot] = alter
        if shared_staff:
            parts.append(f"<stem>{'up' if voice.number in (1, 5) else 'down'}</stem>")
        parts.append(staff)
        notations = []
        if tie_stop:
            notations.append('<tied type="stop"/>')
        if tie_start:
            notations.append('<tied type="start"/>')
        if n.fermata and k == 0:
            notations.append('<fermata type="upright"/>')
        if notations:
            parts.append("<notations>" + "".join(notations) + "</notations>")
        if k == 0:
            for verse, text in enumerate(n.lyrics, 1):
                if text is None:
                    continue
                parts.append(lyric_xml(verse, text, words, (voice.staff, voice.number)))
        parts.append("</note>")
        w("      " + "".join(parts))


def lyric_xml(verse: int, text: str, words: dict, ident: tuple) -> str:
    """One syllable.  A trailing '-' means the word goes on to the next syllable of
    this verse in this voice; a trailing '_' draws a melisma line after it."""
    extend = text.endswith("_")
    if extend:
        text = text[:-1]
    continues = text.endswith("-")
    if continues:
        text = text[:-1]
    began = words.get((ident, verse), False)
    words[(ident, verse)] = continues
    if began and continues:
        syllabic = "middle"
    elif began:
        syllabic = "end"
    elif continues:
        syllabic = "begin"
    else:
        syllabic = "single"
    ext = "<extend/>" if extend else ""
    return (f'<lyric number="{verse}"><syllabic>{syllabic}</syllabic>'
            f"<text>{escape(text)}</text>{ext}</lyric>")


# ---------------------------------------------------------------- performance order


def performance_order(piece: Piece) -> list:
    """Indices of bars in the order they are sung, repeats and endings played out.

    Supports what the sources use: |: ... :| sections (a backward repeat with no
    forward one goes back to the start), played twice, with numbered endings.
    """
    order = []
    i = 0
    section_start = 0
    passes = {}  # index of the repeat-end bar -> times taken
    current_pass = 1
    while i < len(piece.bars):
        bar = piece.bars[i]
        if bar.repeat_start and i != section_start:
            section_start = i
            current_pass = 1
        if bar.ending and str(current_pass) not in bar.ending.split(","):
            i += 1
            continue
        order.append(i)
        if bar.repeat_end and passes.get(i, 0) == 0:
            passes[i] = 1
            current_pass = 2
            i = section_start
            continue
        if bar.repeat_end:
            current_pass = 1
        i += 1
    return order


# ---------------------------------------------------------------- MIDI


def vlq(value: int) -> bytes:
    out = [value & 0x7F]
    value >>= 7
    while value:
        out.append(0x80 | (value & 0x7F))
        value >>= 7
    return bytes(reversed(out))


def track_chunk(events: list) -> bytes:
    """events: list of (tick, order, bytes); returns an MTrk chunk."""
    events.sort(key=lambda e: (e[0], e[1]))
    data = bytearray()
    last = 0
    for tick, _, payload in events:
        data += vlq(tick - last) + payload
        last = tick
    data += vlq(0) + b"\xff\x2f\x00"
    return b"MTrk" + struct.pack(">I", len(data)) + bytes(data)


def meta(kind: int, payload: bytes) -> bytes:
    return bytes([0xFF, kind]) + vlq(len(payload)) + payload


def write_midi(piece: Piece) -> bytes:
    ppq = 480
    ticks_per_div = ppq // DIVISIONS
    order = performance_order(piece)
    # Bar start ticks in performance order; the time signature in force per bar.
    conductor = [(0, 0, meta(0x03, piece.title.encode("utf-8")))]
    in_force = signatures(piece)
    tick = 0
    bar_ticks = []
    last_time, last_key = None, None
    for idx in order:
        bar = piece.bars[idx]
        time, fifths = in_force[idx]
        if bar.implicit:
            # SMF has no pickup bar: a short time signature for it keeps later barlines in place.
            length = bar_length_divisions(piece, idx)
            beat = DIVISIONS * 4 // time[1]
            shown = (length // beat, time[1]) if length % beat == 0 else (length * 4 // DIVISIONS, 16)
            denom = {1: 0, 2: 1, 4: 2, 8: 3, 16: 4}[shown[1]]
            conductor.append((tick, 1, meta(0x58, bytes([shown[0], denom, 24, 8]))))
            last_time = shown
        elif time != last_time:
            denom = {2: 1, 4: 2, 8: 3}[time[1]]
            conductor.append((tick, 1, meta(0x58, bytes([time[0], denom, 24, 8]))))
            last_time = time
        if fifths != last_key:
            conductor.append((tick, 1, meta(0x59, struct.pack(">bB", fifths, 0 if piece.mode == "major" else 1))))
            last_key = fifths
        tempo = piece.tempo if idx == 0 else bar.tempo
        if tempo:
            conductor.append((tick, 2, meta(0x51, struct.pack(">I", round(60_000_000 / tempo))[1:])))
        bar_ticks.append((idx, tick))
        tick += bar_length_divisions(piece, idx) * ticks_per_div
    end_tick = tick
    chunks = [track_chunk(conductor)]
    for channel, part in enumerate(piece.parts):
        events = [(0, 0, meta(0x03, part.name.encode("utf-8"))),
                  (0, 1, bytes([0xC0 | channel, part.program - 1]))]
        velocity = DYNAMIC_VELOCITY["mf"]
        sounding = {}  # (staff, voice, midi) -> index into notes (for ties)
        notes = []  # [start, end, midi, velocity]
        for idx, start in bar_ticks:
            bar = piece.bars[idx]
            for voice in bar.parts[part.key]:
                t = start
                for e in voice.events:
                    if isinstance(e, Direction):
                        if e.kind == "dynamic":
                            velocity = DYNAMIC_VELOCITY[e.value]
                        continue
                    length = e.duration * ticks_per_div
                    if not e.rest:
                        for j, p in enumerate(e.pitches):
                            m = midi_of(p)
                            k = (voice.staff, voice.number, m)
                            if e.tie_stops[j] and k in sounding:
                                notes[sounding[k]][1] = t + length
                            else:
                                notes.append([t, t + length, m, velocity])
                                sounding[k] = len(notes) - 1
                            if not e.tie_starts[j]:
                                sounding.pop(k, None)
                    t += length
        # Two voices of one staff in unison sound one key on one channel: keep one note.
        unique = {}
        for start, end, m, vel in notes:
            key = (start, m)
            if key not in unique or unique[key][1] < end:
                unique[key] = [start, end, m, vel]
        notes = sorted(unique.values())
        for start, end, m, vel in notes:
            events.append((start, 3, bytes([0x90 | channel, m, vel])))
            events.append((end, 2, bytes([0x80 | channel, m, 0])))
        events.append((end_tick, 9, meta(0x01, b"")))
        chunks.append(track_chunk(events))
    header = b"MThd" + struct.pack(">IHHH", 6, 1, len(chunks), ppq)
    return header + b"".join(chunks)


def signatures(piece: Piece) -> list:
    """(time signature, key fifths) in force at each bar, in score order."""
    time, fifths = piece.time, piece.key
    out = []
    for bar in piece.bars:
        time = bar.time or time
        fifths = fifths if bar.key is None else bar.key
        out.append((time, fifths))
    return out


def bar_length_divisions(piece: Piece, idx: int) -> int:
    return piece.bars[idx].parts[piece.parts[0].key][0].length()


# ---------------------------------------------------------------- .mxl


def write_mxl(slug: str, xml: str) -> bytes:
    import io

    buf = io.BytesIO()
    with zipfile.ZipFile(buf, "w") as z:
        info = zipfile.ZipInfo("mimetype", ZIP_DATE)
        info.compress_type = zipfile.ZIP_STORED
        z.writestr(info, "application/vnd.recordare.musicxml")
        container = (
            '<?xml version="1.0" encoding="UTF-8"?>\n'
            "<container>\n  <rootfiles>\n"
            f'    <rootfile full-path="{slug}.musicxml" media-type="application/vnd.recordare.musicxml+xml"/>\n'
            "  </rootfiles>\n</container>\n"
        )
        for name, text in (("META-INF/container.xml", container), (f"{slug}.musicxml", xml)):
            info = zipfile.ZipInfo(name, ZIP_DATE)
            info.compress_type = zipfile.ZIP_DEFLATED
            z.writestr(info, text)
    return buf.getvalue()


def build(path: Path) -> Piece:
    piece = parse_source(path)
    check_and_fill(piece)
    xml = write_musicxml(piece)
    (OUT_DIR / f"{piece.slug}.musicxml").write_text(xml, encoding="utf-8")
    (OUT_DIR / f"{piece.slug}.mxl").write_bytes(write_mxl(piece.slug, xml))
    (OUT_DIR / f"{piece.slug}.mid").write_bytes(write_midi(piece))
    return piece


def main(argv: list) -> int:
    sources = [Path(a) for a in argv[1:]] or sorted(HERE.glob("*.piece"))
    for src in sources:
        try:
            piece = build(src)
        except SourceError as err:
            print(f"error: {src.name}: {err}", file=sys.stderr)
            return 1
        order = performance_order(piece)
        print(f"{piece.slug}: {len(piece.bars)} bars written, {len(order)} bars sung, "
              f"{len(piece.parts)} parts")
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv))
