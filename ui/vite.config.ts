// Vite defaults throughout (dev port 5173, output in dist/); only JSX is
// pointed at Preact. The Tauri shell loads dist/ in the app and the dev
// server's http://localhost:5173 during `tauri dev`.
import { defineConfig } from "vitest/config";

export default defineConfig({
  // Relative asset URLs so dist/ works from Tauri's custom protocol as well.
  base: "./",
  server: { port: 5173, strictPort: true },
  // OpenSheetMusicDisplay is one large chunk, loaded only when an excerpt is shown.
  build: {
    chunkSizeWarningLimit: 1500,
    // Two pages: the app, and the notation renderer's frame (notation.html).
    rollupOptions: { input: { main: "index.html", notation: "notation.html" } },
  },
  test: { environment: "node", include: ["src/**/*.test.ts"] },
});
