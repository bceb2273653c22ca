import {
  data,
  Form,
  isRouteErrorResponse,
  Links,
  Meta,
  NavLink,
  Outlet,
  Scripts,
  ScrollRestoration,
  useLoaderData,
  useRouteError,
  useRouteLoaderData,
} from "react-router";
import type { Route } from "./+types/root";
import "./app.css";
import { ErrorView } from "#app/components/error-view.tsx";
import { getOptionalUser } from "#app/auth/session.server.ts";
import { readFlash } from "#app/utils/flash.server.ts";
import { getDb } from "#app/db/client.server.ts";
import { mayWrite, untilWritable, WriteLockBusy } from "#app/db/write-when-free.server.ts";
import { navigationFor } from "#app/utils/navigation.ts";
import { useNonce } from "#app/utils/nonce.ts";
import { useHydrated } from "#app/utils/use-hydrated.ts";

export const meta: Route.MetaFunction = () => [
  { title: "Thawline — a registry of ice-free dates" },
  { name: "description", content: "Radiocarbon and luminescence dates that constrain past ice sheets." },
];

/**
 * A write request waits (without holding up the server's thread) until the writer thread has let go
 * of the write lock, then runs; past 30 s it is refused with a 503 (db/write-when-free.server.ts).
 */
export const middleware: Route.MiddlewareFunction[] = [
  async ({ request }, next) => {
    if (mayWrite(request)) {
      try {
        await untilWritable(getDb());
      } catch (error) {
        if (!(error instanceof WriteLockBusy)) throw error;
        throw new Response(error.message, { status: 503, headers: { "Retry-After": "10", "Content-Type": "text/plain" } });
      }
    }
    return next();
  },
];

export async function loader({ request }: Route.LoaderArgs) {
  // Public shell: anyone may load it; it only says who is signed in.
  const user = await getOptionalUser(request);
  const { flash, clear } = await readFlash(request);
  return data(
    { user: user ? { name: user.name, email: user.email, roles: user.roles } : null, flash },
    clear ? { headers: { "Set-Cookie": clear } } : undefined,
  );
}

export function Layout({ children }: { children: React.ReactNode }) {
  const nonce = useNonce();
  const hydrated = useHydrated();
  return (
    <html lang="en">
      <head>
        <meta charSet="utf-8" />
        <meta name="viewport" content="width=device-width, initial-scale=1" />
        <link rel="icon" href="/favicon.svg" type="image/svg+xml" />
        <Meta />
        <Links />
      </head>
      {/* data-hydrated: scripts have taken over the page (browser tests wait for it). */}
      <body data-hydrated={hydrated ? "true" : undefined}>
        {children}
        <ScrollRestoration nonce={nonce} />
        <Scripts nonce={nonce} />
      </body>
    </html>
  );
}

function Shell({ children }: { children: React.ReactNode }) {
  const rootData = useRouteLoaderData<typeof loader>("root");
  const user = rootData?.user ?? null;
  const links = navigationFor(user?.roles ?? null);
  return (
    <div className="flex min-h-screen flex-col">
      <a href="#main" className="sr-only focus:not-sr-only focus:absolute focus:p-3">
        Skip to content
      </a>
      <header className="border-b border-rule bg-white/70">
        <div className="mx-auto flex max-w-7xl flex-wrap items-center gap-x-8 gap-y-2 px-5 py-3">
          <a href="/" className="flex items-center gap-2 text-ink no-underline" aria-label="Thawline home">
            <Logo />
            <span className="text-xl font-semibold tracking-tight">Thawline</span>
          </a>
          <nav aria-label="Main" className="flex flex-1 flex-wrap gap-x-5 gap-y-1">
            {links.map((l) => (
              <NavLink
                key={l.to}
                to={l.to}
                className={({ isActive }) =>
                  `no-underline ${isActive ? "font-semibold text-ink underline decoration-ice-500 decoration-2 underline-offset-8" : "text-muted hover:text-ink"}`
                }
              >
                {l.label}
              </NavLink>
            ))}
          </nav>
          <div className="flex items-center gap-3 text-sm">
            {user ? (
              <>
                <NavLink to="/account" className="text-ink no-underline" title={user.email}>
                  {user.name}
                </NavLink>
                <Form method="post" action="/sign-out">
                  <button type="submit" className="btn-quiet py-1 text-sm">
                    Sign out
                  </button>
                </Form>
              </>
            ) : (
              <NavLink to="/sign-in" className="btn-quiet py-1 text-sm">
                Sign in
              </NavLink>
            )}
          </div>
        </div>
      </header>
      <main id="main" className="mx-auto w-full max-w-7xl flex-1 px-5 py-8">
        {children}
      </main>
      <footer className="border-t border-rule py-6 text-sm text-muted">
        <div className="mx-auto max-w-7xl px-5">
          Calibrated ages depend on the curve and its version; marine ages depend on ΔR. Grades are expert judgements, not
          measurements. For research use.
        </div>
      </footer>
    </div>
  );
}

function Logo() {
  // A melting margin: three contour lines retreating up a slope.
  return (
    <svg width="28" height="28" viewBox="0 0 28 28" aria-hidden="true">
      <rect width="28" height="28" rx="5" fill="#173a56" />
      <path d="M4 20 C9 17, 13 21, 24 15" stroke="#dcebf4" strokeWidth="2" fill="none" />
      <path d="M4 15 C9 12, 14 16, 24 9" stroke="#8bbad6" strokeWidth="2" fill="none" />
      <path d="M4 10 C9 7, 14 10, 24 4" stroke="#3a7fab" strokeWidth="2" fill="none" />
    </svg>
  );
}

function FlashBanner() {
  const { flash } = useLoaderData<typeof loader>();
  if (!flash) return null;
  const tone = flash.kind === "error" ? "border-conflict bg-conflict-bg text-conflict" : "border-ice-300 bg-ice-50 text-ink";
  return (
    <div role="status" className={`mb-6 rounded border px-4 py-2 ${tone}`}>
      {flash.message}
    </div>
  );
}

export default function App() {
  return (
    <Shell>
      <FlashBanner />
      <Outlet />
    </Shell>
  );
}

export function ErrorBoundary() {
  const error = useRouteError();
  // The shell needs root data, which is missing when the root loader itself failed.
  const rootData = useRouteLoaderData<typeof loader>("root");
  if (!rootData && !isRouteErrorResponse(error)) return <ErrorView error={error} />;
  return (
    <Shell>
      <ErrorView error={error} />
    </Shell>
  );
}
