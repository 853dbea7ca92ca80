/** A modal dialog: focus moves into it, Escape or Cancel closes it, focus returns. */
import type { ComponentChildren } from "preact";
import { useEffect, useRef } from "preact/hooks";

export function Modal({ title, children, onClose }: { title: string; children: ComponentChildren; onClose: () => void }) {
  const box = useRef<HTMLDivElement>(null);
  const close = useRef(onClose);
  close.current = onClose;
  useEffect(() => {
    const previous = document.activeElement as HTMLElement | null;
    const first = box.current?.querySelector<HTMLElement>("[data-autofocus], button, input, select");
    first?.focus();
    const onKey = (event: KeyboardEvent) => {
      if (event.key === "Escape") close.current();
      if (event.key === "Tab" && box.current) {
        // Keep Tab inside the dialog.
        const items = [...box.current.querySelectorAll<HTMLElement>("button, input, select, textarea, a[href]")];
        if (items.length === 0) return;
        const [head, tail] = [items[0], items[items.length - 1]];
        if (event.shiftKey && document.activeElement === head) {
          event.preventDefault();
          tail.focus();
        } else if (!event.shiftKey && document.activeElement === tail) {
          event.preventDefault();
          head.focus();
        }
      }
    };
    document.addEventListener("keydown", onKey);
    return () => {
      document.removeEventListener("keydown", onKey);
      previous?.focus();
    };
  }, []);
  return (
    <div class="modal-backdrop">
      <div class="modal" role="dialog" aria-modal="true" aria-labelledby="modal-title" ref={box}>
        <h3 id="modal-title">{title}</h3>
        {children}
      </div>
    </div>
  );
}
