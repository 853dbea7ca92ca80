/**
 * The notation renderer's own page, shown in an iframe by
 * components/notation.tsx. OpenSheetMusicDisplay (and the VexFlow it bundles)
 * assigns `toString`/`constructor` on objects in pre-ES2015 style, which throws
 * when the app window hardens its realm (Tauri's `freezePrototype`); in its
 * own frame it gets a realm of its own. It takes MusicXML by postMessage from
 * the same origin only and answers with its height or the error.
 */
import { OpenSheetMusicDisplay } from "opensheetmusicdisplay";

const host = document.getElementById("score")!;
// Styles set through the CSSOM, not an inline <style>: under the app's CSP an
// inline block would get a nonce, and a nonce switches 'unsafe-inline' off.
document.documentElement.style.background = "#fff";
document.body.style.margin = "0";

window.addEventListener("message", async (event: MessageEvent) => {
  if (event.origin !== window.location.origin || event.source !== window.parent) return;
  const data = event.data as { musicXml?: string; width?: number };
  if (typeof data?.musicXml !== "string") return;
  try {
    host.innerHTML = "";
    host.style.width = `${Math.max(300, data.width ?? 800)}px`;
    const display = new OpenSheetMusicDisplay(host, {
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
    await display.load(data.musicXml);
    display.zoom = 0.85;
    display.render();
    window.parent.postMessage({ rendered: true, height: document.body.scrollHeight }, window.location.origin);
  } catch (error) {
    window.parent.postMessage({ rendered: false, error: error instanceof Error ? error.message : String(error) }, window.location.origin);
  }
});

window.parent.postMessage({ ready: true }, window.location.origin);
