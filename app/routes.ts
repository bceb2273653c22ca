import { type RouteConfig, index, layout, prefix, route } from "@react-router/dev/routes";

// URLs are the public contract; the folders only group the modules. Each area's layout checks the
// area's role, and every loader and action still begins with its own check.
export default [
  index("routes/home.tsx"),
  route("calibrate", "routes/calibrate.tsx"),
  route("api-docs", "routes/api-docs.tsx"),
  route("dev/outbox", "routes/dev.outbox.tsx"),

  // Sign-in and sign-out are for everyone; the account page for signed-in people.
  route("sign-in", "routes/account/sign-in.tsx"),
  route("sign-in/link", "routes/account/sign-in.link.tsx"),
  route("sign-out", "routes/account/sign-out.ts"),
  layout("routes/account/layout.tsx", [route("account", "routes/account/account.tsx")]),

  layout("routes/explore/layout.tsx", [
    route("explore", "routes/explore/explore.tsx"),
    route("determinations/:id", "routes/explore/determination.tsx"),
    route("sites/:id", "routes/explore/site.tsx"),
    route("map", "routes/explore/map.tsx"),
  ]),

  layout("routes/contribute/layout.tsx", [
    route("submit", "routes/contribute/submit.tsx"),
    route("submissions", "routes/contribute/submissions.tsx"),
    route("submissions/:id/edit", "routes/contribute/submission-edit.tsx"),
    route("submissions/:id/answer", "routes/contribute/submission-answer.tsx"),
    route("uploads", "routes/contribute/uploads.tsx"),
    route("uploads/:publicId", "routes/contribute/upload.tsx"),
  ]),

  layout("routes/review/layout.tsx", [route("review", "routes/review/queue.tsx"), route("review/:id", "routes/review/item.tsx")]),

  layout("routes/admin/layout.tsx", [
    route("people", "routes/admin/people.tsx"),
    route("curves", "routes/admin/curves.tsx"),
    route("labs", "routes/admin/labs.tsx"),
    route("publications", "routes/admin/publications.tsx"),
    route("publications/:id", "routes/admin/publication.tsx"),
    route("checks", "routes/admin/checks.tsx"),
  ]),

  layout("routes/constraints/layout.tsx", [route("constraints", "routes/constraints/constraints.tsx")]),
  layout("routes/releases/layout.tsx", [
    route("releases", "routes/releases/index.tsx"),
    route("releases/:slug", "routes/releases/release.tsx"),
  ]),
  layout("routes/runs/layout.tsx", [
    route("runs", "routes/runs/runs.tsx"),
    route("runs/:id", "routes/runs/run.tsx"),
    route("runs/ensembles/:name", "routes/runs/ensemble.tsx"),
  ]),

  // Cookie-session resource routes: CSV and spreadsheet downloads, previews, job progress, map data.
  route("api/map-sites", "routes/resources/map-sites.ts"),
  route("constraints/summary", "routes/resources/constraints-summary.ts"),
  route("constraints/download", "routes/resources/constraints-download.ts"),
  route("api/curve-window", "routes/resources/curve-window.ts"),
  route("api/jobs/:id", "routes/resources/jobs.ts"),
  route("api/determination-preview", "routes/resources/determination-preview.ts"),
  route("api/site-search", "routes/resources/site-search.ts"),
  route("calibrate/results.csv", "routes/resources/calibrate-csv.ts"),
  route("calibrate/batch", "routes/resources/calibrate-batch.ts"),
  route("calibrate/file", "routes/resources/calibrate-file.ts"),
  route("uploads/file", "routes/resources/upload-file.ts"),
  route("uploads/template.xlsx", "routes/resources/upload-template-xlsx.ts"),
  route("uploads/template.csv", "routes/resources/upload-template-csv.ts"),
  route("uploads/:publicId/errors.csv", "routes/resources/upload-errors-csv.ts"),
  route("runs/:id/file", "routes/resources/model-run-file.ts"),
  route("runs/:id/margins.json", "routes/resources/model-run-margins.ts"),
  route("runs/ensembles/:name/runs.csv", "routes/resources/ensemble-csv.ts", { id: "routes/resources/ensemble-runs-csv" }),
  route("runs/ensembles/:name/scores.csv", "routes/resources/ensemble-csv.ts", { id: "routes/resources/ensemble-scores-csv" }),

  // The token API: JSON, a stable contract documented at /api-docs.
  ...prefix("api/v1", [
    route("me", "routes/api/v1/me.ts"),
    route("calibrate", "routes/api/v1/calibrate.ts"),
    route("uploads", "routes/api/v1/uploads.ts"),
    route("uploads/:uploadId/commit", "routes/api/v1/uploads.commit.ts"),
    route("determinations", "routes/api/v1/determinations.ts"),
    route("constraints", "routes/api/v1/constraints.ts"),
    route("releases", "routes/api/v1/releases.ts"),
    route("releases/:slug", "routes/api/v1/release.ts"),
    route("determinations/:id", "routes/api/v1/determination.ts"),
    route("reviews", "routes/api/v1/reviews.ts"),
    route("model-runs", "routes/api/v1/model-runs.ts"),
    route("model-runs/:id", "routes/api/v1/model-run.ts"),
    route("ensembles/:name", "routes/api/v1/ensemble.ts"),
  ]),
] satisfies RouteConfig;
