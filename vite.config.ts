import { reactRouter } from "@react-router/dev/vite";
import tailwindcss from "@tailwindcss/vite";
import { defineConfig } from "vite";
import { originGuard } from "./app/utils/origin-guard.js";

export default defineConfig({
  plugins: [
    tailwindcss(),
    {
      // Same origin check as server.js, in front of the dev server's request handler.
      name: "thawline-origin-guard",
      configureServer(server) {
        server.middlewares.use(originGuard({ appUrl: process.env.APP_URL }));
      },
    },
    reactRouter(),
  ],
  ssr: {
    // Leaflet touches `window` at import time; it is only ever loaded in the browser.
    noExternal: [],
  },
});
