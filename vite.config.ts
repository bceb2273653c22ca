import { reactRouter } from "@react-router/dev/vite";
import tailwindcss from "@tailwindcss/vite";
import { defineConfig, type Plugin } from "vite";
import { originGuard } from "./app/utils/origin-guard.js";
import { securityHeaders } from "./app/http/security-headers.js";
import { bodyLimit } from "./app/http/body-limit.js";
import { workerBundle } from "./app/workers/vite-plugin.ts";

// A build says what a person needs: warnings, and one line per environment with its size and time.
// Vite's per-file list (one line per asset, ~160 of them) and its progress chatter stay out
// (logLevel "warn" during builds); the dev server keeps Vite's usual output.
function buildSummary(): Plugin {
  let started = 0;
  let files = 0;
  let bytes = 0;
  return {
    name: "thawline-build-summary",
    apply: "build",
    buildStart() {
      started = performance.now();
      files = 0;
      bytes = 0;
    },
    generateBundle(_options, bundle) {
      for (const item of Object.values(bundle)) {
        files += 1;
        bytes +=
          item.type === "chunk"
            ? Buffer.byteLength(item.code)
            : typeof item.source === "string"
              ? Buffer.byteLength(item.source)
              : item.source.byteLength;
      }
    },
    closeBundle() {
      const name = this.environment?.name === "ssr" ? "server" : (this.environment?.name ?? "app");
      const seconds = ((performance.now() - started) / 1000).toFixed(1);
      console.log(`✓ built ${name}: ${files} files, ${(bytes / 1e6).toFixed(1)} MB, in ${seconds} s`);
    },
  };
}

// @react-router/dev 7.18 (the last 7.x release) hands Vite 8 its own `envFile: false` when it loads
// react-router.config.ts, which Vite reports as deprecated on every build. The option is not ours to
// change; drop that one line (loading this file first is why `npm run build` is `vite build`).
// Remove the filter with React Router 8.
const warn = console.warn.bind(console);
console.warn = (...args: unknown[]) => {
  if (typeof args[0] === "string" && args[0].includes("The `envFile` option is deprecated")) return;
  warn(...args);
};

export default defineConfig(({ command }) => ({
  logLevel: command === "build" ? "warn" : "info",
  plugins: [
    tailwindcss(),
    {
      // Same origin check as server.js, in front of the dev server's request handler.
      name: "thawline-origin-guard",
      configureServer(server) {
        // Headers as in production except the script policy (Vite injects inline scripts without a
        // nonce); bodies are checked by their declared length only (Vite's handler reads them itself).
        server.middlewares.use(securityHeaders({ scripts: false }));
        server.middlewares.use(originGuard({ appUrl: process.env.APP_URL }));
        server.middlewares.use(
          bodyLimit({
            uploadMaxBytes: Number(process.env.UPLOAD_MAX_BYTES ?? 10 * 1024 * 1024),
            modelRunMaxBytes: Number(process.env.MODEL_RUN_MAX_BYTES ?? 512 * 1024 * 1024),
            modelRunBatchMaxBytes: Number(process.env.MODEL_RUN_BATCH_MAX_BYTES ?? 2048 * 1024 * 1024),
            streaming: false,
          }),
        );
      },
    },
    {
      // As server.js does in production: once the dev server listens, background work a restart
      // cut off (model runs still queued or cut off while scoring) starts again.
      name: "thawline-resume-background-work",
      apply: "serve",
      configureServer(server) {
        server.httpServer?.once("listening", () => {
          server
            .ssrLoadModule("/app/models/startup.server.ts")
            .then((startup) => (startup as typeof import("./app/models/startup.server.ts")).resumeBackgroundWork())
            .catch((error: unknown) => server.config.logger.error(`Could not resume background work: ${String(error)}`));
        });
      },
    },
    reactRouter(),
    buildSummary(),
    workerBundle(),
  ],
  build: {
    // Timings of plugins are a note for the bundler's developers, not for a person building the app.
    rolldownOptions: { checks: { pluginTimings: false, bundlerTimings: false } },
  },
  ssr: {
    // Leaflet touches `window` at import time; it is only ever loaded in the browser.
    noExternal: [],
  },
}));
