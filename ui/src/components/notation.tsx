/**
 * A notation excerpt: the MusicXML of a few bars (from the `notation_excerpt`
 * command) engraved by OpenSheetMusicDisplay, loaded on first use so the rest
 * of the app starts without it.
 */
import { useEffect, useMemo, useRef, useState } from "preact/hooks";
import { errorText } from "../api";
import { excerptAsText } from "../lib/excerpt-text";

export function NotationExcerpt({ musicXml, label }: { musicXml: string; label: string }) {
  const host = useRef<HTMLDivElement>(null);
  const [error, setError] = useState<string | null>(null);
  const [ready, setReady] = useState(false);
  const bars = useMemo(() => {
    const parsed = new DOMParser().parseFromString(musicXml, "application/xml");
    return parsed.getElementsByTagName("parsererror").length > 0 ? [] : excerptAsText(parsed);
  }, [musicXml]);
  useEffect(() => {
    let cancelled = false;
    setError(null);
    setReady(false);
    void (async () => {
      try {
        const { OpenSheetMusicDisplay } = await import("opensheetmusicdisplay");
        if (cancelled || !host.current) return;
        host.current.innerHTML = "";
        const display = new OpenSheetMusicDisplay(host.current, {
          autoResize: false,
          backend: "svg",
          drawTitle: false,
          drawSubtitle: false,
          drawComposer: false,
          drawLyricist: false,
          drawCredits: false,
          drawPartNames: true,
          drawMeasureNumbers: true,
        });
        await display.load(musicXml);
        if (cancelled) return;
        display.zoom = 0.8;
        display.render();
        setReady(true);
      } catch (e) {
        if (!cancelled) setError(`The excerpt could not be engraved: ${errorText(e)}`);
      }
    })();
    return () => {
      cancelled = true;
    };
  }, [musicXml]);
  return (
    <figure style={{ margin: 0 }}>
      <div class="notation" ref={host} role="img" aria-label={label} />
      {!ready && !error && <p class="muted small">Engraving…</p>}
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
