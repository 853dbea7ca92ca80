/**
 * History: one singer's measured profiles over time, as a chart of range and
 * comfort zone by date, with the same figures in a table.
 */
import { useEffect, useState } from "preact/hooks";
import { api } from "../api";
import { useShared } from "../app";
import { HistoryChart } from "../components/charts";
import { Choice, Cautions, ErrorMessage, Field, percent, useLoad } from "../components/common";

export function HistoryScreen() {
  const { parameter } = useShared();
  const singers = useLoad(() => api.singersList(true), []);
  const [name, setName] = useState(parameter ?? "");
  const history = useLoad(() => (name ? api.singerHistory(name) : Promise.resolve([])), [name]);

  useEffect(() => {
    if (!name && singers.data && singers.data.length > 0) {
      // Open on the singer with the most auditions, so the chart has something to show.
      const richest = [...singers.data].sort((a, b) => (b.auditions ?? 0) - (a.auditions ?? 0))[0];
      const measured = (richest?.auditions ?? 0) > 0 ? richest : (singers.data.find((s) => s.source === "measured") ?? singers.data[0]);
      setName(measured.name);
    }
  }, [singers.data]);

  const entries = [...(history.data ?? [])].sort((a, b) => a.date.localeCompare(b.date));

  return (
    <section data-testid="screen-history" aria-labelledby="history-title">
      <div class="screen-head">
        <h2 id="history-title">History</h2>
        <p>How a voice changes across months: range (outlined) and comfort zone (filled) at each audition.</p>
      </div>
      <div class="toolbar">
        <Field label="Singer">
          <select data-testid="history-singer" value={name} onChange={(e) => setName((e.target as HTMLSelectElement).value)}>
            {!name && <Choice value="">—</Choice>}
            {(singers.data ?? []).map((s) => (
              <Choice key={s.name} value={s.name}>
                {s.name}
                {s.archived ? " (archived)" : ""}
              </Choice>
            ))}
          </select>
        </Field>
      </div>
      <ErrorMessage error={singers.error ?? history.error} />
      <div class="panel" data-testid="history-chart">
        {entries.length > 0 ? (
          <>
            <div class="legend" aria-hidden="true">
              <span>
                <span class="swatch" style={{ background: "var(--range)", borderColor: "var(--accent)" }} />
                range (held ≥ 1 s)
              </span>
              <span>
                <span class="swatch" style={{ background: "var(--comfort)" }} />
                comfort zone
              </span>
              <span>
                <span class="swatch" style={{ background: "var(--passaggio)", height: "0.2rem" }} />
                passaggi (dashed: typical, not measured; names in the table)
              </span>
            </div>
            <HistoryChart entries={entries} />
          </>
        ) : (
          <p class="muted">{history.loading ? "Loading…" : `No measured profiles for ${name || "this singer"} yet: record an audition to start the history.`}</p>
        )}
      </div>
      {entries.length > 0 && (
        <div class="panel">
          <table>
            <caption class="visually-hidden">Profiles of {name} by date</caption>
            <thead>
              <tr>
                <th scope="col">Date</th>
                <th scope="col">Range</th>
                <th scope="col">Comfort zone</th>
                <th scope="col">Passaggi</th>
                <th scope="col">Voice type</th>
                <th scope="col">Section</th>
              </tr>
            </thead>
            <tbody>
              {entries.map((entry, i) => (
                <tr key={entry.date + i}>
                  <th scope="row">{entry.date}</th>
                  <td>
                    {entry.profile.range.low}–{entry.profile.range.high}
                  </td>
                  <td>
                    {entry.profile.comfort.low}–{entry.profile.comfort.high}
                  </td>
                  <td>{entry.profile.passaggi.map((p) => `${p.kind} ${p.name}${p.source === "typical" ? " (typical)" : ""}`).join(", ") || "—"}</td>
                  <td>
                    {entry.profile.voice_type.label} ({percent(entry.profile.voice_type.confidence)})
                  </td>
                  <td>{entry.profile.section}</td>
                </tr>
              ))}
            </tbody>
          </table>
        </div>
      )}
      {entries.length > 0 && <Cautions items={entries[entries.length - 1].profile.cautions} />}
    </section>
  );
}
