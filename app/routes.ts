import { type RouteConfig, index, route } from "@react-router/dev/routes";

export default [
  index("routes/home.tsx"),
  route("calibrate", "routes/calibrate.tsx"),
  route("calibrate/results.csv", "routes/api/calibrate-csv.ts"),
  route("api/v1/calibrate", "routes/api/v1.calibrate.ts"),
  route("api/curve-window", "routes/api/curve-window.ts"),
  route("curves", "routes/curves.tsx"),
  route("api/jobs/:id", "routes/api/jobs.ts"),
] satisfies RouteConfig;
