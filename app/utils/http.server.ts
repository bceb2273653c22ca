/** Throws a 404 for a missing record, so loaders read straight. */
export function notFound(message = "Not found"): never {
  throw new Response(message, { status: 404, statusText: "Not Found" });
}

export function badRequest(message: string): never {
  throw new Response(message, { status: 400, statusText: "Bad Request" });
}

export function json(data: unknown, init: ResponseInit = {}): Response {
  const headers = new Headers(init.headers);
  if (!headers.has("Content-Type")) headers.set("Content-Type", "application/json; charset=utf-8");
  return new Response(JSON.stringify(data), { ...init, headers });
}
