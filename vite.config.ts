import { reactRouter } from "@react-router/dev/vite";
import tailwindcss from "@tailwindcss/vite";
import { defineConfig } from "vite";

export default defineConfig({
  plugins: [tailwindcss(), reactRouter()],
  ssr: {
    // Leaflet touches `window` at import time; it is only ever loaded in the browser.
    noExternal: [],
  },
});
