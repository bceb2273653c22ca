// Every page's error rendering, server-side through React Router's static handler with the app's
// real route tree (app/routes.ts) and modules: an address that matches nothing, and each page
// whose loader finds nothing (an unknown id) answer 404 with the app's error page inside the
// shell; a loader that throws answers 500 with the same page, caught by the route's own boundary.
import { createElement } from "react";
import { renderToString } from "react-dom/server";
import {
  createStaticHandler,
  createStaticRouter,
  type RouteObject,
  StaticRouterProvider,
  UNSAFE_withComponentProps as withComponentProps,
  UNSAFE_withErrorBoundaryProps as withErrorBoundaryProps,
} from "react-router";
import type { RouteConfigEntry } from "@react-router/dev/routes";
import { describe, expect, it } from "vitest";
import routes from "#app/routes.ts";
import { ORIGIN, personWithSession } from "#tests/support/auth.ts";

type Module = {
  default?: React.ComponentType;
  ErrorBoundary?: React.ComponentType;
  loader?: (args: unknown) => unknown;
};

const modules = import.meta.glob<Module>(["../../app/root.tsx", "../../app/routes/**/*.{ts,tsx}"]);
const moduleOf = (file: string) => modules[`../../app/${file}`]!() as Promise<Module>;
const idOf = (e: RouteConfigEntry) => e.id ?? e.file.replace(/\.tsx?$/, "");

/** Page routes (modules with a component) in the order routes.ts lists them, with their path. */
function pages(entries: RouteConfigEntry[], base = ""): { id: string; file: string; path: string }[] {
  return entries.flatMap((e) => {
    const path = e.index ? base || "/" : e.path ? `${base}/${e.path}` : base;
    const own = e.file.endsWith(".tsx") && !e.children ? [{ id: idOf(e), file: e.file, path }] : [];
    return [...own, ...pages(e.children ?? [], path)];
  });
}

/** The app's route tree as data routes; `failing` replaces one route's loader. */
async function tree(failing?: { id: string; loader: () => never }): Promise<RouteObject[]> {
  const build = async (e: RouteConfigEntry): Promise<RouteObject> => {
    const mod = await moduleOf(e.file);
    const id = idOf(e);
    const loader = failing?.id === id ? failing.loader : mod.loader;
    return {
      id,
      path: e.path,
      index: e.index,
      loader: loader ? (args: Record<string, unknown>) => loader({ ...args, context: {} }) : undefined,
      Component: mod.default ? withComponentProps(mod.default as never) : undefined,
      ErrorBoundary: mod.ErrorBoundary ? withErrorBoundaryProps(mod.ErrorBoundary as never) : undefined,
      children: e.index ? undefined : await Promise.all((e.children ?? []).map(build)),
    } as RouteObject;
  };
  const root = await moduleOf("root.tsx");
  return [
    {
      id: "root",
      path: "",
      loader: (args) => root.loader!({ ...args, context: {} }),
      Component: withComponentProps(root.default as never),
      ErrorBoundary: withErrorBoundaryProps(root.ErrorBoundary as never),
      children: await Promise.all((routes as RouteConfigEntry[]).map(build)),
    },
  ];
}

/** Renders a GET of `path` as the server would: status, the route whose boundary caught, and the HTML. */
async function render(path: string, cookie?: string, failing?: { id: string; loader: () => never }) {
  const handler = createStaticHandler(await tree(failing));
  const request = new Request(`${ORIGIN}${path}`, { headers: cookie ? { Cookie: cookie } : {} });
  const context = await handler.query(request);
  if (context instanceof Response) throw new Error(`${path} answered a bare ${context.status}`);
  const html = renderToString(
    createElement(StaticRouterProvider, { router: createStaticRouter(handler.dataRoutes, context), context, hydrate: false }),
  );
  return { status: context.statusCode, caughtBy: Object.keys(context.errors ?? {}), html };
}

const SHELL = 'aria-label="Thawline home"';
const everyRole = () => personWithSession(["contributor", "reviewer", "modeller", "editor"]);

describe("error pages", () => {
  it("an address that matches nothing answers 404 with the app's error page inside the shell", async () => {
    const page = await render("/no-such-page/at-all");
    expect(page.status).toBe(404);
    expect(page.caughtBy).toEqual(["root"]);
    expect(page.html).toContain('role="alert"');
    expect(page.html).toContain("Not found");
    expect(page.html).toContain("There is nothing at this address.");
    expect(page.html).toContain(SHELL);
  });

  it("every page with an id in its address answers 404 for an unknown one, caught by its own boundary", async () => {
    const person = await everyRole();
    const withIds = pages(routes as RouteConfigEntry[]).filter((p) => p.path.includes("/:"));
    expect(withIds.length).toBeGreaterThanOrEqual(8);
    for (const p of withIds) {
      const path = p.path.replace(/:[A-Za-z]+/g, (m) => (/id$/i.test(m) ? "987654" : "no-such-thing"));
      const page = await render(path, person.cookie);
      expect([p.id, page.status, page.caughtBy], path).toEqual([p.id, 404, [p.id]]);
      expect(page.html, path).toContain("Not found");
      expect(page.html, path).toContain(SHELL);
    }
  });

  it("a loader that throws answers 500 with the app's error page, for every page", async () => {
    const person = await everyRole();
    const all = pages(routes as RouteConfigEntry[]);
    expect(all.length).toBeGreaterThanOrEqual(25);
    for (const p of all) {
      const path = p.path.replace(/:[A-Za-z]+/g, "1");
      const failing = {
        id: p.id,
        loader: () => {
          throw new Error("a test failure");
        },
      };
      const page = await render(path, person.cookie, failing);
      expect([p.id, page.status, page.caughtBy], path).toEqual([p.id, 500, [p.id]]);
      expect(page.html, path).toContain("Something went wrong");
      expect(page.html, path).toContain('role="alert"');
      expect(page.html, path).toContain(SHELL);
    }
  });

  it("a page refused for a role renders the 403 page with the role's message", async () => {
    const contributor = await personWithSession(["contributor"]);
    const page = await render("/review", contributor.cookie);
    expect(page.status).toBe(403);
    expect(page.html).toContain("Not allowed");
  });
});
