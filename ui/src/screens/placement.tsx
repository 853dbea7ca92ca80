/**
 * Placement: constraints (section sizes, locks, exclusions), the optimiser's
 * suggestion, moves by drag and drop or by a select per singer with the fit
 * change shown at once (`place_move`), saved scenarios, a printable seating
 * list and its CSV, and the transposition advice beside it.
 */
import { useEffect, useRef, useState } from "preact/hooks";
import {
  api,
  backend,
  errorText,
  runJob,
  type JobId,
  type JobProgress,
  type PlaceMove,
  type PlaceResult,
  type TransposeAdvice,
} from "../api";
import { Choice, Cautions, ErrorMessage, Field, fitText, signed, today, useLoad } from "../components/common";
import { csvText } from "../lib/csv";
import { COMMON_LAYOUTS, layoutSections } from "../lib/layouts";

/** The last placement, kept while the director looks at other screens. */
let remembered: { result: PlaceResult; layout: string; pieces: string[] } | null = null;

interface MoveReport {
  name: string;
  from: string;
  to: string;
  move: PlaceMove;
}

export function PlacementScreen() {
  const pieces = useLoad(() => api.piecesList(), []);
  const singers = useLoad(() => api.singersList(false), []);
  const scenarios = useLoad(() => api.scenariosList(), []);
  const [chosen, setChosen] = useState<string[]>(remembered?.pieces ?? []);
  const [layout, setLayout] = useState(remembered?.layout ?? "SATB");
  const [sizes, setSizes] = useState<Record<string, [string, string]>>({});
  const [locks, setLocks] = useState<Record<string, string>>({});
  const [exclusions, setExclusions] = useState<[string, string][]>([]);
  const [pick, setPick] = useState<{ singer: string; section: string }>({ singer: "", section: "" });
  const [result, setResult] = useState<PlaceResult | null>(remembered?.result ?? null);
  const [progress, setProgress] = useState<JobProgress | null>(null);
  const [job, setJob] = useState<JobId | null>(null);
  const [error, setError] = useState<string | null>(null);
  const [lastMove, setLastMove] = useState<MoveReport | null>(null);
  const [scenarioName, setScenarioName] = useState("");
  const [scenarioNotes, setScenarioNotes] = useState("");
  const [notice, setNotice] = useState<string | null>(null);

  const sections = layoutSections(layout);

  useEffect(() => {
    if (chosen.length === 0 && pieces.data && pieces.data.length > 0) setChosen(pieces.data.map((p) => p.title));
  }, [pieces.data]);

  useEffect(() => {
    if (result) remembered = { result, layout, pieces: chosen };
  }, [result]);

  async function solve() {
    setError(null);
    setNotice(null);
    setLastMove(null);
    const limits: Record<string, [number, number]> = {};
    for (const section of sections) {
      const [min, max] = sizes[section] ?? ["", ""];
      if (min !== "" || max !== "") limits[section] = [min === "" ? 0 : Number(min), max === "" ? 9999 : Number(max)];
    }
    try {
      const placed = await runJob<PlaceResult>(
        () => api.placeSolve({ pieces: chosen, layout, sizes: limits, locks, exclusions }),
        setProgress,
        setJob,
      );
      setResult(placed);
    } catch (e) {
      setError(errorText(e));
    } finally {
      setProgress(null);
      setJob(null);
    }
  }

  async function move(name: string, to: string) {
    if (!result) return;
    const current = result.assignments.find((a) => a.singer === name);
    if (!current || current.section === to) return;
    setError(null);
    try {
      const outcome = await api.placeMove(name, to);
      const from = outcome.singer.from ?? current.section;
      if (outcome.placement) {
        setResult(outcome.placement);
        setLastMove({ name, from, to, move: outcome });
        return;
      }
      const assignments = result.assignments.map((a) => (a.singer === name ? { ...a, section: to, fit: outcome.singer.after } : a));
      const sectionRows = result.sections.map((s) => {
        const changed = outcome.sections.find((c) => c.section === s.section);
        return changed ? { ...s, count: changed.countAfter, mean_fit: changed.meanAfter } : s;
      });
      setResult({ ...result, assignments, sections: sectionRows, objective: result.objective + outcome.objectiveDelta });
      setLastMove({ name, from, to, move: outcome });
    } catch (e) {
      setError(errorText(e));
    }
  }

  async function saveScenario() {
    if (!result || !scenarioName.trim()) return;
    setError(null);
    try {
      await api.scenarioSave(scenarioName.trim(), scenarioNotes, result, { pieces: chosen, layout, sizes, locks, exclusions });
      setNotice(`Scenario "${scenarioName.trim()}" saved.`);
      setScenarioName("");
      setScenarioNotes("");
      scenarios.reload();
    } catch (e) {
      setError(errorText(e));
    }
  }

  function seatingCsv(placed: PlaceResult): string {
    const order = placed.layout.length ? placed.layout : sections;
    const rows = [...placed.assignments].sort((a, b) => order.indexOf(a.section) - order.indexOf(b.section) || a.singer.localeCompare(b.singer));
    return csvText([["section", "singer", "fit"], ...rows.map((a) => [a.section, a.singer, a.fit.toFixed(1)])]);
  }

  async function exportCsv() {
    if (!result) return;
    setError(null);
    try {
      const path = await (await backend()).pickSaveFile("Export the seating list", `seating-${layout}-${today()}.csv`, ["csv"]);
      if (!path) return;
      const rows = await api.seatingExport(path);
      setNotice(`Seating list of ${rows} singers written to ${path}.`);
    } catch (e) {
      setError(errorText(e));
    }
  }

  const activeSingers = (singers.data ?? []).map((s) => s.name);

  return (
    <section data-testid="screen-placement" aria-labelledby="placement-title">
      <div class="screen-head">
        <h2 id="placement-title">Placement</h2>
        <p>The optimiser's suggestion for the whole programme; move singers to try alternatives.</p>
      </div>
      <div class="print-only">
        <h2>
          Seating list, {layout}, {today()}
        </h2>
        <p>Pieces: {chosen.join(", ")}</p>
      </div>

      <div class="panel no-print">
        <h3>Constraints</h3>
        <div class="toolbar">
          <fieldset style={{ border: "none", margin: 0, padding: 0 }}>
            <legend class="small">Programme</legend>
            <div class="row">
              {(pieces.data ?? []).map((p) => (
                <Field key={p.title} label={p.title} inline>
                  <input
                    type="checkbox"
                    checked={chosen.includes(p.title)}
                    onChange={(e) => setChosen((e.target as HTMLInputElement).checked ? [...chosen, p.title] : chosen.filter((t) => t !== p.title))}
                  />
                </Field>
              ))}
            </div>
          </fieldset>
          <Field label="Layout">
            <select data-testid="place-layout" value={layout} onChange={(e) => setLayout((e.target as HTMLSelectElement).value)}>
              {COMMON_LAYOUTS.map((l) => (
                <Choice key={l} value={l} />
              ))}
            </select>
          </Field>
        </div>
        <table style={{ width: "auto" }}>
          <caption class="small" style={{ textAlign: "left" }}>
            Section sizes (leave empty for no limit)
          </caption>
          <thead>
            <tr>
              <th scope="col">Section</th>
              {sections.map((s) => (
                <th key={s} scope="col">
                  {s}
                </th>
              ))}
            </tr>
          </thead>
          <tbody>
            {(["at least", "at most"] as const).map((label, bound) => (
              <tr key={label}>
                <th scope="row">{label}</th>
                {sections.map((s) => (
                  <td key={s}>
                    <input
                      type="number"
                      min={0}
                      style={{ width: "4.2rem" }}
                      aria-label={`${s}: ${label}`}
                      value={sizes[s]?.[bound] ?? ""}
                      onInput={(e) => {
                        const next: [string, string] = [...(sizes[s] ?? ["", ""])] as [string, string];
                        next[bound] = (e.target as HTMLInputElement).value;
                        setSizes({ ...sizes, [s]: next });
                      }}
                    />
                  </td>
                ))}
              </tr>
            ))}
          </tbody>
        </table>
        <div class="row" style={{ marginTop: "0.7rem" }}>
          <Field label="Singer">
            <select value={pick.singer} onChange={(e) => setPick({ ...pick, singer: (e.target as HTMLSelectElement).value })}>
              <Choice value="">—</Choice>
              {activeSingers.map((n) => (
                <Choice key={n} value={n} />
              ))}
            </select>
          </Field>
          <Field label="Section">
            <select value={pick.section} onChange={(e) => setPick({ ...pick, section: (e.target as HTMLSelectElement).value })}>
              <Choice value="">—</Choice>
              {sections.map((s) => (
                <Choice key={s} value={s} />
              ))}
            </select>
          </Field>
          <button type="button" disabled={!pick.singer || !pick.section} onClick={() => setLocks({ ...locks, [pick.singer]: pick.section })}>
            Lock into section
          </button>
          <button
            type="button"
            disabled={!pick.singer || !pick.section}
            onClick={() => setExclusions([...exclusions.filter(([n, s]) => !(n === pick.singer && s === pick.section)), [pick.singer, pick.section]])}
          >
            Keep out of section
          </button>
        </div>
        {(Object.keys(locks).length > 0 || exclusions.length > 0) && (
          <ul class="small" style={{ marginTop: "0.5rem" }}>
            {Object.entries(locks).map(([name, section]) => (
              <li key={`lock-${name}`}>
                {name} locked in {section}{" "}
                <button type="button" class="link" onClick={() => setLocks(Object.fromEntries(Object.entries(locks).filter(([n]) => n !== name)))} aria-label={`Remove the lock of ${name}`}>
                  remove
                </button>
              </li>
            ))}
            {exclusions.map(([name, section]) => (
              <li key={`ex-${name}-${section}`}>
                {name} kept out of {section}{" "}
                <button type="button" class="link" onClick={() => setExclusions(exclusions.filter(([n, s]) => !(n === name && s === section)))} aria-label={`Remove: ${name} kept out of ${section}`}>
                  remove
                </button>
              </li>
            ))}
          </ul>
        )}
        <div class="row" style={{ marginTop: "0.8rem" }}>
          <button type="button" class="primary" data-testid="place-solve" disabled={job !== null} onClick={solve}>
            Suggest a placement
          </button>
          {job !== null && (
            <button type="button" onClick={() => api.jobCancel(job)}>
              Cancel
            </button>
          )}
          {progress && (
            <span role="status" class="small">
              {progress.label} ({progress.done + 1} of {progress.total})
            </span>
          )}
        </div>
      </div>

      <ErrorMessage error={error ?? pieces.error} />
      {pieces.data?.length === 0 && <p class="notice">No pieces in this library yet: import a score on the Pieces screen first.</p>}
      {singers.data?.length === 0 && <p class="notice">No singers in this library yet: add them on the Singers screen, or audition them.</p>}
      {notice && (
        <p class="notice" role="status">
          {notice}
        </p>
      )}

      {result && (
        <div class="columns wide-left">
          <div>
            <div class="panel">
              <div class="row" style={{ justifyContent: "space-between", alignItems: "baseline" }}>
                <h3>Suggested placement</h3>
                <span class="muted small">objective {result.objective.toFixed(1)} (sum of fits)</span>
              </div>
              <p data-testid="place-move-delta" role="status" class={lastMove ? "notice" : "muted small"}>
                {lastMove ? moveText(lastMove) : "Drag a singer to another section, or use the select in their row; the change in fit shows here."}
              </p>
              <Board result={result} sections={result.layout.length ? result.layout : sections} onMove={move} />
            </div>
            <div class="panel">
              <div class="row no-print" style={{ justifyContent: "space-between" }}>
                <h3>Seating list</h3>
                <div class="row">
                  <button type="button" onClick={() => window.print()}>
                    Print…
                  </button>
                  <button type="button" onClick={exportCsv}>
                    Export CSV
                  </button>
                </div>
              </div>
              <PlacementTable result={result} sections={result.layout.length ? result.layout : sections} onMove={move} />
              <details class="no-print" style={{ marginTop: "0.6rem" }}>
                <summary class="small">The seating list as CSV text (to copy)</summary>
                <textarea readOnly rows={8} style={{ width: "100%", fontFamily: "monospace" }} aria-label="Seating list as CSV" value={seatingCsv(result)} />
              </details>
            </div>
          </div>
          <div>
            <Cautions items={result.cautions} />
            <div class="panel">
              <h3>Sections</h3>
              <table>
                <thead>
                  <tr>
                    <th scope="col">Section</th>
                    <th scope="col" class="num">
                      Singers
                    </th>
                    <th scope="col" class="num">
                      Mean fit
                    </th>
                  </tr>
                </thead>
                <tbody>
                  {result.sections.map((s) => (
                    <tr key={s.section}>
                      <th scope="row">{s.section}</th>
                      <td class="num">{s.count}</td>
                      <td class="num">{fitText(s.mean_fit)}</td>
                    </tr>
                  ))}
                </tbody>
              </table>
              {result.at_risk.length > 0 && (
                <>
                  <h4 style={{ marginTop: "0.8rem" }}>Worth a second look</h4>
                  <ul>
                    {result.at_risk.map((r) => (
                      <li key={r.singer}>
                        {r.singer} in {r.section} (fit {fitText(r.fit)}): {r.reasons.join("; ")}
                      </li>
                    ))}
                  </ul>
                </>
              )}
            </div>
            <div class="panel no-print">
              <h3>Save as a scenario</h3>
              <div class="row">
                <Field label="Scenario name">
                  <input type="text" value={scenarioName} onInput={(e) => setScenarioName((e.target as HTMLInputElement).value)} />
                </Field>
                <Field label="Notes">
                  <input type="text" value={scenarioNotes} onInput={(e) => setScenarioNotes((e.target as HTMLInputElement).value)} />
                </Field>
                <button type="button" disabled={!scenarioName.trim()} onClick={saveScenario}>
                  Save scenario
                </button>
              </div>
              {(scenarios.data ?? []).length > 0 && (
                <ul class="small" style={{ marginTop: "0.5rem" }}>
                  {(scenarios.data ?? []).map((s) => (
                    <li key={s.name + s.savedAt}>
                      <strong>{s.name}</strong>, {s.savedAt.slice(0, 10)}, objective {s.objective === null ? "—" : s.objective.toFixed(1)}
                      {s.notes ? ` — ${s.notes}` : ""}
                    </li>
                  ))}
                </ul>
              )}
            </div>
            <TranspositionPanel titles={chosen} />
          </div>
        </div>
      )}
    </section>
  );
}

function moveText({ name, from, to, move }: MoveReport): string {
  const delta = move.singer.after - move.singer.before;
  const sectionText = move.sections
    .filter((s) => s.countBefore !== s.countAfter || s.meanBefore !== s.meanAfter)
    .map((s) => `${s.section} ${s.countBefore}→${s.countAfter} singers, mean fit ${fitText(s.meanBefore)}→${fitText(s.meanAfter)}`)
    .join("; ");
  const broken = move.violations && move.violations.length > 0 ? ` This breaks ${move.violations.length} constraint${move.violations.length === 1 ? "" : "s"}.` : "";
  const risk = move.atRiskAfter ? ` ${name} is now worth a second look in ${to}.` : "";
  return `Moved ${name} from ${from} to ${to}: their fit ${fitText(move.singer.before)} → ${fitText(move.singer.after)} (${signed(delta)}); whole placement ${signed(move.objectiveDelta)}. ${sectionText}.${broken}${risk}`;
}

function PlacementTable({ result, sections, onMove }: { result: PlaceResult; sections: string[]; onMove: (name: string, to: string) => void }) {
  const risk = new Map(result.at_risk.map((r) => [r.singer, r.reasons]));
  const rows = [...result.assignments].sort((a, b) => sections.indexOf(a.section) - sections.indexOf(b.section) || a.singer.localeCompare(b.singer));
  return (
    <table data-testid="placement-table">
      <caption class="visually-hidden">Seating list: each singer's section and fit</caption>
      <thead>
        <tr>
          <th scope="col">Singer</th>
          <th scope="col">Section</th>
          <th scope="col" class="num">
            Fit
          </th>
          <th scope="col">Note</th>
          <th scope="col" class="no-print">
            Move to
          </th>
        </tr>
      </thead>
      <tbody>
        {rows.map((a) => (
          <tr key={a.singer} data-testid={`placement-row-${a.singer}`}>
            <th scope="row">{a.singer}</th>
            <td data-testid={`placement-section-${a.singer}`}>{a.section}</td>
            <td class="num">{fitText(a.fit)}</td>
            <td>{risk.has(a.singer) ? <span class="tag warn">check: {risk.get(a.singer)!.join("; ")}</span> : ""}</td>
            <td class="no-print">
              <select data-testid={`place-move-${a.singer}`} aria-label={`Move ${a.singer} to section`} value={a.section} onChange={(e) => onMove(a.singer, (e.target as HTMLSelectElement).value)}>
                {sections.map((s) => (
                  <Choice key={s} value={s} />
                ))}
              </select>
            </td>
          </tr>
        ))}
      </tbody>
    </table>
  );
}

/** Sections as columns of singer chips; drag a chip (mouse, pen or touch) onto another section to move. */
function Board({ result, sections, onMove }: { result: PlaceResult; sections: string[]; onMove: (name: string, to: string) => void }) {
  const [drag, setDrag] = useState<{ name: string; x: number; y: number; over: string | null; moved: boolean } | null>(null);
  const start = useRef<{ x: number; y: number } | null>(null);

  useEffect(() => {
    if (!drag) return;
    const onMoveEvent = (event: PointerEvent) => {
      const origin = start.current;
      const moved = drag.moved || (origin !== null && Math.hypot(event.clientX - origin.x, event.clientY - origin.y) > 5);
      const target = document.elementFromPoint(event.clientX, event.clientY)?.closest<HTMLElement>("[data-section]");
      setDrag({ ...drag, x: event.clientX, y: event.clientY, over: target?.dataset.section ?? null, moved });
    };
    const onUp = () => {
      if (drag.moved && drag.over) onMove(drag.name, drag.over);
      setDrag(null);
      start.current = null;
    };
    window.addEventListener("pointermove", onMoveEvent);
    window.addEventListener("pointerup", onUp);
    window.addEventListener("pointercancel", onUp);
    return () => {
      window.removeEventListener("pointermove", onMoveEvent);
      window.removeEventListener("pointerup", onUp);
      window.removeEventListener("pointercancel", onUp);
    };
  }, [drag, onMove]);

  return (
    <div class="board no-print" aria-label="Sections; drag singers between them (or use the Move to select in the seating list)">
      {sections.map((section) => {
        const members = result.assignments.filter((a) => a.section === section).sort((a, b) => a.singer.localeCompare(b.singer));
        const stats = result.sections.find((s) => s.section === section);
        return (
          <div key={section} data-section={section} class={`board-section${drag?.moved && drag.over === section ? " drop-target" : ""}`}>
            <h4>
              <span>{section}</span>
              <span class="small muted">
                {members.length} · mean {fitText(stats?.mean_fit)}
              </span>
            </h4>
            {members.map((a) => (
              <button
                type="button"
                key={a.singer}
                class={`chip${drag?.moved && drag.name === a.singer ? " dragging" : ""}`}
                aria-label={`${a.singer}, ${section}, fit ${fitText(a.fit)}. Enter: go to the Move to select`}
                onPointerDown={(event) => {
                  if (event.button !== 0) return;
                  start.current = { x: event.clientX, y: event.clientY };
                  setDrag({ name: a.singer, x: event.clientX, y: event.clientY, over: section, moved: false });
                }}
                onClick={() => document.querySelector<HTMLElement>(`[data-testid="place-move-${CSS.escape(a.singer)}"]`)?.focus()}
              >
                <span>{a.singer}</span>
                <span class="fit">{fitText(a.fit)}</span>
              </button>
            ))}
          </div>
        );
      })}
      {drag?.moved && (
        <div class="drag-ghost" style={{ left: `${drag.x + 12}px`, top: `${drag.y + 8}px` }} aria-hidden="true">
          {drag.name} → {drag.over ?? "…"}
        </div>
      )}
    </div>
  );
}

function TranspositionPanel({ titles }: { titles: string[] }) {
  const [title, setTitle] = useState(titles[0] ?? "");
  const [advice, setAdvice] = useState<TransposeAdvice | null>(null);
  const [error, setError] = useState<string | null>(null);
  useEffect(() => {
    if (!titles.includes(title)) setTitle(titles[0] ?? "");
  }, [titles.join("\u0000")]);
  useEffect(() => {
    if (!title) return;
    setError(null);
    api.transposeAdvice(title).then(setAdvice, (e) => {
      setAdvice(null);
      setError(errorText(e));
    });
  }, [title]);
  return (
    <div class="panel">
      <h3>Transposition advice</h3>
      <Field label="Piece">
        <select value={title} onChange={(e) => setTitle((e.target as HTMLSelectElement).value)}>
          {titles.map((t) => (
            <Choice key={t} value={t} />
          ))}
        </select>
      </Field>
      <ErrorMessage error={error} />
      {advice && (
        <>
          <p style={{ marginTop: "0.5rem" }}>
            Written in {advice.written_key ?? "an unknown key"}.{" "}
            {advice.best_semitones === 0 ? (
              <strong>It sits best as written.</strong>
            ) : (
              <strong>
                Best: {advice.keys.find((k) => k.transpose_semitones === advice.best_semitones)?.interval} (
                {advice.keys.find((k) => k.transpose_semitones === advice.best_semitones)?.key}).
              </strong>
            )}
          </p>
          <table>
            <thead>
              <tr>
                <th scope="col">Key</th>
                <th scope="col">Shift</th>
                <th scope="col">Weakest section</th>
                <th scope="col" class="num">
                  Its mean fit
                </th>
              </tr>
            </thead>
            <tbody>
              {advice.keys.map((k) => (
                <tr key={k.transpose_semitones} class={k.transpose_semitones === advice.best_semitones ? "selected" : ""}>
                  <th scope="row">
                    {k.key}
                    {k.transpose_semitones === advice.best_semitones ? " (best)" : ""}
                    {k.transpose_semitones === 0 ? " (written)" : ""}
                  </th>
                  <td>{k.interval}</td>
                  <td>{k.worst_section ?? "—"}</td>
                  <td class="num">{fitText(k.worst_mean_fit ?? k.fit)}</td>
                </tr>
              ))}
            </tbody>
          </table>
          {advice.empty_sections && advice.empty_sections.length > 0 && (
            <p class="small muted">No singers placed in: {advice.empty_sections.join(", ")}.</p>
          )}
        </>
      )}
    </div>
  );
}
