/**
 * The frame: skip link, navigation between the six screens (hash routes such
 * as #singers), the open library's folder, the first-start demo banner, the
 * demo library's preparation on a first start (progress from
 * `library-status` events; the screens mount once a library is open), and
 * the shared state the screens read (library info, the cautions' wording).
 *
 * Invariant: no screen talks to the backend except through api.ts.
 */
import { createContext } from "preact";
import { useCallback, useContext, useEffect, useState } from "preact/hooks";
import { api, backend, errorText, onLibraryStatus, type LibraryInfo, type LibraryStatus } from "./api";
import { ErrorMessage } from "./components/common";
import { SingersScreen } from "./screens/singers";
import { AuditionScreen } from "./screens/audition";
import { PiecesScreen } from "./screens/pieces";
import { FitScreen } from "./screens/fit";
import { PlacementScreen } from "./screens/placement";
import { HistoryScreen } from "./screens/history";

export const SCREENS = [
  { id: "singers", label: "Singers" },
  { id: "audition", label: "Audition" },
  { id: "pieces", label: "Pieces" },
  { id: "fit", label: "Fit" },
  { id: "placement", label: "Placement" },
  { id: "history", label: "History" },
] as const;
export type ScreenId = (typeof SCREENS)[number]["id"];

export interface Shared {
  library: LibraryInfo | null;
  cautions: string[];
  refreshLibrary: () => void;
  /** Opens another screen, e.g. a singer's history from the roster. */
  go: (screen: ScreenId, parameter?: string) => void;
  parameter: string | null;
}

export const SharedContext = createContext<Shared>({
  library: null,
  cautions: [],
  refreshLibrary: () => {},
  go: () => {},
  parameter: null,
});

export function useShared(): Shared {
  return useContext(SharedContext);
}

function screenFromHash(): { screen: ScreenId; parameter: string | null } {
  const [id, ...rest] = decodeURIComponent(window.location.hash.replace(/^#\/?/, "")).split("/");
  const screen = SCREENS.find((s) => s.id === id)?.id ?? "singers";
  return { screen, parameter: rest.length ? rest.join("/") : null };
}

export function App() {
  const [route, setRoute] = useState(screenFromHash);
  const [library, setLibrary] = useState<LibraryInfo | null>(null);
  const [cautions, setCautions] = useState<string[]>([]);
  const [error, setError] = useState<string | null>(null);
  const [fake, setFake] = useState(false);
  const [bannerClosed, setBannerClosed] = useState(false);
  const [status, setStatus] = useState<LibraryStatus | null>(null);

  useEffect(() => {
    const onHash = () => setRoute(screenFromHash());
    window.addEventListener("hashchange", onHash);
    return () => window.removeEventListener("hashchange", onHash);
  }, []);

  const refreshLibrary = useCallback(() => {
    api.libraryInfo().then(setLibrary, (e) => setError(errorText(e)));
  }, []);

  useEffect(() => {
    backend().then((b) => setFake(b.isFake), (e) => setError(errorText(e)));
    api.cautions().then(setCautions, (e) => setError(errorText(e)));
    // Listen first, then ask: no change is missed. An event that arrives
    // before the answer is at least as recent, so it wins.
    let unlisten: (() => void) | null = null;
    let closed = false;
    void (async () => {
      try {
        const stop = await onLibraryStatus((next) => setStatus(next));
        if (closed) return stop();
        unlisten = stop;
        const now = await api.libraryStatus();
        setStatus((previous) => previous ?? now);
      } catch (e) {
        setError(errorText(e));
      }
    })();
    return () => {
      closed = true;
      unlisten?.();
    };
  }, []);

  useEffect(() => {
    if (status?.state === "ready") refreshLibrary();
  }, [status, refreshLibrary]);

  const go = useCallback((screen: ScreenId, parameter?: string) => {
    window.location.hash = parameter ? `${screen}/${encodeURIComponent(parameter)}` : screen;
  }, []);

  async function newEmptyLibrary() {
    setError(null);
    try {
      const b = await backend();
      const folder = await b.pickFolder("Choose an empty folder for the new library");
      if (!folder) return;
      setLibrary(await api.libraryCreateEmpty(folder));
      go("singers");
    } catch (e) {
      setError(errorText(e));
    }
  }

  async function openDemoLibrary() {
    setError(null);
    try {
      setStatus(await api.libraryOpenDemo());
      go("singers");
    } catch (e) {
      setError(errorText(e));
    }
  }

  async function openLibrary() {
    setError(null);
    try {
      const b = await backend();
      const folder = await b.pickFolder("Open a library folder");
      if (!folder) return;
      setLibrary(await api.libraryOpen(folder));
    } catch (e) {
      setError(errorText(e));
    }
  }

  const shared: Shared = { library, cautions, refreshLibrary, go, parameter: route.parameter };
  const Screen = {
    singers: SingersScreen,
    audition: AuditionScreen,
    pieces: PiecesScreen,
    fit: FitScreen,
    placement: PlacementScreen,
    history: HistoryScreen,
  }[route.screen];

  return (
    <SharedContext.Provider value={shared}>
      <a class="skip-link" href="#main" onClick={(e) => { e.preventDefault(); document.getElementById("main")?.focus(); }}>
        Skip to the screen
      </a>
      {fake && (
        <div class="fake-banner" role="note">
          Development view: a fake backend with invented sample data answers here, not Ambit's engine.
        </div>
      )}
      <header class="app-header">
        <span class="brand">Ambit</span>
        <nav class="app-nav" aria-label="Screens">
          <ul>
            {SCREENS.map((s) => (
              <li key={s.id}>
                <button
                  type="button"
                  data-testid={`nav-${s.id}`}
                  aria-current={route.screen === s.id ? "page" : undefined}
                  onClick={() => go(s.id)}
                >
                  {s.label}
                </button>
              </li>
            ))}
          </ul>
        </nav>
        <div class="library-line">
          <span class="visually-hidden">Library folder: </span>
          <span data-testid="library-folder" title="The open library's folder">
            {library?.folder ?? "…"}
          </span>
          <br />
          <button type="button" class="link small" onClick={openLibrary}>
            Open another library…
          </button>
          {library && !library.isDemo && status?.state === "ready" && (
            <>
              {" · "}
              <button type="button" class="link small" onClick={openDemoLibrary}>
                Open the demo library
              </button>
            </>
          )}
        </div>
      </header>
      {library?.isDemo && !bannerClosed && (
        <div class="banner" role="region" aria-label="Demo library">
          <p>
            <strong>Demo library.</strong> You are looking at an invented choir and our own sample scores, so every
            screen has something to show. Your own singers go into a library of your own.
          </p>
          <button type="button" class="primary" onClick={newEmptyLibrary}>
            New empty library
          </button>
          <button type="button" onClick={() => setBannerClosed(true)} aria-label="Hide the demo library notice">
            Hide
          </button>
        </div>
      )}
      <main id="main" tabIndex={-1}>
        <ErrorMessage error={error} />
        {status?.state === "ready" && library ? (
          <Screen key={`${route.screen}:${library.folder}`} />
        ) : (
          <LibraryWait status={status} onNew={newEmptyLibrary} onOpen={openLibrary} />
        )}
      </main>
    </SharedContext.Provider>
  );
}

/**
 * What the window shows until a library is open: the demo library's
 * preparation with its progress (a first start), or why opening failed,
 * with the ways on.
 */
export function LibraryWait({
  status,
  onNew,
  onOpen,
}: {
  status: LibraryStatus | null;
  onNew: () => void;
  onOpen: () => void;
}) {
  if (status?.state === "failed") {
    return (
      <section class="library-wait" data-testid="library-failed" aria-labelledby="library-wait-title">
        <h1 id="library-wait-title">No library is open</h1>
        <ErrorMessage error={status.error ?? "The library could not be opened."} />
        <p>
          <button type="button" class="primary" onClick={onNew}>
            New empty library
          </button>{" "}
          <button type="button" onClick={onOpen}>
            Open another library…
          </button>
        </p>
      </section>
    );
  }
  if (status?.state === "preparing") {
    return (
      <section class="library-wait" data-testid="library-preparing" aria-labelledby="library-wait-title">
        <h1 id="library-wait-title">Preparing the demo library</h1>
        <p>
          On its first start Ambit makes a demo library on this computer: it synthesises and measures the audition
          recordings of an invented choir and analyses our sample scores. This happens once and takes a little while.
        </p>
        <progress max={Math.max(status.total, 1)} value={status.done} aria-labelledby="library-wait-step" />
        <p id="library-wait-step" role="status" aria-live="polite" data-testid="library-preparing-step">
          {status.done} of {status.total} steps: {status.label}
        </p>
      </section>
    );
  }
  return (
    <p class="muted" role="status">
      Opening the library…
    </p>
  );
}
