// @ts-check
/*
 * react-router's package exports always point Node at its development build (extra checks and
 * warnings, slower). In production, a resolve hook sends every import of it — from the app's
 * server build and from React Router's own packages — to the production build beside it. Register
 * before anything imports react-router (server.js imports the build and the handler dynamically).
 */
import { register } from "node:module";

const hook = `
export async function resolve(specifier, context, next) {
  const result = await next(specifier, context);
  if (result.url.includes("/node_modules/react-router/dist/development/")) {
    return { ...result, url: result.url.replace("/dist/development/", "/dist/production/") };
  }
  return result;
}`;

export function useProductionBuilds() {
  if (process.env.NODE_ENV !== "production") return;
  register(`data:text/javascript,${encodeURIComponent(hook)}`);
}
