// Production server: serves the built app. A small Express wrapper instead of the stock server:
// security headers with a per-request CSP nonce, the client's address from the socket (or the
// address a trusted proxy appended), body limits enforced while streaming, the origin check, and
// one JSON log line per request. Everything it adds lives in app/http/.
import { useProductionBuilds } from "./app/http/production-builds.js";

process.env.NODE_ENV ??= "production";
useProductionBuilds();

const path = await import("node:path");
const { default: compression } = await import("compression");
const { default: express } = await import("express");
const { securityHeaders } = await import("./app/http/security-headers.js");
const { clientAddress } = await import("./app/http/client-address.js");
const { bodyLimit } = await import("./app/http/body-limit.js");
const { requestLog, logError, logLine } = await import("./app/http/request-log.js");
const { originGuard } = await import("./app/utils/origin-guard.js");
const { reactRouterHandler } = await import("./app/http/react-router-handler.js");
const { pageLane } = await import("./app/http/page-lane.js");

const port = Number(process.env.PORT ?? 3000);
const host = process.env.HOST ?? "127.0.0.1";
const trustProxy = process.env.TRUST_PROXY === "true";
const uploadMaxBytes = Number(process.env.UPLOAD_MAX_BYTES ?? 10 * 1024 * 1024);
const modelRunMaxBytes = Number(process.env.MODEL_RUN_MAX_BYTES ?? 512 * 1024 * 1024);
const modelRunBatchMaxBytes = Number(process.env.MODEL_RUN_BATCH_MAX_BYTES ?? 2048 * 1024 * 1024);
const build = await import(path.resolve("build/server/index.js"));

const app = express();
app.disable("x-powered-by");
// Lets req.secure (HSTS) and req.protocol see the trusted proxy's scheme; addresses are ours below.
if (trustProxy) app.set("trust proxy", 1);
app.use(requestLog());
app.use(securityHeaders({ trustProxy }));
// A kept page seen before goes out from here, already compressed (app/http/page-lane.js).
app.use(pageLane(build.entry?.module ?? {}));
app.use(compression());
app.use("/assets", express.static("build/client/assets", { immutable: true, maxAge: "1y" }));
// build/client holds nothing but files with an extension (the favicon; assets/ above), so a path
// without one (every page and API answer) skips the file look-up the static handler would make.
const clientFiles = express.static("build/client", { maxAge: "1h" });
app.use((req, res, next) => (/\.[^/]*$/.test(req.path) ? clientFiles(req, res, next) : next()));
app.use(clientAddress({ trustProxy }));
// Cross-origin writes are refused before React Router sees them (pages and resource routes alike).
app.use(originGuard({ appUrl: process.env.APP_URL, trustProxy }));
app.use(bodyLimit({ uploadMaxBytes, modelRunMaxBytes, modelRunBatchMaxBytes }));
app.all("/{*splat}", reactRouterHandler({ build, mode: process.env.NODE_ENV }));
app.use((/** @type {unknown} */ error, /** @type {any} */ req, /** @type {any} */ res, /** @type {any} */ _next) => {
  logError(error, { method: req.method, path: req.path });
  if (res.headersSent) return res.destroy();
  res.status(500).type("text/plain").send("Something went wrong on the server.");
});

app.listen(port, host, () => {
  logLine({ level: "info", message: `Thawline listening on http://${host === "0.0.0.0" ? "localhost" : host}:${port}` });
  // Background work a restart cut off (queued model runs) starts again.
  build.entry?.module?.onServerStart?.();
});
