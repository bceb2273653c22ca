// Production server: serves the built app. A small Express wrapper instead of the stock
// server so the client's socket address reaches rate limits through a header we set ourselves
// (any incoming copy of that header is discarded first, so it cannot be spoofed).
import path from "node:path";
import compression from "compression";
import express from "express";
import { createRequestHandler } from "@react-router/express";
import { originGuard } from "./app/utils/origin-guard.js";

const port = Number(process.env.PORT ?? 3000);
const host = process.env.HOST ?? "127.0.0.1";
const build = await import(path.resolve("build/server/index.js"));

const app = express();
app.disable("x-powered-by");
app.use(compression());
app.use("/assets", express.static("build/client/assets", { immutable: true, maxAge: "1y" }));
app.use(express.static("build/client", { maxAge: "1h" }));
app.use((req, _res, next) => {
  const trustProxy = process.env.TRUST_PROXY === "true";
  const forwarded = trustProxy
    ? String(req.headers["x-forwarded-for"] ?? "")
        .split(",")[0]
        .trim()
    : "";
  req.headers["x-thawline-client"] = forwarded || req.socket.remoteAddress || "unknown";
  delete req.headers["x-forwarded-for"];
  next();
});
// Cross-origin writes are refused before React Router sees them (pages and resource routes alike).
app.use(originGuard({ appUrl: process.env.APP_URL, trustProxy: process.env.TRUST_PROXY === "true" }));
app.all("/{*splat}", createRequestHandler({ build, mode: process.env.NODE_ENV }));

app.listen(port, host, () => {
  console.log(`Thawline listening on http://${host === "0.0.0.0" ? "localhost" : host}:${port}`);
});
