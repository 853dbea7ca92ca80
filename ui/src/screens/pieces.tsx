/**
 * Pieces: import MIDI or MusicXML; per part the range, a tessitura histogram
 * on a keyboard axis, hot spots by bar (each opens a notation excerpt), the
 * cycle dose; and the part → section mapping, editable.
 */
import { Fragment } from "preact";
import { useEffect, useRef, useState } from "preact/hooks";
import { api, backend, errorText, type HotSpot, type PartAnalysis, type PieceAnalysis } from "../api";
import { useShared } from "../app";
import { HistogramOnKeyboard } from "../components/charts";
import { Choice, ErrorMessage, Field, seconds, useLoad } from "../components/common";
import { NotationExcerpt } from "../components/notation";
import { excerptBars } from "../lib/bars";
import { COMMON_LAYOUTS, layoutSections } from "../lib/layouts";
import { midiToName, spelledWithFlats } from "../lib/pitch";

const AUTO = "__auto";
const NOT_SUNG = "__none";

/** The sections that sing a part under the current mapping, in words. */
function mappedSection(piece: PieceAnalysis, part: PartAnalysis): string {
  const value = piece.mapping?.[part.name] ?? part.section;
  if (Array.isArray(value)) return value.length ? value.join(" + ") : "not sung";
  return value ?? "—";
}

/** The director's stored choice for a part as a select value. */
function storedChoice(piece: PieceAnalysis, part: string): string {
  if (!piece.overrides || !(part in piece.overrides)) return AUTO;
  return piece.overrides[part] ?? NOT_SUNG;
}

const thousands = (value: number) => Math.round(value).toLocaleString("en-GB");

export function PiecesScreen() {
  const { refreshLibrary, parameter } = useShared();
  const list = useLoad(() => api.piecesList(), []);
  const [selected, setSelected] = useState<string | null>(parameter);
  const [analysis, setAnalysis] = useState<PieceAnalysis | null>(null);
  const [partName, setPartName] = useState<string | null>(null);
  const [path, setPath] = useState("");
  const [error, setError] = useState<string | null>(null);
  const [busy, setBusy] = useState(false);
  const [overrides, setOverrides] = useState<Record<string, string>>({});
  const [mappingChanged, setMappingChanged] = useState(false);
  const [excerpt, setExcerpt] = useState<{ xml: string; label: string } | null>(null);

  useEffect(() => {
    if (selected === null && list.data && list.data.length > 0) setSelected(list.data[0].title);
  }, [list.data, selected]);

  // Only the latest request may fill the screen (an import may overtake a load).
  const request = useRef(0);

  useEffect(() => {
    if (selected === null) return;
    setError(null);
    setExcerpt(null);
    setOverrides({});
    setMappingChanged(false);
    const mine = ++request.current;
    api.pieceAnalysis(selected).then(
      (a) => {
        if (mine !== request.current) return;
        setAnalysis(a);
        setPartName(a.parts[0]?.name ?? null);
      },
      (e) => mine === request.current && setError(errorText(e)),
    );
  }, [selected]);

  async function importPiece() {
    setError(null);
    setBusy(true);
    const mine = ++request.current;
    try {
      const imported = await api.pieceImport(path.trim());
      if (mine !== request.current) return;
      setPath("");
      list.reload();
      refreshLibrary();
      setAnalysis(imported);
      setPartName(imported.parts[0]?.name ?? null);
      setSelected(imported.title ?? imported.file);
    } catch (e) {
      setError(errorText(e));
    } finally {
      setBusy(false);
    }
  }

  async function chooseFile() {
    const picked = await (await backend()).pickFile("Score (MIDI or MusicXML)", ["mid", "midi", "musicxml", "xml", "mxl"]);
    if (picked) setPath(picked);
  }

  async function saveMapping() {
    if (!analysis || selected === null) return;
    setError(null);
    const choices: Record<string, string | null> = {};
    for (const p of analysis.parts) {
      const value = overrides[p.name] ?? storedChoice(analysis, p.name);
      if (value === NOT_SUNG) choices[p.name] = null;
      else if (value !== AUTO) choices[p.name] = value;
    }
    try {
      setAnalysis(await api.pieceSetMapping(selected, choices, analysis.layout));
      setOverrides({});
      setMappingChanged(false);
    } catch (e) {
      setError(errorText(e));
    }
  }

  async function changeLayout(layout: string) {
    if (selected === null) return;
    setError(null);
    try {
      setAnalysis(await api.pieceAnalysisIn(selected, layout));
      setOverrides({});
      setMappingChanged(true);
    } catch (e) {
      setError(errorText(e));
    }
  }

  async function showExcerpt(part: PartAnalysis, spot: { bars: string }) {
    if (selected === null) return;
    const bars = excerptBars(spot.bars);
    if (!bars) return;
    setError(null);
    try {
      const xml = await api.notationExcerpt(selected, part.name, bars.first, bars.last);
      setExcerpt({
        xml,
        label: `${part.name}, bar${bars.first === bars.last ? ` ${bars.first}` : `s ${bars.first}–${bars.last}`} of ${selected}`,
      });
    } catch (e) {
      setError(errorText(e));
    }
  }

  const part = analysis?.parts.find((p) => p.name === partName) ?? null;
  const allParts = analysis ? analysis.parts.flatMap((p) => [p, ...(p.divisi ?? [])]) : [];
  // The engine spells names in the piece's key; the UI's own names follow it.
  const flats = spelledWithFlats(allParts.flatMap((p) => [p.lowest, p.highest, p.longest_note.name]));
  const name = (midi: number) => midiToName(midi, flats);

  return (
    <section data-testid="screen-pieces" aria-labelledby="pieces-title">
      <div class="screen-head">
        <h2 id="pieces-title">Pieces</h2>
        <p>Where each part sits, measured over sung time (tempo, ties and repeats respected).</p>
      </div>

      <form
        class="toolbar"
        onSubmit={(e) => {
          e.preventDefault();
          void importPiece();
        }}
      >
        <Field label="Score file (MIDI, MusicXML or .mxl)">
          <input type="text" size={60} data-testid="piece-import-input" value={path} onInput={(e) => setPath((e.target as HTMLInputElement).value)} />
        </Field>
        <button type="button" onClick={chooseFile}>
          Choose file…
        </button>
        <button type="submit" class="primary" data-testid="piece-import-submit" disabled={!path.trim() || busy}>
          {busy ? "Importing…" : "Import"}
        </button>
      </form>
      <ErrorMessage error={error ?? list.error} />

      <div class="columns narrow-left">
        <nav class="panel" aria-label="Pieces in the library">
          <h3>Library</h3>
          <ul data-testid="pieces-list" style={{ listStyle: "none", padding: 0, margin: 0 }}>
            {(list.data ?? []).map((p) => (
              <li key={p.title}>
                <button
                  type="button"
                  data-testid={`piece-${p.title}`}
                  class={selected === p.title ? "primary" : ""}
                  aria-current={selected === p.title ? "true" : undefined}
                  style={{ width: "100%", textAlign: "left", margin: "0.15rem 0" }}
                  onClick={() => setSelected(p.title)}
                >
                  {p.title} <span class="small">({p.parts} parts)</span>
                </button>
              </li>
            ))}
          </ul>
          {list.data?.length === 0 && <p class="muted">No pieces yet: import a score.</p>}
        </nav>

        <div>
          {analysis && (
            <div class="panel">
              <h3>{analysis.title ?? analysis.file}</h3>
              <p class="muted small">{analysis.file}</p>
              {analysis.warnings.map((w) => (
                <p key={w} class="tag warn">
                  Warning: {w}
                </p>
              ))}
              <div class="table-wrap">
                <table data-testid="parts-table">
                  <caption class="visually-hidden">Parts of {analysis.title}</caption>
                  <thead>
                    <tr>
                      <th scope="col">Part</th>
                      <th scope="col">Sung by</th>
                      <th scope="col">Range</th>
                      <th scope="col">Tessitura (mean ± 1 SD)</th>
                      <th scope="col" class="num">
                        Sung time
                      </th>
                      <th scope="col">Hot spots (bars)</th>
                      <th scope="col" class="num">
                        Cycle dose
                      </th>
                    </tr>
                  </thead>
                  <tbody>
                    {allParts.map((p) => {
                      const isDivisi = !analysis.parts.includes(p);
                      return (
                        <tr key={p.name} class={p.name === partName ? "selected" : ""}>
                          <th scope="row">
                            <button type="button" class="link" aria-pressed={p.name === partName} onClick={() => setPartName(p.name)}>
                              {isDivisi ? `↳ ${p.name}` : p.name}
                            </button>
                            {p.kind !== "voice" && <span class="tag">accompaniment</span>}
                          </th>
                          <td>
                            {isDivisi ? (
                              "divisi"
                            ) : (
                              <select
                                aria-label={`Section that sings ${p.name}`}
                                value={overrides[p.name] ?? storedChoice(analysis, p.name)}
                                onChange={(e) => {
                                  setOverrides({ ...overrides, [p.name]: (e.target as HTMLSelectElement).value });
                                  setMappingChanged(true);
                                }}
                              >
                                <Choice value={AUTO}>auto: {mappedSection(analysis, p)}</Choice>
                                <Choice value={NOT_SUNG}>not sung by the choir</Choice>
                                {layoutSections(analysis.layout ?? "SATB").map((section) => (
                                  <Choice key={section} value={section}>
                                    {section}
                                  </Choice>
                                ))}
                              </select>
                            )}
                          </td>
                          <td>
                            {p.lowest}–{p.highest}
                          </td>
                          <td>
                            {name(p.mean_midi)} ({name(p.mean_midi - p.sd_semitones)}–{name(p.mean_midi + p.sd_semitones)})
                          </td>
                          <td class="num">{seconds(p.sung_seconds)}</td>
                          <td>
                            <HotSpotButtons part={p} onShow={showExcerpt} />
                          </td>
                          <td class="num">{thousands(p.cycle_dose)}</td>
                        </tr>
                      );
                    })}
                  </tbody>
                </table>
              </div>
              {analysis.mappingError && <p class="tag warn">The parts could not be mapped to {analysis.layout}: {analysis.mappingError}</p>}
              <div class="row" style={{ marginTop: "0.6rem" }}>
                <Field label="Layout for the mapping">
                  <select value={analysis.layout ?? "SATB"} onChange={(e) => changeLayout((e.target as HTMLSelectElement).value)}>
                    {[...new Set([analysis.layout ?? "SATB", ...COMMON_LAYOUTS])].map((l) => (
                      <Choice key={l} value={l} />
                    ))}
                  </select>
                </Field>
                <button type="button" disabled={!mappingChanged} onClick={saveMapping}>
                  Save section mapping
                </button>
                <span class="small muted">
                  Cycle dose: vocal-fold vibration cycles over the part, Σ f0 × duration (Titze, Švec &amp; Popolo 2003).
                </span>
              </div>
            </div>
          )}

          {excerpt && (
            <div class="panel" aria-live="polite">
              <div class="row" style={{ justifyContent: "space-between" }}>
                <h3>Notation excerpt</h3>
                <button type="button" onClick={() => setExcerpt(null)}>
                  Close
                </button>
              </div>
              <NotationExcerpt musicXml={excerpt.xml} label={excerpt.label} />
            </div>
          )}

          {part && (
            <div class="panel">
              <h3>{part.name}: where the time is spent</h3>
              <HistogramOnKeyboard
                title={part.name}
                histogram={part.histogram_seconds}
                lowest={part.lowest_midi}
                highest={part.highest_midi}
                lowestName={part.lowest}
                highestName={part.highest}
                axisLow={Math.min(...allParts.map((p) => p.lowest_midi))}
                axisHigh={Math.max(...allParts.map((p) => p.highest_midi))}
              />
              <p class="small muted">Bars: seconds sung on each note (tempo, ties and repeats counted); the bracket is the part's range. The axis spans the whole piece, so parts compare.</p>
              <dl class="facts">
                <dt>Range</dt>
                <dd>
                  {part.lowest}–{part.highest}
                </dd>
                <dt>Middle half of sung time</dt>
                <dd>
                  {part.percentiles_midi["25"] !== undefined && part.percentiles_midi["75"] !== undefined
                    ? `${name(part.percentiles_midi["25"])}–${name(part.percentiles_midi["75"])} (25th–75th percentile)`
                    : "—"}
                </dd>
                <dt>Longest note</dt>
                <dd>
                  {part.longest_note.name}, {part.longest_note.seconds.toFixed(1)} s in bar {part.longest_note.bars}
                </dd>
                <dt>Time dose</dt>
                <dd>{seconds(part.time_dose_seconds)} of singing</dd>
                <dt>Cycle dose</dt>
                <dd>{thousands(part.cycle_dose)} cycles</dd>
              </dl>
              <h4>Hot spots</h4>
              {part.hot_spots.length === 0 ? (
                <p class="muted">None.</p>
              ) : (
                <ul>
                  {part.hot_spots.map((spot, i) => (
                    <li key={i}>
                      <span class="tag">{spot.kind === "high" ? "high" : "low"}</span> bars{" "}
                      <button type="button" class="link" onClick={() => showExcerpt(part, spot)} aria-label={`Show bars ${spot.bars} of ${part.name} in notation`}>
                        {spot.bars}
                      </button>{" "}
                      around {name(spot.mean_midi)}, {spot.start_seconds.toFixed(0)}–{spot.end_seconds.toFixed(0)} s
                    </li>
                  ))}
                </ul>
              )}
            </div>
          )}
        </div>
      </div>
    </section>
  );
}

function HotSpotButtons({ part, onShow }: { part: PartAnalysis; onShow: (part: PartAnalysis, spot: HotSpot) => void }) {
  if (part.hot_spots.length === 0) return <span class="muted">—</span>;
  return (
    <>
      {part.hot_spots.map((spot, i) => (
        <Fragment key={i}>
          {i > 0 && " "}
          <button
            type="button"
            class="link"
            data-testid={`hot-spot-${part.name}-${i}`}
            onClick={() => onShow(part, spot)}
            aria-label={`${spot.kind} spot, bars ${spot.bars} of ${part.name}: show the notation`}
          >
            {spot.bars}
          </button>
          <span class="small"> ({spot.kind === "high" ? "high" : "low"})</span>
        </Fragment>
      ))}
    </>
  );
}
