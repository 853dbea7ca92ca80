/**
 * DEV ONLY — a stand-in for the desktop app's Rust side so the UI can be
 * developed and looked at in a plain browser on the Vite dev server.
 *
 * Everything here is INVENTED sample data (names "… (fake)", fit figures from
 * a fixed pseudo-random sequence), except sample-parts.json, which is the
 * output of `ambit parts --json` on two of this project's own sample scores.
 * It computes nothing real and proves nothing: it is never loaded inside the
 * app (api.ts picks it only when `window.__TAURI_INTERNALS__` is absent on the
 * dev server), and no test uses it as evidence.
 */
import type {
  AuditionTask,
  Backend,
  FitCell,
  FitMatrix,
  HistoryEntry,
  LibraryInfo,
  PieceAnalysis,
  PlaceConstraints,
  PlaceMove,
  PlaceResult,
  Profile,
  ScenarioSummary,
  SingerRow,
  TaskFile,
  TaskName,
  TransposeAdvice,
  TypedSinger,
} from "../api";
import { layoutSections } from "../lib/layouts";
import { hzToMidi, midiToName } from "../lib/pitch";
import sampleParts from "./sample-parts.json";

const CAUTIONS = [
  "Ambit's results describe singing on one day. They are not a medical or clinical assessment.",
  'Never push a singer to the extremes to "find the top". Stop at any strain.',
  "Adolescent and changing voices need re-checking every few months.",
  "Hoarseness or breathiness lasting more than two weeks should be examined by a doctor. A speech-language pathologist or ENT specialist is the right person to ask about voice problems.",
  "Placement suggestions are a starting point for the director's judgement. They are not a verdict.",
];

/** A fixed pseudo-random sequence (not analysis: just varied fake numbers). */
function fakeNumber(seed: string): number {
  let h = 2166136261;
  for (const c of seed) h = Math.imul(h ^ c.charCodeAt(0), 16777619);
  return ((h >>> 0) % 10000) / 10000;
}

type Voice = [string, string, number, number, number, number];
// [voice type, section, range low, range high, comfort low, comfort high] (MIDI), invented.
const VOICES: Voice[] = [
  ["soprano", "S1", 60, 84, 65, 81],
  ["soprano", "S2", 59, 82, 63, 78],
  ["mezzo-soprano", "A1", 57, 79, 60, 75],
  ["contralto", "A2", 53, 76, 57, 72],
  ["tenor", "T1", 48, 72, 52, 69],
  ["tenor", "T2", 47, 69, 50, 66],
  ["baritone", "B1", 43, 67, 46, 64],
  ["bass", "B2", 40, 64, 43, 60],
];

function fakeSinger(index: number): SingerRow {
  const [voiceType, section, rl, rh, cl, ch] = VOICES[index % VOICES.length];
  const shift = Math.round(fakeNumber(`s${index}`) * 2) - 1;
  return {
    name: `Singer ${String(index + 1).padStart(2, "0")} (fake)`,
    section,
    voiceType,
    rangeLow: midiToName(rl + shift),
    rangeHigh: midiToName(rh + shift),
    comfortLow: midiToName(cl + shift),
    comfortHigh: midiToName(ch + shift),
    rangeLowMidi: rl + shift,
    rangeHighMidi: rh + shift,
    comfortLowMidi: cl + shift,
    comfortHighMidi: ch + shift,
    primo: midiToName(cl + 5 + shift),
    secondo: midiToName(ch - 2 + shift),
    archived: index === 15,
    source: index % 3 === 0 ? "typed" : "measured",
    auditions: index % 3 === 0 ? 0 : 1 + (index % 3),
    notes: null,
  };
}

function fakeProfile(singer: string, monthsAgo = 0): Profile {
  const index = Math.floor(fakeNumber(singer) * VOICES.length);
  const [voiceType, section, rl, rh, cl, ch] = VOICES[index];
  const grow = -monthsAgo / 3;
  const span = (low: number, high: number) => ({
    low_midi: low,
    high_midi: high,
    low: midiToName(low),
    high: midiToName(high),
  });
  return {
    range: span(rl - grow * 0.5 + 1, rh + grow),
    range_confidence: 0.9,
    comfort: { ...span(cl + 1, ch + grow), confidence: 0.8, basis: "FAKE: invented for the dev server" },
    reached: span(rl - 1, rh + 2),
    passaggi: [
      { midi: cl + 5, name: midiToName(cl + 5), kind: "primo", source: "measured", confidence: 0.7, upward_midi: cl + 5.4, downward_midi: cl + 4.6 },
      { midi: ch - 2, name: midiToName(ch - 2), kind: "secondo", source: "typical", confidence: 0.4, upward_midi: null, downward_midi: null },
    ],
    speaking_f0_hz: voiceType.includes("sop") || voiceType.includes("alto") || voiceType.includes("mezzo") ? 205 : 118,
    timbre: { centroid_hz: 1450, singers_formant_db: -18, h1_h2_db: 4.2 },
    voice_type: {
      label: voiceType,
      confidence: 0.64,
      alternatives: [
        { label: VOICES[(index + 1) % VOICES.length][0], confidence: 0.22 },
        { label: VOICES[(index + 7) % VOICES.length][0], confidence: 0.09 },
      ],
    },
    section,
    section_runner_up: VOICES[(index + 1) % VOICES.length][1],
    reasons: [
      "FAKE REASON (dev server): the comfort zone sits where this voice type's usually does.",
      "FAKE REASON (dev server): the measured primo passaggio agrees with the type.",
      "FAKE REASON (dev server): speaking pitch is a weak hint in the same direction.",
    ],
    cautions: CAUTIONS,
    missing_tasks: [],
    warnings: ["FAKE: dev server data, not a measurement."],
  };
}

const TASK_TEXT: AuditionTask[] = [
  { task: "speech", title: "Speech (about 15 s)", instructions: "Read a short paragraph, or count from one to twenty, at your normal speaking level. Don't put on a voice." },
  { task: "glide", title: "Glide (about 10 s, twice)", instructions: 'On "oo" or "ng", slide slowly from a comfortably low note up to a comfortably high note and back down, like a siren. It is fine if the voice flips or cracks on the way: that is what we listen for. Don\'t push past where it feels easy.' },
  { task: "scale", title: "Scale (about 30 s)", instructions: "Sing five-note scales up and down (do-re-mi-fa-so-fa-mi-re-do), starting low and moving each one up a step, through the part of your voice that feels comfortable. Stop when it starts to feel like work." },
  { task: "sustain", title: "Sustain (about 10 s)", instructions: "Hold the lowest note that feels secure for two seconds; then the highest note that feels secure, for two seconds. Secure, not extreme." },
  { task: "song", title: "Song (about 20 s)", instructions: "Sing a phrase of any song you know well, in your own key." },
];

const FAKE_EXCERPT = `<?xml version="1.0" encoding="UTF-8"?>
<score-partwise version="3.1"><part-list><score-part id="P1"><part-name>FAKE excerpt</part-name></score-part></part-list>
<part id="P1"><measure number="4"><attributes><divisions>1</divisions><key><fifths>2</fifths></key><time><beats>4</beats><beat-type>4</beat-type></time><clef><sign>G</sign><line>2</line></clef></attributes>
<note><pitch><step>F</step><alter>1</alter><octave>4</octave></pitch><duration>1</duration><type>quarter</type><lyric><text>fake</text></lyric></note>
<note><pitch><step>A</step><octave>4</octave></pitch><duration>1</duration><type>quarter</type></note>
<note><pitch><step>B</step><octave>4</octave></pitch><duration>2</duration><type>half</type></note></measure>
<measure number="5"><note><pitch><step>A</step><octave>4</octave></pitch><duration>3</duration><type>half</type><dot/></note>
<note><pitch><step>F</step><alter>1</alter><octave>4</octave></pitch><duration>1</duration><type>quarter</type></note></measure></part></score-partwise>`;

const state = {
  info: {
    folder: "/home/director/.local/share/ambit/demo (FAKE dev server)",
    singers: 0,
    archived: 0,
    auditions: 31,
    recordings: 155,
    pieces: 2,
    programmes: 1,
    scenarios: 1,
    schemaVersion: 1,
    isDemo: true,
  } as LibraryInfo,
  singers: Array.from({ length: 16 }, (_, i) => fakeSinger(i)),
  pieces: (sampleParts as unknown as PieceAnalysis[]).map((piece) => ({ ...piece })),
  mapping: {} as Record<string, Record<string, string | null>>,
  layouts: {} as Record<string, string>,
  scenarios: [
    { name: "Autumn concert, first try (fake)", savedAt: "2026-11-20T19:02:00Z", notes: "invented", objective: 1234.5 },
  ] as ScenarioSummary[],
  placement: null as PlaceResult | null,
  job: 0,
  recording: null as { task: TaskName; timer: number; started: number } | null,
};

type Handler = (payload: unknown) => void;
const listeners: Record<string, Set<Handler>> = {};
function emit(event: string, payload: unknown) {
  listeners[event]?.forEach((handler) => handler(payload));
}

const delay = (ms: number) => new Promise((resolve) => setTimeout(resolve, ms));

function singerByName(name: string): SingerRow {
  const singer = state.singers.find((s) => s.name === name);
  if (!singer) throw `no singer named "${name}" in this library`;
  return singer;
}

function piece(title: string, layout?: string): PieceAnalysis {
  const found = state.pieces.find((p) => p.title === title);
  if (!found) throw `no piece titled "${title}" in this library`;
  const overrides = state.mapping[title] ?? {};
  const chosenLayout = layout ?? state.layouts[title] ?? "SATB";
  const sections = layoutSections(chosenLayout);
  const mapping: Record<string, string[]> = {};
  found.parts.forEach((part, i) => {
    const override = overrides[part.name];
    mapping[part.name] = override === null ? [] : [override ?? sections[i % sections.length]];
  });
  return { ...found, layout: chosenLayout, overrides, mapping, mappingError: null };
}

function fitCell(singer: string, column: string): FitCell {
  const r = fakeNumber(singer + column);
  const fit = Math.round(Math.pow(r, 0.6) * 1000) / 10;
  return {
    fit,
    outsideShare: 1 - fit / 100,
    outsideSeconds: (1 - fit / 100) * 60,
    severity: (1 - fit / 100) * 3,
    beyondRangeSeconds: fit < 20 ? 4.5 : 0,
    reserves: { upper: Math.round(r * 8) - 2, lower: Math.round((1 - r) * 6) - 1 },
    worst: fit < 80 ? [{ bars: "4–7", seconds: 6.2 }, { bars: "12", seconds: 2.1 }] : [],
  };
}

function placement(constraints: PlaceConstraints): PlaceResult {
  const sections = layoutSections(constraints.layout);
  const active = state.singers.filter((s) => !s.archived);
  const section_fit = active.flatMap((s) =>
    sections.map((section) => ({ singer: s.name, section, fit: Math.round(fakeNumber(s.name + section) * 1000) / 10 })),
  );
  const assignments = active.map((s, i) => {
    const locked = constraints.locks[s.name];
    const section = locked ?? sections.find((sec) => sec.startsWith((s.section ?? "S")[0])) ?? sections[i % sections.length];
    const fit = 60 + Math.round(fakeNumber(s.name) * 400) / 10;
    return { singer: s.name, section, fit };
  });
  return {
    assignments,
    at_risk: assignments.filter((a) => a.fit < 68).map((a) => ({ ...a, reasons: ["fit below 70 (FAKE)"] })),
    cautions: CAUTIONS,
    layout: sections,
    objective: assignments.reduce((sum, a) => sum + a.fit, 0),
    section_fit,
    sections: sections.map((section) => {
      const members = assignments.filter((a) => a.section === section);
      return {
        section,
        count: members.length,
        mean_fit: members.length ? members.reduce((sum, a) => sum + a.fit, 0) / members.length : null,
      };
    }),
  };
}

function startJob(work: () => unknown, steps: string[]): number {
  const job = ++state.job;
  void (async () => {
    for (let i = 0; i < steps.length; i++) {
      await delay(250);
      emit("job-progress", { job, done: i, total: steps.length, label: steps[i] });
    }
    await delay(200);
    try {
      emit("job-done", { job, result: structuredClone(work()) });
    } catch (error) {
      emit("job-done", { job, error: { kind: "invalid", message: String(error) } });
    }
  })();
  return job;
}

/** Answers like IPC does: a copy, never a shared object. */
async function invoke(command: string, args: Record<string, any> = {}): Promise<any> {
  const answer = await answerTo(command, structuredClone(args));
  return answer === undefined ? null : structuredClone(answer);
}

async function answerTo(command: string, args: Record<string, any>): Promise<any> {
  await delay(60);
  state.info.singers = state.singers.filter((s) => !s.archived).length;
  state.info.archived = state.singers.filter((s) => s.archived).length;
  switch (command) {
    case "library_status":
      return { state: "ready", done: 0, total: 0, label: "" };
    case "library_open_demo":
      state.info = { ...state.info, isDemo: true };
      return { state: "ready", done: 0, total: 0, label: "" };
    case "library_info":
      return { ...state.info };
    case "library_open":
      return { ...state.info, folder: args.folder, isDemo: false };
    case "library_create_empty":
      state.singers = [];
      state.pieces = [];
      state.info = { ...state.info, folder: args.folder, isDemo: false, auditions: 0, recordings: 0, pieces: 0, programmes: 0, scenarios: 0 };
      return { ...state.info, singers: 0, archived: 0 };
    case "singers_list":
      return state.singers.filter((s) => args.includeArchived || !s.archived);
    case "singer_add_typed": {
      const row = args.row as TypedSinger;
      if (!row.name.trim()) throw "the singer needs a name";
      if (state.singers.some((s) => s.name === row.name)) throw `a singer named "${row.name}" is already in the library`;
      const added: SingerRow = {
        name: row.name,
        section: row.section || null,
        voiceType: row.voiceType || null,
        rangeLow: row.rangeLow,
        rangeHigh: row.rangeHigh,
        comfortLow: row.comfortLow,
        comfortHigh: row.comfortHigh,
        primo: row.primo || null,
        secondo: row.secondo || null,
        archived: false,
        source: "typed",
      };
      state.singers.push(added);
      return added;
    }
    case "singer_set_archived":
      singerByName(args.name).archived = args.archived;
      return null;
    case "singer_delete": {
      const singer = singerByName(args.name);
      state.singers = state.singers.filter((s) => s !== singer);
      const count = singer.auditions ?? 0;
      return { removedFiles: Array.from({ length: count * 5 }, (_, i) => `/fake/recordings/${i}.wav`) };
    }
    case "roster_import_preview":
    case "roster_import_commit":
      if (!String(args.path).endsWith(".csv")) throw `${args.path}: not a roster CSV (FAKE dev server message)`;
      return { add: ["New Person (fake)"], change: [state.singers[0]?.name ?? ""], skip: [] };
    case "roster_export":
      return null;
    case "singer_history": {
      singerByName(args.name);
      return [9, 6, 3, 0].map((monthsAgo): HistoryEntry => ({
        date: new Date(Date.UTC(2026, 11 - monthsAgo, 1)).toISOString().slice(0, 10),
        profile: fakeProfile(args.name, monthsAgo),
      }));
    }
    case "audition_tasks":
      return TASK_TEXT;
    case "recording_start": {
      if (state.recording) throw "a recording is already running; stop it first";
      const started = performance.now();
      const timer = window.setInterval(() => {
        const time = (performance.now() - started) / 1000;
        const midi = 57 + 7 * Math.sin(time * 0.9) + 0.3 * Math.sin(time * 37);
        const hz = 440 * Math.pow(2, (midi - 69) / 12);
        const voiced = Math.sin(time * 0.7) > -0.8;
        emit("pitch-frame", {
          time,
          f0Hz: voiced ? hz : null,
          note: voiced ? midiToName(hzToMidi(hz) ?? 0) : null,
          confidence: voiced ? 0.9 : 0.1,
          levelDb: voiced ? -18 : -52,
        });
      }, 10);
      state.recording = { task: args.task, timer, started };
      return null;
    }
    case "recording_stop": {
      if (!state.recording) throw "no recording is running";
      window.clearInterval(state.recording.timer);
      const seconds = (performance.now() - state.recording.started) / 1000;
      const path = `/fake/takes/${state.recording.task}-take.wav`;
      state.recording = null;
      return { path, seconds };
    }
    case "audition_analyse": {
      const files = args.files as TaskFile[];
      if (files.length === 0) throw "give at least one recording (speech, glide, scale, sustain or song)";
      return startJob(() => ({ singer: args.singer, ...fakeProfile(args.singer) }), [...files.map((f) => f.path), "profile"]);
    }
    case "audition_save":
      if (!state.singers.some((s) => s.name === args.singer)) state.singers.push({ ...fakeSinger(state.singers.length), name: args.singer });
      return 42;
    case "job_cancel":
      return null;
    case "pieces_list":
      return state.pieces.map((p) => ({ title: p.title ?? p.file, file: p.file, sha256: "fake", parts: p.parts.length }));
    case "piece_import": {
      const path = String(args.path);
      if (!/\.(mid|midi|musicxml|xml|mxl)$/i.test(path)) throw `${path}: not a MIDI or MusicXML file (FAKE dev server message)`;
      const copy = { ...state.pieces[0], title: path.split("/").pop()!.replace(/\.[^.]+$/, "") + " (fake)", file: path };
      state.pieces.push(copy);
      return piece(copy.title!);
    }
    case "piece_analysis":
      return piece(args.title, args.layout);
    case "piece_set_mapping":
      state.mapping[args.title] = { ...args.overrides };
      if (args.layout) state.layouts[args.title] = args.layout;
      return piece(args.title);
    case "notation_excerpt":
      return FAKE_EXCERPT;
    case "fit_matrix": {
      const rows = state.singers.filter((s) => !s.archived).map((s) => s.name);
      const columns =
        args.by === "section"
          ? layoutSections(args.layout)
          : (args.pieces as string[]).flatMap((t) => piece(t).parts.map((p) => (args.pieces.length > 1 ? `${t}: ${p.name}` : p.name)));
      const matrix: FitMatrix = { rows, columns, cells: rows.map((r) => columns.map((c) => fitCell(r, c))) };
      return matrix;
    }
    case "place_solve": {
      const constraints = args as PlaceConstraints;
      return startJob(() => (state.placement = placement(constraints)), ["fit matrix", "min-cost flow"]);
    }
    case "seating_export":
      if (!state.placement) throw "no placement yet: run the optimiser first";
      return state.placement.assignments.length;
    case "place_move": {
      const placed = state.placement;
      if (!placed) throw "run the placement first";
      const assignment = placed.assignments.find((a) => a.singer === args.name);
      if (!assignment) throw `${args.name} is not in the placement`;
      const before = assignment.fit;
      const after = placed.section_fit.find((p) => p.singer === args.name && p.section === args.section)?.fit ?? 0;
      const from = assignment.section;
      const stat = (section: string, list = placed.assignments) => {
        const members = list.filter((a) => a.section === section);
        return { count: members.length, mean: members.length ? members.reduce((s, a) => s + a.fit, 0) / members.length : 0 };
      };
      const beforeFrom = stat(from);
      const beforeTo = stat(args.section);
      assignment.section = args.section;
      assignment.fit = after;
      const move: PlaceMove = {
        objectiveDelta: after - before,
        singer: { before, after },
        sections: [
          { section: from, countBefore: beforeFrom.count, countAfter: stat(from).count, meanBefore: beforeFrom.mean, meanAfter: stat(from).mean },
          { section: args.section, countBefore: beforeTo.count, countAfter: stat(args.section).count, meanBefore: beforeTo.mean, meanAfter: stat(args.section).mean },
        ],
      };
      return move;
    }
    case "scenario_save":
      state.scenarios.unshift({ name: args.name, notes: args.notes, savedAt: new Date().toISOString(), objective: (args.result as PlaceResult)?.objective ?? 0 });
      return state.scenarios.length;
    case "scenarios_list":
      return state.scenarios;
    case "transpose_advice": {
      const advice: TransposeAdvice = {
        mode: "choir",
        piece: args.title,
        written_key: "D major",
        keys: [-3, -2, -1, 0, 1, 2].map((t) => ({
          transpose_semitones: t,
          interval: t === 0 ? "as written" : `${t < 0 ? "down" : "up"} ${Math.abs(t)} semitone(s) (fake)`,
          key: ["B major", "C major", "C♯ major", "D major", "E♭ major", "E major"][t + 3],
          worst_section: "B",
          worst_mean_fit: 70 - Math.abs(t + 1) * 9,
          total_fit: 300 - Math.abs(t + 1) * 30,
        })),
        best_semitones: -1,
        cautions: CAUTIONS,
      };
      return advice;
    }
    case "cautions":
      return CAUTIONS;
    default:
      throw `FAKE dev server: no command "${command}"`;
  }
}

export const fakeBackend: Backend = {
  isFake: true,
  invoke: invoke as Backend["invoke"],
  listen: async (event, handler) => {
    (listeners[event] ??= new Set()).add(handler as Handler);
    return () => listeners[event]?.delete(handler as Handler);
  },
  pickFile: async () => window.prompt("FAKE dev server: type a file path") || null,
  pickFolder: async () => window.prompt("FAKE dev server: type a folder path") || null,
  pickSaveFile: async (_title, name) => window.prompt("FAKE dev server: save as", name) || null,
};
