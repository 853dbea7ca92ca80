/**
 * SVG charts on a keyboard axis: a singer's range card, a part's tessitura
 * histogram, a singer's history, and the live pitch trace.
 *
 * Invariant: drawing only. Every figure comes from the engine; the charts
 * place it on an axis (lib/keyboard.ts) and write its note name beside it, so
 * nothing is told by colour alone.
 */
import type { PitchFrame, HistoryEntry, Passaggio } from "../api";
import { axisKeys, axisLabels, keyLeft, keyboardAxis, type KeyboardAxis, labelSides, xOfMidi } from "../lib/keyboard";
import { hzToMidi, isBlackKey, midiToName, pitchClass } from "../lib/pitch";
import { theme } from "../lib/theme";

const FONT = 12;

/** Piano keys along the bottom of a chart, with a name under every C. */
function KeyboardStrip({ axis, y, height }: { axis: KeyboardAxis; y: number; height: number }) {
  const keys = axisKeys(axis);
  return (
    <g aria-hidden="true">
      {keys.map((key) => (
        <rect
          key={key.midi}
          x={key.x}
          y={y}
          width={key.width}
          height={key.black ? height * 0.62 : height}
          fill={key.black ? theme.keyBlack : theme.keyWhite}
          stroke={theme.border}
          stroke-width={0.5}
        />
      ))}
      {axisLabels(axis).map((label) => (
        <text key={label.midi} x={label.x} y={y + height + FONT + 2} text-anchor="middle" font-size={FONT} fill={theme.keyLabel}>
          {label.name}
        </text>
      ))}
    </g>
  );
}

export interface Span {
  low_midi: number;
  high_midi: number;
  low: string;
  high: string;
}

/**
 * Range and comfort zone on a keyboard, passaggi marked, each with its name:
 * the audition result card's picture.
 */
export function RangeOnKeyboard({
  range,
  comfort,
  reached,
  passaggi,
  width = 860,
}: {
  range: Span;
  comfort: Span;
  reached?: Span | null;
  passaggi: Passaggio[];
  width?: number;
}) {
  const labelWidth = 118;
  const marks = passaggi.map((p) => p.midi);
  const low = Math.min(range.low_midi, comfort.low_midi, reached?.low_midi ?? Infinity, ...marks);
  const high = Math.max(range.high_midi, comfort.high_midi, reached?.high_midi ?? -Infinity, ...marks);
  const axis = keyboardAxis(low - 1, high + 1, width - labelWidth - 8, labelWidth, 24);
  const rows: { label: string; span: Span; fill: string; stroke: string; dashed?: boolean }[] = [];
  if (reached) rows.push({ label: "Reached in glides", span: reached, fill: "none", stroke: theme.muted, dashed: true });
  rows.push({ label: "Range (held ≥ 1 s)", span: range, fill: theme.range, stroke: theme.accent });
  rows.push({ label: "Comfort zone", span: comfort, fill: theme.comfort, stroke: theme.comfort });
  const rowHeight = 26;
  const top = 8;
  const passaggioTop = top + rows.length * rowHeight;
  const keysY = passaggioTop + 34;
  const height = keysY + 44 + FONT + 4;
  const passaggioText = (p: Passaggio) =>
    `${p.kind} ${p.name} ${p.source === "typical" ? "(typical, not measured)" : "(measured)"}`;
  // Each label on a row of its own, on the side of its line that crosses no
  // other passaggio line when it can (text width estimated from its length).
  const passaggioSides = labelSides(
    passaggi.map((p) => ({ x: xOfMidi(axis, p.midi), width: passaggioText(p).length * (FONT - 1) * 0.6 + 4 })),
    labelWidth,
    width,
  );
  const description =
    `Range ${range.low} to ${range.high}; comfort zone ${comfort.low} to ${comfort.high}` +
    (passaggi.length ? `; passaggi ${passaggi.map((p) => `${p.kind} ${p.name} (${p.source})`).join(", ")}` : "");
  return (
    <svg class="chart" style={{ maxWidth: `${width * 1.15}px` }} viewBox={`0 0 ${width} ${height}`} role="img" aria-label={description}>
      {rows.map((row, i) => {
        const y = top + i * rowHeight;
        const x0 = keyLeft(axis, Math.round(row.span.low_midi));
        const x1 = keyLeft(axis, Math.round(row.span.high_midi) + 1);
        return (
          <g key={row.label}>
            <text x={0} y={y + 15} font-size={FONT} fill={theme.text}>
              {row.label}
            </text>
            <rect
              x={x0}
              y={y + 3}
              width={Math.max(2, x1 - x0)}
              height={16}
              rx={3}
              fill={row.fill}
              stroke={row.stroke}
              stroke-width={1.5}
              stroke-dasharray={row.dashed ? "4 3" : undefined}
            />
            <text x={x0 - 4} y={y + 15} font-size={FONT} text-anchor="end" fill={theme.text} font-weight={600}>
              {row.span.low}
            </text>
            <text x={x1 + 4} y={y + 15} font-size={FONT} fill={theme.text} font-weight={600}>
              {row.span.high}
            </text>
          </g>
        );
      })}
      <text x={0} y={passaggioTop + 20} font-size={FONT} fill={theme.text}>
        Passaggi
      </text>
      {passaggi.map((p, i) => {
        const x = xOfMidi(axis, p.midi);
        const leftward = passaggioSides[i] === "left";
        return (
          <g key={p.kind}>
            <line x1={x} x2={x} y1={top} y2={keysY + 44} stroke={theme.passaggio} stroke-width={2} stroke-dasharray={p.source === "typical" ? "5 3" : undefined} />
            <text x={leftward ? x - 4 : x + 4} text-anchor={leftward ? "end" : "start"} y={passaggioTop + 14 + i * 13} font-size={FONT - 1} fill={theme.passaggio} font-weight={600}>
              {passaggioText(p)}
            </text>
          </g>
        );
      })}
      <KeyboardStrip axis={axis} y={keysY} height={44} />
    </svg>
  );
}

/**
 * A part's duration-weighted pitch distribution (seconds sung on each note)
 * as bars over a keyboard, with the part's lowest and highest notes named.
 */
export function HistogramOnKeyboard({
  histogram,
  lowest,
  highest,
  axisLow = lowest,
  axisHigh = highest,
  width = 640,
  title,
  lowestName = midiToName(lowest),
  highestName = midiToName(highest),
}: {
  histogram: Record<string, number>;
  lowest: number;
  highest: number;
  /** The engine's names for the ends, spelled in the piece's key. */
  lowestName?: string;
  highestName?: string;
  /** The axis' ends: the whole piece's, so that its parts line up. */
  axisLow?: number;
  axisHigh?: number;
  width?: number;
  title: string;
}) {
  const entries = Object.entries(histogram)
    .map(([midi, value]) => [Number(midi), value] as const)
    .filter(([midi, value]) => Number.isFinite(midi) && Number.isFinite(value));
  const max = Math.max(1e-9, ...entries.map(([, v]) => v));
  const left = 46;
  const axis = keyboardAxis(Math.min(axisLow, lowest), Math.max(axisHigh, highest), width - left - 6, left, 24);
  const plotTop = 12;
  const plotHeight = 120;
  const rangeY = plotTop + plotHeight + 16;
  const keysY = rangeY + 8;
  const height = keysY + 36 + FONT + 6;
  const ticks = niceTicks(max);
  const y = (value: number) => plotTop + plotHeight - (value / ticks[ticks.length - 1]) * plotHeight;
  const peak = entries.reduce((best, e) => (e[1] > best[1] ? e : best), entries[0] ?? [0, 0]);
  const description = `${title}: seconds sung on each note from ${lowestName} to ${highestName}; most time on ${midiToName(peak[0])} (${peak[1].toFixed(1)} s).`;
  const x0 = keyLeft(axis, lowest);
  const x1 = keyLeft(axis, highest + 1);
  return (
    <svg class="chart" style={{ maxWidth: `${width * 1.3}px` }} viewBox={`0 0 ${width} ${height}`} role="img" aria-label={description}>
      {ticks.map((tick) => (
        <g key={tick}>
          <line x1={left} x2={width - 6} y1={y(tick)} y2={y(tick)} stroke="#d5d8dc" />
          <text x={left - 5} y={y(tick) + 4} font-size={FONT - 1} text-anchor="end" fill={theme.muted}>
            {tick}
          </text>
        </g>
      ))}
      <text x={12} y={plotTop + plotHeight / 2} font-size={FONT - 1} fill={theme.muted} transform={`rotate(-90 12 ${plotTop + plotHeight / 2})`} text-anchor="middle">
        seconds sung
      </text>
      {entries.map(([midi, value]) => (
        <rect key={midi} x={keyLeft(axis, midi) + 1} width={Math.max(1, axis.step - 2)} y={y(value)} height={plotTop + plotHeight - y(value)} fill={theme.accent}>
          <title>{`${midiToName(midi)}: ${value.toFixed(1)} s`}</title>
        </rect>
      ))}
      <line x1={x0} x2={x1} y1={rangeY} y2={rangeY} stroke={theme.text} stroke-width={1.5} />
      <line x1={x0} x2={x0} y1={rangeY - 4} y2={rangeY + 4} stroke={theme.text} stroke-width={1.5} />
      <line x1={x1} x2={x1} y1={rangeY - 4} y2={rangeY + 4} stroke={theme.text} stroke-width={1.5} />
      <text x={x0 - 4} y={rangeY + 4} font-size={FONT - 1} text-anchor="end" fill={theme.text} font-weight={600}>
        {lowestName}
      </text>
      <text x={x1 + 4} y={rangeY + 4} font-size={FONT - 1} fill={theme.text} font-weight={600}>
        {highestName}
      </text>
      <KeyboardStrip axis={axis} y={keysY} height={36} />
    </svg>
  );
}

function niceTicks(max: number): number[] {
  const raw = max / 4;
  const magnitude = Math.pow(10, Math.floor(Math.log10(raw)));
  const step = [1, 2, 2.5, 5, 10].map((m) => m * magnitude).find((s) => s >= raw) ?? raw;
  const ticks = [];
  for (let t = 0; t <= max + step * 0.999; t += step) ticks.push(Number(t.toPrecision(6)));
  return ticks;
}

/** A vertical pitch axis (low at the bottom) with a name at every C and E and G… lines at every C. */
function verticalAxis(low: number, high: number, top: number, bottom: number) {
  const y = (midi: number) => bottom - ((midi - low) / (high - low)) * (bottom - top);
  return { y };
}

/** A singer's measured profiles by date: range (outline) and comfort zone (filled), names written at the ends. */
export function HistoryChart({ entries, width = 900 }: { entries: HistoryEntry[]; width?: number }) {
  if (entries.length === 0) return null;
  const sorted = [...entries].sort((a, b) => a.date.localeCompare(b.date));
  const marks = (e: HistoryEntry) => [e.profile.range.low_midi, e.profile.range.high_midi, e.profile.comfort.low_midi, e.profile.comfort.high_midi, ...e.profile.passaggi.map((p) => p.midi)];
  let low = Math.floor(Math.min(...sorted.flatMap(marks))) - 2;
  let high = Math.ceil(Math.max(...sorted.flatMap(marks))) + 2;
  // At least two octaves, so one narrow profile still sits in context.
  const missing = 24 - (high - low);
  if (missing > 0) {
    low -= Math.floor(missing / 2);
    high += Math.ceil(missing / 2);
  }
  const top = 14;
  const bottom = 330;
  const left = 70;
  const right = width - 30;
  const { y } = verticalAxis(low, high, top, bottom);
  const times = sorted.map((e) => Date.parse(e.date));
  const t0 = Math.min(...times);
  const t1 = Math.max(...times);
  const x = (t: number) => (t1 === t0 ? (left + right) / 2 : left + 50 + ((t - t0) / (t1 - t0)) * (right - left - 100));
  const height = bottom + 40;
  const keyRows = [];
  for (let m = low; m <= high; m++) keyRows.push(m);
  const description = sorted
    .map((e) => `${e.date}: range ${e.profile.range.low}–${e.profile.range.high}, comfort ${e.profile.comfort.low}–${e.profile.comfort.high}`)
    .join("; ");
  // Trend lines run between the bars, leaving room for the names written beside them.
  const line = (pick: (e: HistoryEntry) => number) =>
    sorted
      .slice(1)
      .map((e, i) => `M${x(times[i]) + 16},${y(pick(sorted[i]))} L${x(times[i + 1]) - 48},${y(pick(e))}`)
      .join(" ");
  return (
    <svg class="chart" viewBox={`0 0 ${width} ${height}`} role="img" aria-label={`Range and comfort zone by date. ${description}`}>
      {keyRows.map((m) => (
        <g key={m} aria-hidden="true">
          <rect x={left - 26} y={y(m + 0.5)} width={isBlackKey(m) ? 16 : 24} height={y(m - 0.5) - y(m + 0.5)} fill={isBlackKey(m) ? theme.keyBlack : theme.keyWhite} stroke={theme.border} stroke-width={0.5} />
          {pitchClass(m) === 0 && (
            <>
              <line x1={left} x2={right} y1={y(m - 0.5)} y2={y(m - 0.5)} stroke="#d5d8dc" />
              <text x={left - 30} y={y(m) + 4} font-size={FONT} text-anchor="end" fill={theme.keyLabel}>
                {midiToName(m)}
              </text>
            </>
          )}
        </g>
      ))}
      <path d={line((e) => e.profile.comfort.high_midi)} fill="none" stroke={theme.comfort} stroke-width={1.5} stroke-dasharray="3 3" />
      <path d={line((e) => e.profile.comfort.low_midi)} fill="none" stroke={theme.comfort} stroke-width={1.5} stroke-dasharray="3 3" />
      {sorted.map((entry, i) => {
        const cx = x(times[i]);
        const p = entry.profile;
        return (
          <g key={entry.date + i}>
            <rect x={cx - 14} y={y(p.range.high_midi + 0.5)} width={28} height={y(p.range.low_midi - 0.5) - y(p.range.high_midi + 0.5)} fill={theme.range} stroke={theme.accent} stroke-width={1.5} rx={3} />
            <rect x={cx - 7} y={y(p.comfort.high_midi + 0.5)} width={14} height={y(p.comfort.low_midi - 0.5) - y(p.comfort.high_midi + 0.5)} fill={theme.comfort} rx={2} />
            <text x={cx + 18} y={y(p.range.high_midi) + 4} font-size={FONT - 1} fill={theme.text}>
              {p.range.high}
            </text>
            <text x={cx + 18} y={y(p.range.low_midi) + 4} font-size={FONT - 1} fill={theme.text}>
              {p.range.low}
            </text>
            <text x={cx - 18} y={y(p.comfort.high_midi) + 4} font-size={FONT - 1} text-anchor="end" fill={theme.comfort}>
              {p.comfort.high}
            </text>
            <text x={cx - 18} y={y(p.comfort.low_midi) + 4} font-size={FONT - 1} text-anchor="end" fill={theme.comfort}>
              {p.comfort.low}
            </text>
            {p.passaggi.map((passaggio) => (
              <g key={passaggio.kind}>
                <line
                  x1={cx - 16}
                  x2={cx + 16}
                  y1={y(passaggio.midi)}
                  y2={y(passaggio.midi)}
                  stroke={theme.passaggio}
                  stroke-width={2}
                  stroke-dasharray={passaggio.source === "typical" ? "4 2" : undefined}
                >
                  <title>{`${passaggio.kind} passaggio ${passaggio.name} (${passaggio.source === "typical" ? "typical, not measured" : "measured"})`}</title>
                </line>
              </g>
            ))}
            <text x={cx} y={bottom + 22} font-size={FONT} text-anchor="middle" fill={theme.text}>
              {entry.date}
            </text>
          </g>
        );
      })}
    </svg>
  );
}

/** The live pitch trace: the last few seconds of `pitch-frame`s, with note lines and names. */
export function PitchTrace({ frames, seconds = 8, width = 720 }: { frames: PitchFrame[]; seconds?: number; width?: number }) {
  const height = 220;
  const left = 44;
  const now = frames.length ? frames[frames.length - 1].time : 0;
  const visible = frames.filter((f) => f.time >= now - seconds);
  const midis = visible.map((f) => (f.f0Hz ? hzToMidi(f.f0Hz) : null)).filter((m): m is number => m !== null);
  const centre = midis.length ? midis.reduce((a, b) => a + b, 0) / midis.length : 60;
  const low = Math.floor(Math.min(centre - 8, ...midis)) - 1;
  const high = Math.ceil(Math.max(centre + 8, ...midis)) + 1;
  const { y } = verticalAxis(low, high, 8, height - 8);
  const x = (t: number) => left + ((t - (now - seconds)) / seconds) * (width - left - 8);
  const segments: string[] = [];
  let current = "";
  for (const frame of visible) {
    const midi = frame.f0Hz ? hzToMidi(frame.f0Hz) : null;
    if (midi === null) {
      if (current) segments.push(current);
      current = "";
      continue;
    }
    current += `${current ? "L" : "M"}${x(frame.time).toFixed(1)},${y(midi).toFixed(1)} `;
  }
  if (current) segments.push(current);
  const rows = [];
  for (let m = low; m <= high; m++) rows.push(m);
  return (
    <svg class="chart" viewBox={`0 0 ${width} ${height}`} aria-hidden="true">
      <rect x={left} y={0} width={width - left} height={height} fill={theme.surface} stroke={theme.border} />
      {rows.map((m) => (
        <g key={m}>
          <line x1={left} x2={width} y1={y(m)} y2={y(m)} stroke={isBlackKey(m) ? "#eceef0" : "#d5d8dc"} />
          {[0, 2, 4, 7, 9].includes(pitchClass(m)) && (
            <text x={left - 4} y={y(m) + 4} font-size={pitchClass(m) === 0 ? FONT : FONT - 2} font-weight={pitchClass(m) === 0 ? 700 : 400} text-anchor="end" fill={theme.keyLabel}>
              {midiToName(m)}
            </text>
          )}
        </g>
      ))}
      {segments.map((d, i) => (
        <path key={i} d={d} fill="none" stroke={theme.accent} stroke-width={2.5} stroke-linejoin="round" />
      ))}
    </svg>
  );
}
