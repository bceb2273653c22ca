import path from "node:path";
import { build, type Plugin } from "vite";

/*
 * Worker threads in production run a bundle built with the app, not the TypeScript sources:
 * `vite build` ends by bundling app/workers/tasks.server.ts (and every module its tasks import)
 * into build/workers/entry.js, with the packages left to node_modules as in the server's own
 * bundle. So the server's threads need no TypeScript loader (tsx is a devDependency). The pool
 * (pool.server.ts) starts threads from this file when the server runs in production.
 */
export const WORKER_BUNDLE = "build/workers/entry.js";

export function workerBundle(): Plugin {
  let root = process.cwd();
  return {
    name: "thawline-worker-bundle",
    apply: "build",
    configResolved(config) {
      root = config.root;
    },
    async closeBundle() {
      // Once, after the server's bundle (React Router builds the browser's, then the server's).
      if (this.environment?.name !== "ssr") return;
      const started = performance.now();
      await build({
        configFile: false,
        root,
        logLevel: "warn",
        mode: "production",
        build: {
          ssr: path.join(root, "app/workers/tasks.server.ts"),
          outDir: path.join(root, path.dirname(WORKER_BUNDLE)),
          emptyOutDir: true,
          target: "node20",
          minify: false,
          sourcemap: true,
          rolldownOptions: {
            output: { entryFileNames: path.basename(WORKER_BUNDLE), chunkFileNames: "[name]-[hash].js" },
            checks: { pluginTimings: false, bundlerTimings: false },
          },
        },
      });
      console.log(`✓ built workers: ${WORKER_BUNDLE} in ${((performance.now() - started) / 1000).toFixed(1)} s`);
    },
  };
}
