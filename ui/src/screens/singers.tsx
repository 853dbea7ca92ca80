/**
 * Singers: the roster. Search, filter by section or voice type, import or
 * export a roster CSV, add a singer by typing ranges, archive, or delete (the
 * dialog says the recordings go too).
 */
import { useMemo, useState } from "preact/hooks";
import { api, backend, errorText, type ImportPreview, type SingerRow, type TypedSinger } from "../api";
import { useShared } from "../app";
import { Choice, Cautions, ErrorMessage, Field, useLoad } from "../components/common";
import { Modal } from "../components/modal";

const EMPTY_TYPED: TypedSinger = {
  name: "",
  rangeLow: "",
  rangeHigh: "",
  comfortLow: "",
  comfortHigh: "",
  primo: "",
  secondo: "",
  voiceType: "",
  section: "",
  notes: "",
};

type SortKey = "name" | "section" | "range";
/** Sections in score order (S before A before T before B), then by number. */
const sectionOrder = (label: string | null) => (label ? "SATB".indexOf(label[0]) * 10 + (Number(label.slice(1)) || 0) : 99);
const SORTS: Record<SortKey, (a: SingerRow, b: SingerRow) => number> = {
  name: (a, b) => a.name.localeCompare(b.name),
  section: (a, b) => sectionOrder(a.section) - sectionOrder(b.section) || a.name.localeCompare(b.name),
  // Highest voices first, by the top of the comfort zone the engine gave as MIDI.
  range: (a, b) => (b.comfortHighMidi ?? -1) - (a.comfortHighMidi ?? -1) || a.name.localeCompare(b.name),
};

const VOICE_TYPES = ["soprano", "mezzo-soprano", "contralto", "countertenor", "tenor", "baritone", "bass"];

export function SingersScreen() {
  const { refreshLibrary, go } = useShared();
  const [includeArchived, setIncludeArchived] = useState(false);
  const roster = useLoad(() => api.singersList(includeArchived), [includeArchived]);
  const [search, setSearch] = useState("");
  const [section, setSection] = useState("");
  const [voiceType, setVoiceType] = useState("");
  const [error, setError] = useState<string | null>(null);
  const [notice, setNotice] = useState<string | null>(null);
  const [deleting, setDeleting] = useState<SingerRow | null>(null);
  const [adding, setAdding] = useState(false);
  const [typed, setTyped] = useState<TypedSinger>(EMPTY_TYPED);
  const [importPath, setImportPath] = useState("");
  const [preview, setPreview] = useState<ImportPreview | null>(null);
  const [importing, setImporting] = useState(false);

  const singers = roster.data ?? [];
  const sections = useMemo(() => [...new Set(singers.map((s) => s.section).filter(Boolean) as string[])].sort(), [singers]);
  const types = useMemo(() => [...new Set(singers.map((s) => s.voiceType).filter(Boolean) as string[])].sort(), [singers]);
  const [sortKey, setSortKey] = useState<SortKey>("name");
  const shown = singers
    .filter(
      (s) =>
        (!search || s.name.toLowerCase().includes(search.toLowerCase())) &&
        (!section || s.section === section) &&
        (!voiceType || s.voiceType === voiceType),
    )
    .sort(SORTS[sortKey]);

  async function act(work: () => Promise<unknown>, done?: string) {
    setError(null);
    setNotice(null);
    try {
      await work();
      if (done) setNotice(done);
      roster.reload();
      refreshLibrary();
    } catch (e) {
      setError(errorText(e));
    }
  }

  async function chooseImportFile() {
    const path = await (await backend()).pickFile("Roster CSV", ["csv", "json"]);
    if (path) setImportPath(path);
  }

  async function exportRoster() {
    setError(null);
    try {
      const path = await (await backend()).pickSaveFile("Export roster CSV", "roster.csv", ["csv"]);
      if (!path) return;
      await api.rosterExport(path);
      setNotice(`Roster written to ${path}.`);
    } catch (e) {
      setError(errorText(e));
    }
  }

  async function confirmDelete() {
    const singer = deleting;
    if (!singer) return;
    setDeleting(null);
    setError(null);
    try {
      const result = await api.singerDelete(singer.name);
      const n = result.removedFiles.length;
      setNotice(`Deleted ${singer.name}: ${n} recording file${n === 1 ? "" : "s"} removed from disk.`);
      roster.reload();
      refreshLibrary();
    } catch (e) {
      setError(errorText(e));
    }
  }

  const set = (key: keyof TypedSinger) => (event: Event) => setTyped({ ...typed, [key]: (event.target as HTMLInputElement).value });

  return (
    <section data-testid="screen-singers" aria-labelledby="singers-title">
      <div class="screen-head">
        <h2 id="singers-title">Singers</h2>
        <p>
          {singers.filter((s) => !s.archived).length} active{includeArchived ? `, ${singers.filter((s) => s.archived).length} archived` : ""}
        </p>
      </div>

      <div class="toolbar" role="search">
        <Field label="Search by name">
          <input type="search" value={search} onInput={(e) => setSearch((e.target as HTMLInputElement).value)} />
        </Field>
        <Field label="Section">
          <select value={section} onChange={(e) => setSection((e.target as HTMLSelectElement).value)}>
            <Choice value="">all</Choice>
            {sections.map((s) => (
              <Choice key={s} value={s} />
            ))}
          </select>
        </Field>
        <Field label="Voice type">
          <select value={voiceType} onChange={(e) => setVoiceType((e.target as HTMLSelectElement).value)}>
            <Choice value="">all</Choice>
            {types.map((t) => (
              <Choice key={t} value={t} />
            ))}
          </select>
        </Field>
        <Field label="Show archived" inline>
          <input type="checkbox" checked={includeArchived} onChange={(e) => setIncludeArchived((e.target as HTMLInputElement).checked)} />
        </Field>
        <span class="spacer" />
        <button type="button" onClick={() => { setAdding(!adding); setImporting(false); }} aria-expanded={adding}>
          Add singer…
        </button>
        <button type="button" onClick={() => { setImporting(!importing); setAdding(false); }} aria-expanded={importing}>
          Import CSV…
        </button>
        <button type="button" onClick={exportRoster}>
          Export CSV…
        </button>
      </div>

      <ErrorMessage error={error ?? roster.error} />
      {notice && (
        <p class="notice" role="status">
          {notice}
        </p>
      )}

      {importing && (
        <div class="panel" aria-label="Import a roster">
          <h3>Import a roster CSV</h3>
          <p class="muted small">
            Columns: name, range_low, range_high, comfort_low, comfort_high; optional primo, secondo, voice_type, section, notes. Pitches as
            note names (C4 = middle C) or MIDI numbers. Nothing changes until you press Import, and then all rows or none.
          </p>
          <div class="row">
            <Field label="Roster file path">
              <input type="text" size={50} value={importPath} onInput={(e) => { setImportPath((e.target as HTMLInputElement).value); setPreview(null); }} />
            </Field>
            <button type="button" onClick={chooseImportFile}>
              Choose file…
            </button>
            <button type="button" disabled={!importPath} onClick={() => act(async () => setPreview(await api.rosterImportPreview(importPath)))}>
              Preview
            </button>
          </div>
          {preview && (
            <div style={{ marginTop: "0.6rem" }}>
              <p>
                <strong>{preview.add.length}</strong> to add{preview.add.length ? `: ${preview.add.join(", ")}` : ""}. <strong>{preview.change.length}</strong> to change
                {preview.change.length ? `: ${preview.change.join(", ")}` : ""}. <strong>{preview.skip.length}</strong> unchanged.
              </p>
              <button
                type="button"
                class="primary"
                onClick={() =>
                  act(async () => {
                    const done = await api.rosterImportCommit(importPath);
                    setPreview(null);
                    setImporting(false);
                    return done;
                  }, `Imported ${importPath}.`)
                }
              >
                Import
              </button>
            </div>
          )}
        </div>
      )}

      {adding && (
        <form
          class="panel"
          aria-label="Add a singer by typing ranges"
          onSubmit={(e) => {
            e.preventDefault();
            void act(async () => {
              await api.singerAddTyped(typed);
              setTyped(EMPTY_TYPED);
              setAdding(false);
            }, `Added ${typed.name}.`);
          }}
        >
          <h3>Add a singer with typed ranges</h3>
          <p class="muted small">From a piano check: note names such as F#3 or Bb4 (C4 = middle C). Ambit checks them when you add.</p>
          <div class="row">
            <Field label="Name (required)">
              <input type="text" required value={typed.name} onInput={set("name")} />
            </Field>
            <Field label="Range low">
              <input type="text" size={5} required value={typed.rangeLow} onInput={set("rangeLow")} placeholder="A2" />
            </Field>
            <Field label="Range high">
              <input type="text" size={5} required value={typed.rangeHigh} onInput={set("rangeHigh")} placeholder="E4" />
            </Field>
            <Field label="Comfort low">
              <input type="text" size={5} required value={typed.comfortLow} onInput={set("comfortLow")} placeholder="C3" />
            </Field>
            <Field label="Comfort high">
              <input type="text" size={5} required value={typed.comfortHigh} onInput={set("comfortHigh")} placeholder="C4" />
            </Field>
            <Field label="Primo passaggio">
              <input type="text" size={5} value={typed.primo} onInput={set("primo")} />
            </Field>
            <Field label="Secondo passaggio">
              <input type="text" size={5} value={typed.secondo} onInput={set("secondo")} />
            </Field>
            <Field label="Voice type">
              <select value={typed.voiceType} onChange={set("voiceType")}>
                <Choice value="">—</Choice>
                {VOICE_TYPES.map((t) => (
                  <Choice key={t} value={t} />
                ))}
              </select>
            </Field>
            <Field label="Section">
              <input type="text" size={4} value={typed.section} onInput={set("section")} placeholder="B1" />
            </Field>
            <Field label="Notes">
              <input type="text" value={typed.notes} onInput={set("notes")} />
            </Field>
            <button type="submit" class="primary">
              Add
            </button>
          </div>
        </form>
      )}

      {roster.data !== null && (
      <div class="table-wrap">
        <table data-testid="roster-table">
          <caption class="visually-hidden">The roster</caption>
          <thead>
            <tr>
              <th scope="col" aria-sort={sortKey === "name" ? "ascending" : undefined}>
                <button type="button" class="link" onClick={() => setSortKey("name")}>
                  Name
                </button>
                {sortKey === "name" && <span aria-hidden="true"> ▾</span>}
              </th>
              <th scope="col" aria-sort={sortKey === "section" ? "ascending" : undefined}>
                <button type="button" class="link" onClick={() => setSortKey("section")}>
                  Section
                </button>
                {sortKey === "section" && <span aria-hidden="true"> ▾</span>}
              </th>
              <th scope="col">Voice type</th>
              <th scope="col" aria-sort={sortKey === "range" ? "descending" : undefined}>
                <button type="button" class="link" onClick={() => setSortKey("range")} title="Highest comfort zone first">
                  Range
                </button>
                {sortKey === "range" && <span aria-hidden="true"> ▾</span>}
              </th>
              <th scope="col">Comfort zone</th>
              <th scope="col">Passaggi</th>
              <th scope="col">Source</th>
              <th scope="col">
                <span class="visually-hidden">Actions</span>
              </th>
            </tr>
          </thead>
          <tbody>
            {shown.map((singer) => (
              <tr key={singer.name} data-testid={`roster-row-${singer.name}`}>
                <th scope="row">
                  {singer.name} {singer.archived && <span class="tag">archived</span>}
                </th>
                <td>{singer.section ?? "—"}</td>
                <td>{singer.voiceType ?? "—"}</td>
                <td>{singer.rangeLow && singer.rangeHigh ? `${singer.rangeLow}–${singer.rangeHigh}` : "—"}</td>
                <td>{singer.comfortLow && singer.comfortHigh ? `${singer.comfortLow}–${singer.comfortHigh}` : "—"}</td>
                <td>{[singer.primo, singer.secondo].filter(Boolean).join(" / ") || "—"}</td>
                <td>
                  <span class="tag">{singer.source === "measured" ? "measured" : "typed"}</span>
                </td>
                <td>
                  <div class="row-actions">
                  <button type="button" class="link" onClick={() => go("history", singer.name)} aria-label={`History of ${singer.name}`}>
                    History
                  </button>
                  <button
                    type="button"
                    onClick={() => act(() => api.singerSetArchived(singer.name, !singer.archived), `${singer.archived ? "Restored" : "Archived"} ${singer.name}.`)}
                    aria-label={`${singer.archived ? "Restore" : "Archive"} ${singer.name}`}
                  >
                    {singer.archived ? "Restore" : "Archive"}
                  </button>
                  <button type="button" data-testid={`singer-delete-${singer.name}`} onClick={() => setDeleting(singer)} aria-label={`Delete ${singer.name}`}>
                    Delete…
                  </button>
                  </div>
                </td>
              </tr>
            ))}
          </tbody>
        </table>
        {!roster.loading && shown.length === 0 && <p class="muted">No singers match.</p>}
      </div>
      )}
      {roster.data === null && roster.loading && <p class="muted">Loading the roster…</p>}
      <Cautions />

      {deleting && (
        <Modal title={`Delete ${deleting.name}?`} onClose={() => setDeleting(null)}>
          <p>
            This removes {deleting.name} from the library with every audition and profile
            {deleting.auditions ? ` (${deleting.auditions} audition${deleting.auditions === 1 ? "" : "s"})` : ""}, and{" "}
            <strong>deletes their recordings from disk</strong>. It cannot be undone.
          </p>
          <p class="muted small">To keep the history but hide the singer, archive them instead.</p>
          <div class="actions">
            <button type="button" data-autofocus onClick={() => setDeleting(null)}>
              Cancel
            </button>
            <button type="button" class="danger" data-testid="confirm-delete" onClick={confirmDelete}>
              Delete singer and recordings
            </button>
          </div>
        </Modal>
      )}
    </section>
  );
}
