/** Small pieces every screen uses: the error line, the cautions block, number formats. */
import type { ComponentChildren } from "preact";
import { useCallback, useEffect, useState } from "preact/hooks";
import { errorText } from "../api";
import { useShared } from "../app";

/** A command's error string, shown as the engine wrote it. */
export function ErrorMessage({ error }: { error: string | null }) {
  if (!error) return null;
  return (
    <p class="error" role="alert" data-testid="error-message">
      {error}
    </p>
  );
}

/**
 * The cautions (BRIEF §7), wherever a voice is classified or a placement or a
 * key suggested. The wording is the engine's (`cautions` command) unless the
 * result itself carries it.
 */
export function Cautions({ items }: { items?: string[] }) {
  const { cautions } = useShared();
  const list = items && items.length > 0 ? items : cautions;
  return (
    <aside class="cautions" data-testid="cautions" aria-label="Please keep in mind">
      <h3>Please keep in mind</h3>
      <ul>
        {list.map((text) => (
          <li key={text}>{text}</li>
        ))}
      </ul>
    </aside>
  );
}

/** Loads data with a command; `reload` runs it again. */
export function useLoad<T>(load: () => Promise<T>, deps: unknown[]) {
  const [data, setData] = useState<T | null>(null);
  const [error, setError] = useState<string | null>(null);
  const [loading, setLoading] = useState(true);
  const reload = useCallback(() => {
    setLoading(true);
    load().then(
      (value) => {
        setData(value);
        setError(null);
        setLoading(false);
      },
      (e) => {
        setError(errorText(e));
        setLoading(false);
      },
    );
    // eslint-disable-next-line react-hooks/exhaustive-deps
  }, deps);
  useEffect(reload, [reload]);
  return { data, error, loading, reload, setData, setError };
}

export function Field({ label, children, inline }: { label: string; children: ComponentChildren; inline?: boolean }) {
  return (
    <label class={inline ? "field inline" : "field"}>
      {inline ? (
        <>
          {children}
          <span>{label}</span>
        </>
      ) : (
        <>
          <span>{label}</span>
          {children}
        </>
      )}
    </label>
  );
}

export const percent = (share: number) => `${Math.round(share * 100)} %`;
export const seconds = (s: number) => (s >= 60 ? `${Math.floor(s / 60)} min ${Math.round(s % 60)} s` : `${s.toFixed(1)} s`);
export const fitText = (fit: number | null | undefined) => (fit === null || fit === undefined ? "—" : fit.toFixed(0));
export const signed = (value: number, digits = 1) => `${value > 0 ? "+" : value < 0 ? "−" : "±"}${Math.abs(value).toFixed(digits)}`;

/** Today as YYYY-MM-DD in local time. */
export function today(): string {
  const d = new Date();
  return `${d.getFullYear()}-${String(d.getMonth() + 1).padStart(2, "0")}-${String(d.getDate()).padStart(2, "0")}`;
}

/**
 * An <option> whose `value` is also an HTML attribute. Preact sets `value` as a
 * DOM property and skips it when it equals the text, which leaves no attribute
 * for `option[value=…]` selectors (WebDriver's select-by-value uses them).
 */
export function Choice({ value, children }: { value: string; children?: ComponentChildren }) {
  return (
    <option value={value} ref={(element) => element?.setAttribute("value", value)}>
      {children ?? value}
    </option>
  );
}
