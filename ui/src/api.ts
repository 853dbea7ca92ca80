/**
 * The one place the UI talks to the desktop app's Rust side: every Tauri
 * command of docs/APP-API.md as a typed function, the events it emits, and
 * the file dialogs.
 *
 * Invariant: no analysis here or anywhere in ui/. Results are the engine's own
 * serde shapes (snake_case where a CLI `--json` shape exists, camelCase where
 * docs/APP-API.md spells the fields so); the UI formats them and nothing more.
 *
 * Outside the app (a plain browser on the Vite dev server) a dev-only fake
 * backend with invented sample data answers instead; the production build
 * never contains it and refuses to run without Tauri.
 */

// ---------------------------------------------------------------- library

export interface LibraryInfo {
  folder: string;
  singers: number;
  archived: number;
  auditions: number;
  recordings: number;
  pieces: number;
  programmes: number;
  scenarios: number;
  schemaVersion: number;
  isDemo: boolean;
}

/** Where the app's library stands (`library_status`, `library-status` events). */
export interface LibraryStatus {
  state: "none" | "preparing" | "ready" | "failed";
  done: number;
  total: number;
  label: string;
  error?: string;
}

// ---------------------------------------------------------------- singers

export interface SingerRow {
  name: string;
  section: string | null;
  voiceType: string | null;
  rangeLow: string | null;
  rangeHigh: string | null;
  comfortLow: string | null;
  comfortHigh: string | null;
  primo: string | null;
  secondo: string | null;
  /** The same pitches as MIDI numbers, for drawing. */
  rangeLowMidi?: number | null;
  rangeHighMidi?: number | null;
  comfortLowMidi?: number | null;
  comfortHighMidi?: number | null;
  archived: boolean;
  source: "measured" | "typed";
  auditions?: number;
  notes?: string | null;
}

/** A roster CSV row's fields (BRIEF §5), camelCase, as typed into the "add singer" form. */
export interface TypedSinger {
  name: string;
  rangeLow: string;
  rangeHigh: string;
  comfortLow: string;
  comfortHigh: string;
  primo?: string;
  secondo?: string;
  voiceType?: string;
  section?: string;
  notes?: string;
}

export interface ImportPreview {
  add: string[];
  change: string[];
  skip: string[];
}

// ---------------------------------------------------------------- profiles (ambit profile --json)

export interface PitchSpan {
  low_midi: number;
  high_midi: number;
  low: string;
  high: string;
}

export interface Passaggio {
  midi: number;
  name: string;
  kind: "primo" | "secondo";
  source: "measured" | "typical";
  confidence: number;
  upward_midi: number | null;
  downward_midi: number | null;
}

export interface Profile {
  range: PitchSpan;
  range_confidence: number;
  comfort: PitchSpan & { confidence: number; basis: string };
  reached: PitchSpan | null;
  passaggi: Passaggio[];
  speaking_f0_hz: number | null;
  timbre: { centroid_hz: number; singers_formant_db: number; h1_h2_db: number } | null;
  voice_type: { label: string; confidence: number; alternatives: { label: string; confidence: number }[] };
  section: string;
  section_runner_up: string;
  reasons: string[];
  cautions: string[];
  missing_tasks: string[];
  warnings: string[];
}

/** `job-done.result` of `audition_analyse`: the profile with the singer's name. */
export type AnalysedProfile = Profile & { singer: string };

export interface HistoryEntry {
  date: string;
  profile: Profile;
}

// ---------------------------------------------------------------- audition

export type TaskName = "speech" | "glide" | "scale" | "sustain" | "song";
export const TASKS: TaskName[] = ["speech", "glide", "scale", "sustain", "song"];

export interface AuditionTask {
  task: TaskName;
  title: string;
  instructions: string;
}

export interface PitchFrame {
  time: number;
  f0Hz: number | null;
  note: string | null;
  confidence: number;
  levelDb: number;
}

export interface TaskFile {
  task: TaskName;
  path: string;
}

// ---------------------------------------------------------------- pieces (ambit parts --json)

export interface HotSpot {
  kind: "high" | "low";
  bars: string;
  start_seconds: number;
  end_seconds: number;
  mean_midi: number;
}

export interface PartAnalysis {
  name: string;
  kind: string;
  notes: number;
  sung_seconds: number;
  sung_quarters: number;
  lowest_midi: number;
  highest_midi: number;
  lowest: string;
  highest: string;
  mean_midi: number;
  sd_semitones: number;
  percentiles_midi: Record<string, number>;
  histogram_seconds: Record<string, number>;
  histogram_quarters: Record<string, number>;
  longest_note: { midi: number; name: string; seconds: number; bars: string };
  hot_spots: HotSpot[];
  time_dose_seconds: number;
  cycle_dose: number;
  divisi?: PartAnalysis[];
  /** The section(s) this part is mapped to, when the app adds the mapping. */
  section?: string | string[] | null;
}

/** `ambit parts --json` of one score plus the section mapping the app keeps with it. */
export interface PieceAnalysis {
  file: string;
  title: string | null;
  parts: PartAnalysis[];
  warnings: string[];
  /** The layout the parts are mapped to (e.g. "SATB"). */
  layout?: string;
  /** The director's choices: part → section (`null` = not sung by the choir). */
  overrides?: Record<string, string | null>;
  /** Part name → the sections that sing it (empty when the mapping failed). */
  mapping?: Record<string, string | string[]>;
  /** Why the parts could not be mapped to the layout, when they could not. */
  mappingError?: string | null;
}

export interface PieceSummary {
  title: string;
  file: string;
  sha256: string;
  parts: number;
}

// ---------------------------------------------------------------- fit, placement, transposition

export interface FitCell {
  fit: number;
  outsideShare: number;
  /** Per line; `null` over a programme of sections. */
  outsideSeconds: number | null;
  severity: number;
  beyondRangeSeconds: number;
  sungSeconds?: number;
  /** Semitones (Herbst et al. 2012): singer's top − line's top; line's bottom − singer's bottom. */
  reserves: { upper: number | null; lower: number | null };
  worst: { piece?: string; line?: string; bars: string; seconds: number; side?: string }[];
}

export interface FitMatrix {
  rows: string[];
  columns: string[];
  /** `null` where the pair is not allowed or the singer has no such line. */
  cells: (FitCell | null)[][];
  /** Why a `null` cell is not allowed, by "singer / column". */
  not_allowed?: Record<string, string>;
  /** Singers with no range yet, left out. */
  left_out?: string[];
  cautions?: string[];
}

export interface PlaceResult {
  assignments: { singer: string; section: string; fit: number }[];
  at_risk: { singer: string; section: string; fit: number; reasons: string[] }[];
  cautions: string[];
  layout: string[];
  objective: number;
  section_fit: { singer: string; section: string; fit: number | null }[];
  sections: { section: string; count: number; mean_fit: number | null }[];
}

export interface PlaceMove {
  objectiveDelta: number;
  objectiveAfter?: number;
  singer: { name?: string; from?: string; to?: string; before: number; after: number };
  sections: { section: string; countBefore: number; countAfter: number; meanBefore: number | null; meanAfter: number | null }[];
  atRiskAfter?: boolean;
  /** Constraints the new seating breaks (empty = still valid). */
  violations?: unknown[];
  /** The whole placement after the move, as `ambit place --json`. */
  placement?: PlaceResult;
}

export interface PlaceConstraints {
  pieces: string[];
  layout: string;
  sizes: Record<string, [number, number]>;
  locks: Record<string, string>;
  exclusions: [string, string][];
}

export interface ScenarioSummary {
  id?: number;
  name: string;
  savedAt: string;
  notes: string | null;
  objective: number | null;
  result?: unknown;
}

export interface TransposeKey {
  transpose_semitones: number;
  interval: string;
  key: string;
  worst_section?: string;
  worst_mean_fit?: number;
  total_fit?: number;
  fit?: number;
  sections?: { section: string; singers: number; mean_fit: number }[];
}

export interface TransposeAdvice {
  mode: string;
  piece: string;
  written_key: string | null;
  keys: TransposeKey[];
  best_semitones: number;
  unplaced?: string[];
  empty_sections?: string[];
  cautions: string[];
}

// ---------------------------------------------------------------- jobs and events

export interface JobProgress {
  job: JobId;
  done: number;
  total: number;
  label: string;
}

export interface JobDone<T> {
  job: JobId;
  result?: T;
  error?: AppError;
}

/** What kind of failure a command reports (the engine's `ErrorKind`). */
export type ErrorKind = "invalid" | "notFound" | "busy" | "cancelled" | "storage";

/** Every command's error: a kind to act on and the engine's message, which names the file or thing. */
export interface AppError {
  kind: ErrorKind;
  message: string;
}

export type JobId = number | string;

// ---------------------------------------------------------------- the backend

export interface Backend {
  invoke<T>(command: string, args?: Record<string, unknown>): Promise<T>;
  listen<T>(event: string, handler: (payload: T) => void): Promise<() => void>;
  pickFile(title: string, extensions: string[]): Promise<string | null>;
  pickFolder(title: string): Promise<string | null>;
  pickSaveFile(title: string, defaultName: string, extensions: string[]): Promise<string | null>;
  isFake: boolean;
}

declare global {
  interface Window {
    __TAURI_INTERNALS__?: unknown;
  }
}

let chosen: Promise<Backend> | null = null;

async function tauriBackend(): Promise<Backend> {
  const [core, event, dialog] = await Promise.all([
    import("@tauri-apps/api/core"),
    import("@tauri-apps/api/event"),
    import("@tauri-apps/plugin-dialog"),
  ]);
  const single = (picked: string | string[] | null) => (Array.isArray(picked) ? (picked[0] ?? null) : picked);
  return {
    isFake: false,
    invoke: (command, args) => core.invoke(command, args),
    listen: (name, handler) => event.listen(name, (message) => handler(message.payload as never)),
    pickFile: async (title, extensions) =>
      single(await dialog.open({ title, multiple: false, directory: false, filters: [{ name: title, extensions }] })),
    pickFolder: async (title) => single(await dialog.open({ title, multiple: false, directory: true })),
    pickSaveFile: async (title, defaultPath, extensions) =>
      await dialog.save({ title, defaultPath, filters: [{ name: title, extensions }] }),
  };
}

export function backend(): Promise<Backend> {
  if (chosen === null) {
    if (typeof window !== "undefined" && window.__TAURI_INTERNALS__ !== undefined) {
      chosen = tauriBackend();
    } else if (import.meta.env.DEV) {
      // Dev server in a plain browser only; Vite drops this branch from the build.
      chosen = import("./dev/fake-backend").then((module) => module.fakeBackend);
    } else {
      chosen = Promise.reject(new Error("Ambit's window must be opened by the Ambit desktop app."));
    }
  }
  return chosen;
}

function isAppError(error: unknown): error is AppError {
  return (
    typeof error === "object" &&
    error !== null &&
    typeof (error as AppError).kind === "string" &&
    typeof (error as AppError).message === "string"
  );
}

/** The message of a command's error (the engine's own words), shown as it is. */
export function errorText(error: unknown): string {
  if (typeof error === "string") return error;
  if (isAppError(error)) return error.message;
  if (error instanceof Error) return error.message;
  try {
    return JSON.stringify(error);
  } catch {
    return String(error);
  }
}

/** The kind of a command's error; `invalid` for anything that is not an AppError. */
export function errorKind(error: unknown): ErrorKind {
  return isAppError(error) ? error.kind : "invalid";
}

async function call<T>(command: string, args?: Record<string, unknown>): Promise<T> {
  const b = await backend();
  return b.invoke<T>(command, args);
}

export async function onLibraryStatus(handler: (status: LibraryStatus) => void): Promise<() => void> {
  return (await backend()).listen<LibraryStatus>("library-status", handler);
}

export async function onPitchFrame(handler: (frame: PitchFrame) => void): Promise<() => void> {
  return (await backend()).listen<PitchFrame>("pitch-frame", handler);
}

/**
 * Starts a long command and resolves with its `job-done` result. The listeners
 * are in place before the command is sent, so no event is missed.
 */
export async function runJob<T>(
  start: () => Promise<JobId>,
  onProgress: (progress: JobProgress) => void,
  onStarted: (job: JobId) => void = () => {},
): Promise<T> {
  const b = await backend();
  let job: JobId | null = null;
  const early: { done: JobDone<T>[] } = { done: [] };
  let settle: ((done: JobDone<T>) => void) | null = null;
  const unlistenProgress = await b.listen<JobProgress>("job-progress", (progress) => {
    if (job !== null && String(progress.job) === String(job)) onProgress(progress);
  });
  const unlistenDone = await b.listen<JobDone<T>>("job-done", (done) => {
    if (job === null) early.done.push(done);
    else if (String(done.job) === String(job) && settle) settle(done);
  });
  try {
    const finished = new Promise<JobDone<T>>((resolve) => (settle = resolve));
    job = await start();
    onStarted(job);
    const already = early.done.find((done) => String(done.job) === String(job));
    const done = already ?? (await finished);
    if (done.error !== undefined && done.error !== null) throw done.error;
    return done.result as T;
  } finally {
    unlistenProgress();
    unlistenDone();
  }
}

export const api = {
  // library
  libraryStatus: () => call<LibraryStatus>("library_status"),
  libraryInfo: () => call<LibraryInfo>("library_info"),
  libraryOpen: (folder: string) => call<LibraryInfo>("library_open", { folder }),
  libraryCreateEmpty: (folder: string) => call<LibraryInfo>("library_create_empty", { folder }),
  libraryOpenDemo: () => call<LibraryStatus>("library_open_demo"),
  // singers
  singersList: (includeArchived: boolean) => call<SingerRow[]>("singers_list", { includeArchived }),
  singerAddTyped: (row: TypedSinger) => call<SingerRow>("singer_add_typed", { row }),
  singerSetArchived: (name: string, archived: boolean) => call<void>("singer_set_archived", { name, archived }),
  singerDelete: (name: string) => call<{ removedFiles: string[] }>("singer_delete", { name }),
  rosterImportPreview: (path: string) => call<ImportPreview>("roster_import_preview", { path }),
  rosterImportCommit: (path: string) => call<ImportPreview>("roster_import_commit", { path }),
  rosterExport: (path: string) => call<void>("roster_export", { path }),
  singerHistory: (name: string) => call<HistoryEntry[]>("singer_history", { name }),
  // audition
  auditionTasks: () => call<AuditionTask[]>("audition_tasks"),
  recordingStart: (task: TaskName) => call<void>("recording_start", { task }),
  recordingStop: () =>
    call<{ path: string; seconds: number; reachedLimit: boolean }>("recording_stop"),
  auditionAnalyse: (singer: string, files: TaskFile[]) => call<JobId>("audition_analyse", { singer, files }),
  auditionSave: (singer: string, files: TaskFile[], date: string) =>
    call<number>("audition_save", { singer, files, date }),
  jobCancel: (job: JobId) => call<void>("job_cancel", { job }),
  // pieces
  piecesList: () => call<PieceSummary[]>("pieces_list"),
  pieceImport: (path: string) => call<PieceAnalysis>("piece_import", { path }),
  pieceAnalysis: (title: string) => call<PieceAnalysis>("piece_analysis", { title }),
  pieceAnalysisIn: (title: string, layout: string) => call<PieceAnalysis>("piece_analysis", { title, layout }),
  pieceSetMapping: (title: string, overrides: Record<string, string | null>, layout?: string) =>
    call<PieceAnalysis>("piece_set_mapping", { title, overrides, layout }),
  notationExcerpt: (title: string, part: string, firstBar: number, lastBar: number) =>
    call<string>("notation_excerpt", { title, part, firstBar, lastBar }),
  // fit, placement, transposition
  fitMatrix: (pieces: string[], layout: string, by: "part" | "section") =>
    call<FitMatrix>("fit_matrix", { pieces, layout, by }),
  placeSolve: (constraints: PlaceConstraints) => call<JobId>("place_solve", { ...constraints }),
  placeMove: (name: string, section: string) => call<PlaceMove>("place_move", { name, section }),
  seatingExport: (path: string) => call<number>("seating_export", { path }),
  scenarioSave: (name: string, notes: string, result: unknown, constraints?: unknown) =>
    call<number>("scenario_save", { name, notes, result, constraints }),
  scenariosList: () => call<ScenarioSummary[]>("scenarios_list"),
  transposeAdvice: (title: string) => call<TransposeAdvice>("transpose_advice", { title }),
  cautions: () => call<string[]>("cautions"),
};
