import crypto from "node:crypto";
import { createCookie, redirect } from "react-router";
import { Authenticator } from "remix-auth";
import { TOTPStrategy } from "remix-auth-totp";
import { getDb } from "#app/db/client.server.ts";
import { clientAddress, createSession } from "#app/auth/session.server.ts";
import { audit } from "#app/models/audit.server.ts";
import { findActiveUserByEmail, findUserByEmail, normalizeEmail, recordSignIn } from "#app/models/accounts/users.server.ts";
import { sendEmail } from "#app/mail/send.server.ts";
import { signInMessage } from "#app/mail/templates.server.ts";
import { isCodeSpent, markCodeSpent } from "#app/auth/spent-codes.server.ts";
import { writeWhenFree } from "#app/db/write-when-free.server.ts";
import { exhaust, hit } from "#app/utils/rate-limit.server.ts";
import { env } from "#app/utils/env.server.ts";

/*
 * Sign-in by e-mailed one-time code or magic link, on top of remix-auth-totp v4. That library
 * keeps the pending sign-in in a `_totp` cookie (the address in plain text and the encrypted code
 * secret) and always ends `authenticate` in a redirect. Four things are added around it here:
 *  - the address in `_totp` is not authenticated by the library, so a signed cookie of ours binds
 *    the address to the encrypted secret; a sign-in whose address was swapped is refused;
 *  - the library does not count wrong typed codes, so tries per code are counted (in memory), and a
 *    used code is recorded in the database (auth/spent-codes.server.ts) so it stays used after a restart;
 *  - code requests are rate-limited per address and per client address;
 *  - `verify` creates the session row, and its cookie is attached to the final redirect here.
 */

export const CODE_MINUTES = 10;
export const MAX_TRIES_PER_CODE = 5;
export const CODE_REQUESTS_PER_ADDRESS = { limit: 5, windowMs: 15 * 60 * 1000 };
export const CODE_REQUESTS_PER_CLIENT = { limit: 30, windowMs: 15 * 60 * 1000 };
export const MAGIC_LINK_PATH = "/sign-in/link";
const SIGN_IN_PATH = "/sign-in";
const TOTP_COOKIE = "_totp";

export const SIGN_IN_ERRORS = {
  requiredEmail: "Enter your e-mail address.",
  invalidEmail: "Enter an e-mail address such as name@example.org.",
  invalidTotp: "That code is not right. Check it and try again, or ask for a new code.",
  expiredTotp: "That code has expired. Ask for a new one.",
  rateLimitExceeded: "Too many wrong tries for this code. Ask for a new one.",
  missingSessionEmail: "This browser has no sign-in in progress. Ask for a code here first.",
  missingSessionTotp: "This browser has no sign-in in progress. Ask for a code here first.",
} as const;

function secureCookies(): boolean {
  return env().SECURE_COOKIES ?? env().NODE_ENV === "production";
}

/** Our own record of the pending sign-in: which address the encrypted code secret was made for. */
type Pending = { email: string; secretHash: string; redirectTo: string };

const pendingCookie = createCookie("thawline_sign_in", {
  httpOnly: true,
  sameSite: "lax",
  path: "/",
  get secure() {
    return secureCookies();
  },
  secrets: [env().SESSION_SECRET],
  maxAge: CODE_MINUTES * 60,
});

const sha256 = (value: string) => crypto.createHash("sha256").update(value, "utf8").digest("hex");

// Sessions created by `verify`, for the caller to attach to the redirect. remix-auth hands the
// strategy a copy of the request, so they are keyed by a nonce header set on our inner request.
const NONCE_HEADER = "X-Thawline-Sign-In-Nonce";
const createdSessions = new Map<string, string>();

let authenticator: Authenticator<number> | undefined;

function getAuthenticator(): Authenticator<number> {
  if (authenticator) return authenticator;
  const strategy = new TOTPStrategy<number>(
    {
      // The library wants exactly 64 hex characters; derive them from the configured secret.
      secret: sha256(env().TOTP_SECRET),
      totpGeneration: {
        period: CODE_MINUTES * 60,
        digits: 6,
        // Upper case without look-alikes (0/O, 1/I), so codes survive being read and typed.
        charSet: "ABCDEFGHJKLMNPQRSTUVWXYZ23456789",
        maxAttempts: MAX_TRIES_PER_CODE,
      },
      cookieOptions: { ...(secureCookies() ? { secure: true as const } : {}), maxAge: CODE_MINUTES * 60 },
      magicLinkPath: MAGIC_LINK_PATH,
      customErrors: SIGN_IN_ERRORS,
      emailSentRedirect: SIGN_IN_PATH,
      successRedirect: "/",
      failureRedirect: SIGN_IN_PATH,
      sendTOTP: async ({ email, code, magicLink }) => {
        // Unknown or deactivated addresses get the same answer and no mail.
        const user = findActiveUserByEmail(getDb(), email);
        if (!user) return;
        await sendEmail({
          to: user.email,
          ...signInMessage({ code, link: publicLink(magicLink), minutes: CODE_MINUTES }),
          tags: [{ name: "kind", value: "sign_in" }],
        });
      },
    },
    async ({ email, request }) => {
      const db = getDb();
      const user = findActiveUserByEmail(db, email);
      if (!user) throw new Error(SIGN_IN_ERRORS.invalidTotp);
      const session = await createSession(user.id, request);
      await writeWhenFree(db, () =>
        recordSignIn(db, user.id, { method: request.method === "GET" ? "link" : "code", ip: clientAddress(request) }),
      );
      const nonce = request.headers.get(NONCE_HEADER);
      if (nonce) createdSessions.set(nonce, session.cookie);
      return user.id;
    },
  );
  authenticator = new Authenticator<number>();
  authenticator.use(strategy);
  return authenticator;
}

/** Links in mail use APP_URL when it is set, never a host name taken from the request alone. */
function publicLink(link: string): string {
  const appUrl = env().APP_URL;
  if (!appUrl) return link;
  const url = new URL(link);
  const base = new URL(appUrl);
  url.protocol = base.protocol;
  url.host = base.host;
  return url.toString();
}

/**
 * A path on this site made only of the characters a URL may carry unescaped (RFC 3986), so it can
 * go into a Location header as it is. Anything else (a tab, a newline, a non-Latin letter, a
 * scheme, "//host", a backslash) is not a usable destination.
 */
const SAME_SITE_PATH = /^\/(?![/\\])[A-Za-z0-9\-._~!$&'()*+,;=:@/?#%]*$/;

/** Only same-site paths; never back into the sign-in pages themselves. Anything else gives the fallback. */
export function safeRedirect(to: unknown, fallback = "/"): string {
  if (typeof to !== "string" || to.length > 2000 || !SAME_SITE_PATH.test(to)) return fallback;
  let resolved: URL;
  try {
    resolved = new URL(to, "http://thawline.invalid");
  } catch {
    return fallback;
  }
  if (resolved.origin !== "http://thawline.invalid") return fallback;
  if (resolved.pathname.startsWith(SIGN_IN_PATH) || resolved.pathname.startsWith("/sign-out")) return fallback;
  return to;
}

function cookieValue(cookieHeader: string | null, name: string): string | null {
  if (!cookieHeader) return null;
  for (const part of cookieHeader.split(";")) {
    const eq = part.indexOf("=");
    if (eq < 0) continue;
    if (part.slice(0, eq).trim() !== name) continue;
    let value = part.slice(eq + 1).trim();
    if (value.startsWith('"') && value.endsWith('"')) value = value.slice(1, -1).replace(/\\(.)/g, "$1");
    return value;
  }
  return null;
}

type TotpState = { email: string | null; jwe: string | null; error: string | null };

function parseTotpValue(value: string | null): TotpState {
  if (!value) return { email: null, jwe: null, error: null };
  const params = new URLSearchParams(value);
  let jwe: string | null = null;
  try {
    const totp = JSON.parse(params.get("totp") ?? "null") as { jwe?: unknown } | null;
    if (totp && typeof totp.jwe === "string") jwe = totp.jwe;
  } catch {
    jwe = null;
  }
  return { email: params.get("email") || null, jwe, error: params.get("error") || null };
}

function totpStateOfRequest(request: Request): TotpState {
  return parseTotpValue(cookieValue(request.headers.get("Cookie"), TOTP_COOKIE));
}

function totpStateOfResponse(response: Response): TotpState {
  const last = response.headers
    .getSetCookie()
    .filter((c) => c.startsWith(`${TOTP_COOKIE}=`))
    .at(-1);
  if (!last) return { email: null, jwe: null, error: null };
  return parseTotpValue(cookieValue(last.split(";")[0]!, TOTP_COOKIE));
}

async function readPending(request: Request): Promise<Pending | null> {
  const value = await pendingCookie.parse(request.headers.get("Cookie"));
  if (!value || typeof value !== "object") return null;
  const p = value as Partial<Pending>;
  if (typeof p.email !== "string" || typeof p.secretHash !== "string") return null;
  return { email: p.email, secretHash: p.secretHash, redirectTo: safeRedirect(p.redirectTo) };
}

/** Where the sign-in page stands for this browser. */
export async function signInState(request: Request) {
  const totp = totpStateOfRequest(request);
  const pending = await readPending(request);
  const inProgress =
    !!totp.email && !!totp.jwe && !!pending && pending.email === totp.email && pending.secretHash === sha256(totp.jwe);
  return { email: inProgress ? totp.email : null, error: totp.error };
}

function clearingCookies(): Promise<string[]> {
  return Promise.all([
    Promise.resolve(`${TOTP_COOKIE}=; Path=/; Max-Age=0; HttpOnly; SameSite=Lax${secureCookies() ? "; Secure" : ""}`),
    pendingCookie.serialize("", { maxAge: 0 }),
  ]);
}

/** Forget the sign-in in progress (to use another address). */
export async function restartSignIn(to = SIGN_IN_PATH): Promise<Response> {
  const headers = new Headers();
  for (const c of await clearingCookies()) headers.append("Set-Cookie", c);
  return redirect(to, { headers });
}

export type SignInRefusal = { error: string; status: number };

function innerRequest(request: Request, init: { method: "GET" | "POST"; url?: string; form?: Record<string, string> }) {
  // Only these headers pass: the library needs the cookies, the session row the browser and address.
  const headers = new Headers({ [NONCE_HEADER]: crypto.randomBytes(16).toString("hex") });
  for (const name of ["Cookie", "User-Agent", "X-Thawline-Client"]) {
    const value = request.headers.get(name);
    if (value) headers.set(name, value);
  }
  let body: FormData | undefined;
  if (init.form) {
    body = new FormData();
    for (const [k, v] of Object.entries(init.form)) body.set(k, v);
  }
  return new Request(init.url ?? request.url, { method: init.method, headers, body });
}

async function runAuthenticate(inner: Request): Promise<Response> {
  try {
    await getAuthenticator().authenticate("TOTP", inner);
  } catch (thrown) {
    if (thrown instanceof Response) return thrown;
    throw thrown;
  }
  // authenticate always throws a redirect; reaching here would be a library change.
  throw new Error("The sign-in library returned without a redirect.");
}

function retryWords(seconds: number): string {
  const minutes = Math.ceil(seconds / 60);
  return minutes <= 1 ? "in a minute" : `in ${minutes} minutes`;
}

/** Step 1: mail a code and link to the address (if it belongs to an active person). */
export async function requestCode(
  request: Request,
  input: { email: string; redirectTo?: string | null },
): Promise<Response | SignInRefusal> {
  const email = normalizeEmail(input.email);
  const ip = clientAddress(request);
  const factor = env().SIGN_IN_RATE_LIMIT_FACTOR;
  const perClient = hit(
    `sign-in:client:${ip}`,
    Math.round(CODE_REQUESTS_PER_CLIENT.limit * factor),
    CODE_REQUESTS_PER_CLIENT.windowMs,
  );
  const perAddress = hit(
    `sign-in:address:${email}`,
    Math.round(CODE_REQUESTS_PER_ADDRESS.limit * factor),
    CODE_REQUESTS_PER_ADDRESS.windowMs,
  );
  if (!perClient.allowed || !perAddress.allowed) {
    const wait = Math.max(perClient.retryAfterS, perAddress.retryAfterS);
    return { error: `Too many sign-in codes have been asked for. Try again ${retryWords(wait)}.`, status: 429 };
  }

  const response = await runAuthenticate(innerRequest(request, { method: "POST", form: { email } }));
  const totp = totpStateOfResponse(response);
  if (response.headers.get("Location") === SIGN_IN_PATH && totp.jwe && totp.email && !totp.error) {
    const pending: Pending = {
      email: totp.email,
      secretHash: sha256(totp.jwe),
      redirectTo: safeRedirect(input.redirectTo),
    };
    response.headers.append("Set-Cookie", await pendingCookie.serialize(pending));
  }
  return response;
}

async function failedAttempt(request: Request, email: string | null, reason: string) {
  const db = getDb();
  const user = email ? findUserByEmail(db, email) : null;
  await writeWhenFree(db, () =>
    audit(db, {
      actorId: null,
      action: "auth.sign_in_failed",
      entity: "user",
      entityId: user?.id ?? null,
      after: { email, reason },
      ip: clientAddress(request),
    }),
  );
}

/** Step 2: the typed code, or the token from the magic link. */
export async function completeSignIn(
  request: Request,
  input: { code: string } | { linkToken: string },
): Promise<Response | SignInRefusal> {
  const totp = totpStateOfRequest(request);
  const pending = await readPending(request);
  if (!totp.email || !totp.jwe || !pending) {
    return { error: SIGN_IN_ERRORS.missingSessionTotp, status: 400 };
  }
  if (pending.email !== totp.email || pending.secretHash !== sha256(totp.jwe)) {
    // The pending sign-in cookie was altered: the address no longer matches the code it was made for.
    await failedAttempt(request, totp.email, "tampered");
    return restartSignIn();
  }

  const triesKey = `sign-in:code:${pending.secretHash}`;
  const codeMs = CODE_MINUTES * 60 * 1000;
  const tries = hit(triesKey, MAX_TRIES_PER_CODE, codeMs);
  if (!tries.allowed || isCodeSpent(getDb(), pending.secretHash, codeMs)) {
    await failedAttempt(request, totp.email, "too many tries");
    // The code is spent: drop it from this browser and say why.
    const headers = new Headers();
    headers.append("Set-Cookie", await pendingCookie.serialize("", { maxAge: 0 }));
    return redirectWithError(SIGN_IN_ERRORS.rateLimitExceeded, headers);
  }

  const inner =
    "code" in input
      ? innerRequest(request, { method: "POST", form: { code: normalizeCode(input.code) } })
      : innerRequest(request, {
          method: "GET",
          url: `${new URL(request.url).origin}${MAGIC_LINK_PATH}?t=${encodeURIComponent(input.linkToken)}`,
        });
  const nonce = inner.headers.get(NONCE_HEADER)!;
  let sessionCookie: string | undefined;
  let response: Response;
  try {
    response = await runAuthenticate(inner);
    sessionCookie = createdSessions.get(nonce);
  } finally {
    createdSessions.delete(nonce);
  }
  if (!sessionCookie) {
    await failedAttempt(request, totp.email, totpStateOfResponse(response).error ?? "refused");
    return response;
  }

  // The code is stateless in the library (its secret travels in the cookie); spend it here so a
  // copied cookie and code cannot sign in a second time (also after a restart).
  exhaust(triesKey, codeMs);
  await markCodeSpent(getDb(), pending.secretHash);
  const headers = new Headers();
  for (const c of response.headers.getSetCookie()) headers.append("Set-Cookie", c);
  headers.append("Set-Cookie", await pendingCookie.serialize("", { maxAge: 0 }));
  headers.append("Set-Cookie", sessionCookie);
  return redirect(pending.redirectTo, { headers });
}

/** The library shows errors kept in its cookie; ours travel the same way, so the page reads one place. */
function redirectWithError(message: string, headers: Headers): Response {
  const params = new URLSearchParams({ error: message });
  headers.append(
    "Set-Cookie",
    `${TOTP_COOKIE}=${params.toString()}; Path=/; Max-Age=${CODE_MINUTES * 60}; HttpOnly; SameSite=Lax${secureCookies() ? "; Secure" : ""}`,
  );
  return redirect(SIGN_IN_PATH, { headers });
}

export function normalizeCode(code: string): string {
  return code.replace(/[\s-]+/g, "").toUpperCase();
}
