/**
 * A notation excerpt: the MusicXML of a few bars (from the `notation_excerpt`
 * command) engraved by OpenSheetMusicDisplay, with the notes also as text.
 *
 * The engraver runs in its own frame (notation.html, see notation-frame.ts for
 * why). Where the window's security policy does not allow that frame (a CSP
 * `frame-ancestors 'none'`), it runs in this page instead; where that fails
 * too, the text stays and the error says why.
 */
import { useEffect, useMemo, useRef, useState } from "preact/hooks";
import { excerptAsText } from "../lib/excerpt-text";

export function NotationExcerpt({ musicXml, label }: { musicXml: string; label: string }) {
  const frame = useRef<HTMLIFrameElement>(null);
  const [error, setError] = useState<string | null>(null);
  const [height, setHeight] = useState<number | null>(null);
  const [inline, setInline] = useState(false);
  const inlineHost = useRef<HTMLDivElement>(null);
  const bars = useMemo(() => {
    const parsed = new DOMParser().parseFromString(musicXml, "application/xml");
    return parsed.getElementsByTagName("parsererror").length > 0 ? [] : excerptAsText(parsed);
  }, [musicXml]);

  useEffect(() => {
    setError(null);
    setHeight(null);
    if (inline) return;
    let answered = false;
    const send = () =>
      frame.current?.contentWindow?.postMessage({ musicXml, width: frame.current.clientWidth - 16 }, window.location.origin);
    const onMessage = (event: MessageEvent) => {
      if (event.origin !== window.location.origin || event.source !== frame.current?.contentWindow) return;
      answered = true;
      const data = event.data as { ready?: boolean; rendered?: boolean; height?: number; error?: string };
      if (data.ready) send();
      else if (data.rendered) setHeight(data.height ?? 160);
      else if (data.rendered === false) setError(`The excerpt could not be engraved: ${data.error}`);
    };
    window.addEventListener("message", onMessage);
    send(); // in case the frame was already loaded
    // No word from the frame: it was not allowed to load; engrave here instead.
    const timer = window.setTimeout(() => answered || setInline(true), 4000);
    return () => {
      window.removeEventListener("message", onMessage);
      window.clearTimeout(timer);
    };
  }, [musicXml, inline]);

  useEffect(() => {
    if (!inline) return;
    let cancelled = false;
    void (async () => {
      try {
        const { OpenSheetMusicDisplay } = await import("opensheetmusicdisplay");
        if (cancelled || !inlineHost.current) return;
        inlineHost.current.innerHTML = "";
        const display = new OpenSheetMusicDisplay(inlineHost.current, {
          autoResize: false,
          backend: "svg",
          drawTitle: false,
          drawCredits: false,
          drawPartNames: true,
          drawMeasureNumbers: true,
        });
        await display.load(musicXml);
        if (cancelled) return;
        display.zoom = 0.85;
        display.render();
        setHeight(inlineHost.current.scrollHeight);
      } catch (e) {
        if (!cancelled) setError(`The excerpt could not be engraved: ${e instanceof Error ? e.message : String(e)}`);
      }
    })();
    return () => {
      cancelled = true;
    };
  }, [musicXml, inline]);

  return (
    <figure
      style={{ margin: 0 }}
      data-testid="notation-excerpt"
      data-state={error ? "failed" : height === null ? "engraving" : inline ? "engraved-inline" : "engraved"}
    >
      {inline ? (
        <div class="notation" ref={inlineHost} role="img" aria-label={`Notation: ${label}`} />
      ) : (
        <iframe
          ref={frame}
          data-testid="notation-frame"
          class="notation"
          src="notation.html"
          title={`Notation: ${label}`}
          style={{ width: "100%", border: "none", height: `${height ?? 160}px` }}
        />
      )}
      {height === null && !error && <p class="muted small">Engraving…</p>}
      {error && (
        <p class="error" role="alert">
          {error}
        </p>
      )}
      <figcaption class="small muted">{label}</figcaption>
      <details open={error !== null}>
        <summary class="small">The notes as text</summary>
        <ul class="small">
          {bars.map((bar, i) => (
            <li key={i}>
              bar {bar.bar}: {bar.notes.join(", ") || "—"}
            </li>
          ))}
        </ul>
      </details>
    </figure>
  );
}
