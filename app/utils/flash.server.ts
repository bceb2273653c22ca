import { createCookie, redirect } from "react-router";
import { env } from "#app/utils/env.server.ts";

export type Flash = { kind: "success" | "info" | "error"; message: string };

const flashCookie = createCookie("thawline_flash", {
  httpOnly: true,
  sameSite: "lax",
  path: "/",
  secrets: [env().SESSION_SECRET],
  maxAge: 60,
});

/** Redirect after a successful change, carrying a message shown once on the next page. */
export async function redirectWithFlash(to: string, flash: Flash, init: { headers?: HeadersInit } = {}): Promise<Response> {
  const headers = new Headers(init.headers);
  headers.append("Set-Cookie", await flashCookie.serialize(flash));
  return redirect(to, { headers });
}

/** Reads the flash and returns the header that clears it. */
export async function readFlash(request: Request): Promise<{ flash: Flash | null; clear: string | null }> {
  const value = await flashCookie.parse(request.headers.get("Cookie"));
  if (!value || typeof value !== "object") return { flash: null, clear: null };
  return { flash: value as Flash, clear: await flashCookie.serialize("", { maxAge: 0 }) };
}
