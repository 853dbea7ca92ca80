/**
 * Fit: a singer × part (or section) heatmap for a piece or a programme, in
 * viridis with the number in every cell; a click (or Enter) on a cell opens
 * its breakdown: time outside comfort, the worst passages, the reserves.
 */
import { useEffect, useState } from "preact/hooks";
import { api, errorText, type FitCell, type FitMatrix } from "../api";
import { Choice, Cautions, ErrorMessage, Field, fitText, percent, seconds, useLoad } from "../components/common";
import { COMMON_LAYOUTS } from "../lib/layouts";
import { fitCellColours, viridisHex } from "../lib/palette";

/** The reserves in semitones, whatever the exact field names. */
export function reservesOf(cell: FitCell): { upper: number | null; lower: number | null } {
  const r = cell.reserves as unknown;
  if (Array.isArray(r)) return { upper: r[0] ?? null, lower: r[1] ?? null };
  if (r && typeof r === "object") {
    const entries = Object.entries(r as Record<string, unknown>);
    const find = (word: string) => {
      const hit = entries.find(([key]) => key.toLowerCase().includes(word));
      return typeof hit?.[1] === "number" ? (hit[1] as number) : null;
    };
    return { upper: find("upper"), lower: find("lower") };
  }
  return { upper: null, lower: null };
}

const semitones = (value: number | null) =>
  value === null ? "—" : `${value > 0 ? "+" : value < 0 ? "−" : ""}${Math.abs(value).toFixed(0)} semitone${Math.abs(value) === 1 ? "" : "s"}`;

export function FitScreen() {
  const pieces = useLoad(() => api.piecesList(), []);
  const [chosen, setChosen] = useState<string[]>([]);
  const [layout, setLayout] = useState("SATB");
  const [by, setBy] = useState<"part" | "section">("part");
  const [matrix, setMatrix] = useState<FitMatrix | null>(null);
  const [error, setError] = useState<string | null>(null);
  const [cell, setCell] = useState<[number, number] | null>(null);

  useEffect(() => {
    if (chosen.length === 0 && pieces.data && pieces.data.length > 0) setChosen([pieces.data[0].title]);
  }, [pieces.data]);

  useEffect(() => {
    if (chosen.length === 0) return;
    setError(null);
    setCell(null);
    api.fitMatrix(chosen, layout, by).then(setMatrix, (e) => {
      setMatrix(null);
      setError(errorText(e));
    });
  }, [chosen.join("\u0000"), layout, by]);

  // One tab stop for the whole grid; the arrow keys move between cells (WAI-ARIA grid practice).
  const [focusCell, setFocusCell] = useState<[number, number]>([0, 0]);
  function moveFocus(event: KeyboardEvent, r: number, c: number) {
    if (!matrix) return;
    const steps: Record<string, [number, number]> = { ArrowUp: [-1, 0], ArrowDown: [1, 0], ArrowLeft: [0, -1], ArrowRight: [0, 1] };
    const step = steps[event.key];
    if (!step) return;
    event.preventDefault();
    let [nr, nc] = [r + step[0], c + step[1]];
    // Skip empty cells in the direction of travel.
    while (nr >= 0 && nc >= 0 && nr < matrix.rows.length && nc < matrix.columns.length) {
      const target = document.querySelector<HTMLElement>(`[data-cell="${nr},${nc}"]`);
      if (target) {
        target.focus();
        return;
      }
      nr += step[0];
      nc += step[1];
    }
  }

  useEffect(() => {
    if (!matrix) return;
    for (let r = 0; r < matrix.rows.length; r++) {
      const c = (matrix.cells[r] ?? []).findIndex((value) => value !== null);
      if (c >= 0) {
        setFocusCell([r, c]);
        return;
      }
    }
  }, [matrix]);

  const toggle = (title: string, on: boolean) => setChosen(on ? [...chosen, title] : chosen.filter((t) => t !== title));
  const selected = matrix && cell ? matrix.cells[cell[0]]?.[cell[1]] : null;

  return (
    <section data-testid="screen-fit" aria-labelledby="fit-title">
      <div class="screen-head">
        <h2 id="fit-title">Fit</h2>
        <p>How well each singer fits each part: 100 = all sung time inside the comfort zone.</p>
      </div>

      <div class="toolbar">
        <fieldset class="panel" style={{ margin: 0, padding: "0.4rem 0.8rem" }}>
          <legend>Pieces (one, or several for a programme)</legend>
          <div class="row">
            {(pieces.data ?? []).map((p) => (
              <Field key={p.title} label={p.title} inline>
                <input type="checkbox" checked={chosen.includes(p.title)} onChange={(e) => toggle(p.title, (e.target as HTMLInputElement).checked)} />
              </Field>
            ))}
          </div>
        </fieldset>
        <Field label="Layout">
          <select value={layout} onChange={(e) => setLayout((e.target as HTMLSelectElement).value)}>
            {COMMON_LAYOUTS.map((l) => (
              <Choice key={l} value={l} />
            ))}
          </select>
        </Field>
        <fieldset style={{ border: "none", margin: 0, padding: 0 }}>
          <legend class="small">Columns</legend>
          <div class="row">
            <Field label="parts" inline>
              <input type="radio" name="fit-by" checked={by === "part"} onChange={() => setBy("part")} />
            </Field>
            <Field label="sections" inline>
              <input type="radio" name="fit-by" checked={by === "section"} onChange={() => setBy("section")} />
            </Field>
          </div>
        </fieldset>
      </div>
      <ErrorMessage error={error ?? pieces.error} />
      {pieces.data?.length === 0 && <p class="notice">No pieces in this library yet: import a score on the Pieces screen.</p>}
      {matrix?.left_out && matrix.left_out.length > 0 && (
        <p class="notice">Left out (no range yet): {matrix.left_out.join(", ")}.</p>
      )}

      {matrix && (
        <div class="columns wide-left">
          <div class="panel">
            <Legend />
            <div class="table-wrap">
              <table class="heatmap" data-testid="fit-heatmap">
                <caption class="visually-hidden">Fit of each singer (rows) to each {by} (columns), 0 to 100</caption>
                <thead>
                  <tr>
                    <th scope="col">Singer</th>
                    {matrix.columns.map((column) => (
                      <th scope="col" key={column}>
                        {column}
                      </th>
                    ))}
                  </tr>
                </thead>
                <tbody>
                  {matrix.rows.map((row, r) => (
                    <tr key={row}>
                      <th scope="row">{row}</th>
                      {matrix.columns.map((column, c) => {
                        const value = matrix.cells[r]?.[c];
                        if (!value) {
                          const why = matrix.not_allowed?.[`${row} / ${column}`];
                          return (
                            <td key={column} class="empty-cell" title={why ?? "no figure"}>
                              —{why && <span class="visually-hidden">: {why}</span>}
                            </td>
                          );
                        }
                        const colours = fitCellColours(value.fit);
                        const flag = value.beyondRangeSeconds > 0;
                        return (
                          <td key={column}>
                            <button
                              type="button"
                              data-cell={`${r},${c}`}
                              tabIndex={r === focusCell[0] && c === focusCell[1] ? 0 : -1}
                              onKeyDown={(event) => moveFocus(event, r, c)}
                              onFocus={() => setFocusCell([r, c])}
                              style={{ background: colours.background, color: colours.text }}
                              aria-pressed={cell?.[0] === r && cell?.[1] === c}
                              aria-label={`${row}, ${column}: fit ${fitText(value.fit)}${flag ? ", sings beyond range" : ""}`}
                              onClick={() => setCell([r, c])}
                            >
                              {fitText(value.fit)}
                              {flag ? " !" : ""}
                            </button>
                          </td>
                        );
                      })}
                    </tr>
                  ))}
                </tbody>
              </table>
            </div>
            <p class="small muted">
              "!" after a number: the part goes beyond the singer's range (a hard flag). Keyboard: Tab into the grid, arrow keys to move, Enter for the
              breakdown.
            </p>
          </div>
          <div>
            {selected && cell ? (
              <Breakdown singer={matrix.rows[cell[0]]} column={matrix.columns[cell[1]]} cell={selected} />
            ) : (
              <div class="panel muted">Choose a cell for its breakdown.</div>
            )}
            <Cautions items={matrix.cautions} />
          </div>
        </div>
      )}
    </section>
  );
}

function Legend() {
  const stops = Array.from({ length: 11 }, (_, i) => `${viridisHex(i / 10)} ${i * 10}%`).join(", ");
  return (
    <div class="legend" aria-hidden="true">
      <span>fit 0 (poor)</span>
      <span style={{ display: "inline-block", width: "12rem", height: "0.8rem", background: `linear-gradient(to right, ${stops})`, border: "1px solid #000" }} />
      <span>100 (all inside the comfort zone)</span>
    </div>
  );
}

function Breakdown({ singer, column, cell }: { singer: string; column: string; cell: FitCell }) {
  const reserves = reservesOf(cell);
  return (
    <div class="panel" aria-live="polite">
      <h3>
        {singer} on {column}
      </h3>
      <p class="big-figure">fit {fitText(cell.fit)}</p>
      <dl class="facts">
        <dt>Outside the comfort zone</dt>
        <dd>
          {percent(cell.outsideShare)} of sung time{cell.outsideSeconds !== null ? ` (${seconds(cell.outsideSeconds)})` : ""}
        </dd>
        <dt>Severity</dt>
        <dd>{cell.severity.toFixed(2)} semitones beyond comfort, on average over sung time</dd>
        <dt>Beyond the range</dt>
        <dd>{cell.beyondRangeSeconds > 0 ? <strong>{seconds(cell.beyondRangeSeconds)} (flag)</strong> : "none"}</dd>
        <dt>Upper reserve</dt>
        <dd>{semitones(reserves.upper)} (singer's top − part's top)</dd>
        <dt>Lower reserve</dt>
        <dd>{semitones(reserves.lower)} (part's bottom − singer's bottom)</dd>
      </dl>
      <h4>Worst passages</h4>
      {cell.worst.length === 0 ? (
        <p class="muted">None outside the comfort zone.</p>
      ) : (
        <ul>
          {cell.worst.map((w, i) => (
            <li key={i}>
              {w.piece && w.line ? `${w.piece}, ${w.line}: ` : ""}bars {w.bars}: {seconds(w.seconds)} {w.side === "above" ? "above" : w.side === "below" ? "below" : "outside"} the comfort zone
            </li>
          ))}
        </ul>
      )}
    </div>
  );
}
