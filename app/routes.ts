import { type RouteConfig, index, route } from "@react-router/dev/routes";

export default [
  index("routes/home.tsx"),
  route("sign-in", "routes/sign-in.tsx"),
  route("sign-in/link", "routes/sign-in.link.tsx"),
  route("sign-out", "routes/sign-out.ts"),
  route("account", "routes/account.tsx"),
  route("people", "routes/people.tsx"),
  route("dev/outbox", "routes/dev.outbox.tsx"),
  route("api/v1/me", "routes/api/v1.me.ts"),
  route("explore", "routes/explore.tsx"),
  route("determinations/:id", "routes/determination.tsx"),
  route("sites/:id", "routes/site.tsx"),
  route("map", "routes/map.tsx"),
  route("api/map-sites", "routes/api/map-sites.ts"),
  route("calibrate", "routes/calibrate.tsx"),
  route("calibrate/results.csv", "routes/api/calibrate-csv.ts"),
  route("api/v1/calibrate", "routes/api/v1.calibrate.ts"),
  route("api/curve-window", "routes/api/curve-window.ts"),
  route("curves", "routes/curves.tsx"),
  route("api/jobs/:id", "routes/api/jobs.ts"),
] satisfies RouteConfig;
