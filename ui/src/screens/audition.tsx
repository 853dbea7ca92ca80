/**
 * Audition: the guided sequence of docs/AUDITION.md. Each task is recorded in
 * the app (with a live pitch trace) or imported from a file; the engine
 * measures the profile, and the result card shows range and comfort zone on a
 * keyboard with the passaggi, the voice type with alternatives, reasons and
 * confidence, the suggested section and the cautions. Save stores it in the
 * singer's history.
 */
import { Fragment } from "preact";
import { useEffect, useRef, useState } from "preact/hooks";
import {
  api,
  backend,
  errorText,
  onPitchFrame,
  runJob,
  TASKS,
  type AnalysedProfile,
  type AuditionTask,
  type JobId,
  type JobProgress,
  type PitchFrame,
  type TaskFile,
  type TaskName,
} from "../api";
import { useShared } from "../app";
import { PitchTrace, RangeOnKeyboard } from "../components/charts";
import { Cautions, ErrorMessage, Field, percent, today, useLoad } from "../components/common";
import { hzToMidi, midiToName, centsFromNearest } from "../lib/pitch";

const AUDIO_EXTENSIONS = ["wav", "flac", "ogg", "mp3", "m4a"];

export function AuditionScreen() {
  const { refreshLibrary, go } = useShared();
  const tasks = useLoad(() => api.auditionTasks(), []);
  const singers = useLoad(() => api.singersList(false), []);
  const [singer, setSinger] = useState("");
  const [date, setDate] = useState(today());
  const [paths, setPaths] = useState<Record<TaskName, string>>({ speech: "", glide: "", scale: "", sustain: "", song: "" });
  const [recordingTask, setRecordingTask] = useState<TaskName | null>(null);
  const [frames, setFrames] = useState<PitchFrame[]>([]);
  const [progress, setProgress] = useState<JobProgress | null>(null);
  const [job, setJob] = useState<JobId | null>(null);
  const [result, setResult] = useState<AnalysedProfile | null>(null);
  const [error, setError] = useState<string | null>(null);
  const [takeNote, setTakeNote] = useState<string | null>(null);
  const [saved, setSaved] = useState<string | null>(null);
  const buffer = useRef<PitchFrame[]>([]);
  const recordingNow = useRef<TaskName | null>(null);
  recordingNow.current = recordingTask;

  // Leaving the screen stops a running recording, so the microphone is not left open.
  useEffect(
    () => () => {
      if (recordingNow.current !== null) void api.recordingStop().catch(() => {});
    },
    [],
  );

  // Live pitch: frames arrive every 10 ms; draw at most once per animation frame.
  useEffect(() => {
    if (recordingTask === null) return;
    let stop: (() => void) | null = null;
    let scheduled = 0;
    let alive = true;
    buffer.current = [];
    setFrames([]);
    void onPitchFrame((frame) => {
      buffer.current.push(frame);
      if (buffer.current.length > 1200) buffer.current.splice(0, buffer.current.length - 1000);
      if (!scheduled) {
        scheduled = requestAnimationFrame(() => {
          scheduled = 0;
          if (alive) setFrames([...buffer.current]);
        });
      }
    }).then((unlisten) => {
      if (alive) stop = unlisten;
      else unlisten();
    });
    return () => {
      alive = false;
      if (scheduled) cancelAnimationFrame(scheduled);
      stop?.();
    };
  }, [recordingTask]);

  const files = (): TaskFile[] =>
    TASKS.filter((task) => paths[task].trim()).map((task) => ({ task, path: paths[task].trim() }));

  function noteOn(take: { seconds: number; reachedLimit?: boolean }) {
    setTakeNote(
      take.reachedLimit ? `The take stopped at its limit and keeps its first ${Math.round(take.seconds / 60)} minutes.` : null,
    );
  }

  async function toggleRecording(task: TaskName) {
    setError(null);
    setTakeNote(null);
    try {
      if (recordingTask === task) {
        const take = await api.recordingStop();
        setRecordingTask(null);
        setPaths((p) => ({ ...p, [task]: take.path }));
        noteOn(take);
      } else {
        if (recordingTask !== null) {
          const take = await api.recordingStop();
          setPaths((p) => ({ ...p, [recordingTask]: take.path }));
          noteOn(take);
        }
        await api.recordingStart(task);
        setRecordingTask(task);
      }
    } catch (e) {
      setRecordingTask(null);
      setError(errorText(e));
    }
  }

  async function chooseFile(task: TaskName) {
    const path = await (await backend()).pickFile(`Recording for the ${task} task`, AUDIO_EXTENSIONS);
    if (path) setPaths((p) => ({ ...p, [task]: path }));
  }

  async function analyse() {
    setError(null);
    setSaved(null);
    setResult(null);
    if (!singer.trim()) {
      setError("Give the singer's name first.");
      return;
    }
    try {
      const profile = await runJob<AnalysedProfile>(() => api.auditionAnalyse(singer.trim(), files()), setProgress, setJob);
      setResult(profile);
    } catch (e) {
      setError(errorText(e));
    } finally {
      setProgress(null);
      setJob(null);
    }
  }

  async function save() {
    setError(null);
    try {
      await api.auditionSave(singer.trim(), files(), date);
      setSaved(singer.trim());
      refreshLibrary();
      singers.reload();
    } catch (e) {
      setError(errorText(e));
    }
  }

  const last = frames[frames.length - 1];
  const lastMidi = last?.f0Hz ? hzToMidi(last.f0Hz) : null;
  const taskInfo = (task: TaskName): AuditionTask =>
    tasks.data?.find((t) => t.task === task) ?? { task, title: task, instructions: "" };

  return (
    <section data-testid="screen-audition" aria-labelledby="audition-title">
      <div class="screen-head">
        <h2 id="audition-title">Audition</h2>
        <p>Five short tasks, about two minutes of singing in all. Record each here, or give a recording made elsewhere.</p>
      </div>

      <div class="columns wide-left no-print">
        <div>
          <div class="panel">
            <div class="row">
              <Field label="Singer's name (new or existing)">
                <input type="text" list="known-singers" data-testid="audition-singer-name" value={singer} onInput={(e) => setSinger((e.target as HTMLInputElement).value)} />
              </Field>
              <datalist id="known-singers">
                {(singers.data ?? []).map((s) => (
                  <option key={s.name} value={s.name} />
                ))}
              </datalist>
              <Field label="Date of the audition">
                <input type="date" value={date} onInput={(e) => setDate((e.target as HTMLInputElement).value)} />
              </Field>
            </div>
          </div>

          <ErrorMessage error={error ?? tasks.error} />
          {takeNote && (
            <p class="notice" role="status">
              {takeNote}
            </p>
          )}

          <ol class="tasks panel" aria-label="The five tasks">
            {TASKS.map((task, index) => {
              const info = taskInfo(task);
              const recording = recordingTask === task;
              return (
                <li key={task}>
                  <h3>
                    {index + 1}. {info.title}
                  </h3>
                  <p>{info.instructions}</p>
                  <div class="task-controls">
                    <button
                      type="button"
                      class={recording ? "danger" : "primary"}
                      data-testid={`audition-record-${task}`}
                      aria-pressed={recording}
                      onClick={() => toggleRecording(task)}
                    >
                      {recording ? "■ Stop" : "● Record"}
                    </button>
                    <Field label={`Recording file for ${task}`}>
                      <input
                        type="text"
                        data-testid={`audition-file-${task}`}
                        value={paths[task]}
                        onInput={(e) => setPaths({ ...paths, [task]: (e.target as HTMLInputElement).value })}
                        placeholder="path to a WAV, FLAC, OGG, MP3 or m4a file"
                      />
                    </Field>
                    <button type="button" onClick={() => chooseFile(task)} aria-label={`Choose a recording file for ${task}`}>
                      Choose file…
                    </button>
                  </div>
                  {recording && (
                    <div class="panel" style={{ marginTop: "0.6rem" }} aria-live="off">
                      <div class="row" style={{ alignItems: "baseline" }}>
                        <span class="live-note" aria-label="Current note">
                          {last?.note ?? (lastMidi !== null ? midiToName(lastMidi) : "—")}
                        </span>
                        <span class="muted">
                          {lastMidi !== null && last?.f0Hz
                            ? `${last.f0Hz.toFixed(1)} Hz, ${centsFromNearest(lastMidi) >= 0 ? "+" : "−"}${Math.abs(centsFromNearest(lastMidi))} cents`
                            : "no pitch (silence or speech noise)"}
                        </span>
                        <span class="muted">level {last ? `${last.levelDb.toFixed(0)} dB` : "—"}</span>
                      </div>
                      <PitchTrace frames={frames} />
                    </div>
                  )}
                </li>
              );
            })}
          </ol>

          <div class="row no-print">
            <button type="button" class="primary" data-testid="audition-analyse" disabled={job !== null || recordingTask !== null} onClick={analyse}>
              Analyse {files().length} recording{files().length === 1 ? "" : "s"}
            </button>
            {job !== null && (
              <button type="button" onClick={() => api.jobCancel(job)}>
                Cancel
              </button>
            )}
          </div>
          {progress && (
            <div role="status" style={{ marginTop: "0.5rem" }}>
              <label class="small">
                {progress.label} ({progress.done + 1} of {progress.total})
                <progress class="progress" max={progress.total} value={progress.done} />
              </label>
            </div>
          )}
        </div>

        <div>
          <aside class="panel" aria-label="Before you start">
            <h3>Before you start (read this to the singer)</h3>
            <ul>
              <li>Warm up gently first. Sing only where it feels easy.</li>
              <li>
                <strong>Stop at any strain.</strong> Never force the top or the bottom of the voice to "see how far it goes". Ambit only needs notes you can sing
                comfortably.
              </li>
              <li>If your voice is changing (young singers), expect the results to change too: we will check again in a few months.</li>
              <li>
                If you have been hoarse or breathy for more than two weeks, see a doctor before auditioning; a speech-language pathologist or an ENT specialist is the
                right person to ask about voice problems.
              </li>
            </ul>
            <p class="muted small">Hold the microphone about an arm's length away, in a quiet room. Any task may be left out; Ambit says what it could not measure.</p>
          </aside>
        </div>
      </div>

      {result && (
        <ResultCard
          profile={result}
          onSave={save}
          saved={saved}
          onHistory={() => go("history", result.singer)}
        />
      )}
    </section>
  );
}

function ResultCard({ profile, onSave, saved, onHistory }: { profile: AnalysedProfile; onSave: () => void; saved: string | null; onHistory: () => void }) {
  const card = useRef<HTMLElement>(null);
  useEffect(() => {
    // Bring the new result into view and put keyboard focus on it.
    card.current?.scrollIntoView({ block: "start" });
    card.current?.focus();
  }, [profile]);
  return (
    <article class="panel result-card" data-testid="result-card" aria-labelledby="result-title" tabIndex={-1} ref={card}>
      <h3 id="result-title">Result for {profile.singer}</h3>
      <div class="columns">
        <div>
          <p>
            Suggested voice type{" "}
            <span class="big-figure" data-testid="result-voice-type">
              {profile.voice_type.label}
            </span>{" "}
            <span class="muted">(confidence {percent(profile.voice_type.confidence)})</span>
          </p>
          {profile.voice_type.alternatives.length > 0 && (
            <p>
              Alternatives: {profile.voice_type.alternatives.map((a) => `${a.label} (${percent(a.confidence)})`).join(", ")}
            </p>
          )}
          <p>
            Suggested section <strong>{profile.section}</strong>, runner-up {profile.section_runner_up}
          </p>
          <dl class="facts">
            <dt>Range (held ≥ 1 s)</dt>
            <dd>
              {profile.range.low}–{profile.range.high} <span class="muted">(confidence {percent(profile.range_confidence)})</span>
            </dd>
            <dt>Comfort zone</dt>
            <dd>
              {profile.comfort.low}–{profile.comfort.high} <span class="muted">(confidence {percent(profile.comfort.confidence)})</span>
              <br />
              <span class="small muted">{profile.comfort.basis}</span>
            </dd>
            {profile.reached && (
              <>
                <dt>Reached in glides</dt>
                <dd>
                  {profile.reached.low}–{profile.reached.high} <span class="muted">(reached, not sustained)</span>
                </dd>
              </>
            )}
            {profile.passaggi.map((p) => (
              <Fragment key={p.kind}>
                <dt>Passaggio ({p.kind})</dt>
                <dd>
                  {p.name}{" "}
                  <span class="tag">{p.source === "measured" ? "measured" : "typical for the voice type, not measured"}</span>{" "}
                  {p.source === "measured" && p.upward_midi !== null && p.downward_midi !== null && (
                    <span class="small muted">
                      up {midiToName(p.upward_midi)}, down {midiToName(p.downward_midi)};{" "}
                    </span>
                  )}
                  <span class="small muted">confidence {percent(p.confidence)}</span>
                </dd>
              </Fragment>
            ))}
            <dt>Speaking pitch</dt>
            <dd>
              {profile.speaking_f0_hz !== null
                ? `${profile.speaking_f0_hz.toFixed(0)} Hz (${midiToName(hzToMidi(profile.speaking_f0_hz) ?? 0)})`
                : "— (no speech task)"}
            </dd>
          </dl>
        </div>
        <div>
          <h4>Why</h4>
          <ul>
            {profile.reasons.map((reason) => (
              <li key={reason}>{reason}</li>
            ))}
          </ul>
          {(profile.warnings.length > 0 || profile.missing_tasks.length > 0) && (
            <>
              <h4>Check</h4>
              <ul>
                {profile.missing_tasks.length > 0 && <li>Not recorded: {profile.missing_tasks.join(", ")}.</li>}
                {profile.warnings.map((w) => (
                  <li key={w}>{w}</li>
                ))}
              </ul>
            </>
          )}
        </div>
      </div>
      <RangeOnKeyboard range={profile.range} comfort={profile.comfort} reached={profile.reached} passaggi={profile.passaggi} />
      <Cautions items={profile.cautions} />
      <div class="row no-print">
        <button type="button" class="primary" data-testid="audition-save" onClick={onSave}>
          Save to {profile.singer}'s history
        </button>
        <button type="button" onClick={() => window.print()}>
          Print the card…
        </button>
        {saved && (
          <p role="status" class="notice" style={{ margin: 0 }}>
            Saved to {saved}'s history.{" "}
            <button type="button" class="link" onClick={onHistory}>
              Open the history
            </button>
          </p>
        )}
      </div>
    </article>
  );
}
