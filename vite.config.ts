import { reactRouter } from "@react-router/dev/vite";
import tailwindcss from "@tailwindcss/vite";
import { defineConfig } from "vite";
import { originGuard } from "./app/utils/origin-guard.js";
import { securityHeaders } from "./app/http/security-headers.js";
import { bodyLimit } from "./app/http/body-limit.js";

export default defineConfig({
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
          bodyLimit({ uploadMaxBytes: Number(process.env.UPLOAD_MAX_BYTES ?? 10 * 1024 * 1024), streaming: false }),
        );
      },
    },
    reactRouter(),
  ],
  ssr: {
    // Leaflet touches `window` at import time; it is only ever loaded in the browser.
    noExternal: [],
  },
});
