// Helpers for tests that call loaders and actions directly with real Request objects.
import type { Role } from "#app/db/schema.ts";
import { getDb } from "#app/db/client.server.ts";
import { createSession } from "#app/auth/session.server.ts";
import { createUser } from "#app/models/accounts/users.server.ts";

export const ORIGIN = "http://localhost";

/** Keeps cookies between requests the way a browser would (name → value; Max-Age=0 deletes). */
export class CookieJar {
  private cookies = new Map<string, string>();

  take(response: Response): this {
    for (const line of response.headers.getSetCookie()) {
      const [pair, ...attrs] = line.split(";");
      const eq = pair!.indexOf("=");
      const name = pair!.slice(0, eq).trim();
      const value = pair!.slice(eq + 1).trim();
      const expired = attrs.some((a) => /^\s*max-age=0\s*$/i.test(a)) || value === "" || value === '""';
      if (expired) this.cookies.delete(name);
      else this.cookies.set(name, value);
    }
    return this;
  }

  get(name: string): string | undefined {
    return this.cookies.get(name);
  }

  set(name: string, value: string): this {
    this.cookies.set(name, value);
    return this;
  }

  names(): string[] {
    return [...this.cookies.keys()].sort();
  }

  header(): string {
    return [...this.cookies].map(([k, v]) => `${k}=${v}`).join("; ");
  }
}

export function get(path: string, init: { cookie?: string; headers?: Record<string, string> } = {}): Request {
  const headers = new Headers(init.headers);
  if (init.cookie) headers.set("Cookie", init.cookie);
  return new Request(`${ORIGIN}${path}`, { headers });
}

export function post(
  path: string,
  form: Record<string, string | string[]>,
  init: { cookie?: string; headers?: Record<string, string> } = {},
): Request {
  const body = new FormData();
  for (const [k, v] of Object.entries(form)) for (const one of Array.isArray(v) ? v : [v]) body.append(k, one);
  const headers = new Headers(init.headers);
  if (init.cookie) headers.set("Cookie", init.cookie);
  return new Request(`${ORIGIN}${path}`, { method: "POST", body, headers });
}

export type Outcome = { status: number; location: string | null; headers: Headers; data: unknown };

/**
 * Runs a loader or action and describes its answer the same way whether it returned or threw a
 * Response, returned `data(...)`, or returned plain data.
 */
export async function run(fn: () => unknown): Promise<Outcome> {
  let value: unknown;
  try {
    value = await fn();
  } catch (thrown) {
    if (thrown instanceof Response) value = thrown;
    else throw thrown;
  }
  if (value instanceof Response) {
    const type = value.headers.get("Content-Type") ?? "";
    const body = type.includes("json") ? await value.json() : await value.text();
    return { status: value.status, location: value.headers.get("Location"), headers: value.headers, data: body };
  }
  if (value && typeof value === "object" && (value as { type?: string }).type === "DataWithResponseInit") {
    const d = value as { data: unknown; init: ResponseInit | null };
    return { status: d.init?.status ?? 200, location: null, headers: new Headers(d.init?.headers), data: d.data };
  }
  return { status: 200, location: null, headers: new Headers(), data: value };
}

/** Route module functions are typed for the framework; tests hand them just these arguments. */
export function args(request: Request, params: Record<string, string> = {}) {
  return { request, params, context: {} } as any;
}

let counter = 0;
/** A fresh person with these roles and a signed-in session cookie ("name=value"). */
export async function personWithSession(roles: Role[], options: { email?: string; name?: string } = {}) {
  counter += 1;
  const email = options.email ?? `person${counter}-${roles.join("-") || "none"}@example.org`;
  const id = createUser(getDb(), { email, name: options.name ?? `Test Person ${counter}`, roles });
  const session = await createSession(id, new Request(`${ORIGIN}/`, { headers: { "User-Agent": "test" } }));
  return { id, email, cookie: session.cookie.split(";")[0]!, sessionId: session.id };
}
