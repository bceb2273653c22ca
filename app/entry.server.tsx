import { PassThrough } from "node:stream";
import type { AppLoadContext, EntryContext, HandleErrorFunction } from "react-router";
import { isRouteErrorResponse, ServerRouter } from "react-router";
import { createReadableStreamFromReadable } from "@react-router/node";
import { isbot } from "isbot";
import { renderToPipeableStream, type RenderToPipeableStreamOptions } from "react-dom/server";
import { NonceContext } from "#app/utils/nonce.ts";
import { logError } from "#app/http/request-log.js";
import { warmWorkers } from "#app/workers/pool.server.ts";
import { keepRender, keptRender, renderKey, settledText } from "#app/utils/page-memo.server.ts";
import { rememberLane } from "#app/utils/page-lane.server.ts";
import { getOptionalUser } from "#app/auth/session.server.ts";

/** Called once by server.js when the production server starts (see models/startup.server.ts). */
export { resumeBackgroundWork as onServerStart } from "#app/models/startup.server.ts";
/** Used by server.js (app/http/page-lane.js) to answer a kept page before React Router runs. */
export { laneKey, laneAnswer } from "#app/utils/page-lane.server.ts";

/*
 * React Router's default Node entry, plus the CSP nonce: server.js makes one per request and
 * passes it in the load context; every inline script React or React Router writes carries it.
 */

export const streamTimeout = 5_000;

// Worker threads load the application's modules once, at start, not on the first upload or commit.
if (process.env.NODE_ENV === "production") warmWorkers();

export default function handleRequest(
  request: Request,
  responseStatusCode: number,
  responseHeaders: Headers,
  routerContext: EntryContext,
  loadContext: AppLoadContext,
) {
  if (request.method.toUpperCase() === "HEAD") {
    return new Response(null, { status: responseStatusCode, headers: responseHeaders });
  }
  const { cspNonce: nonce = "", laneKey } = (loadContext ?? {}) as { cspNonce?: string; laneKey?: string };
  if (!routerContext.isSpaMode && nonce && routerContext.serverHandoffStream) {
    return keptOrWhole(request, responseStatusCode, responseHeaders, routerContext, nonce, laneKey).then(
      (answer) => answer ?? streamed(request, responseStatusCode, responseHeaders, routerContext, nonce),
    );
  }
  return streamed(request, responseStatusCode, responseHeaders, routerContext, nonce);
}

/**
 * The same page from the same loader data: the kept HTML with this request's nonce written in
 * (page-memo.server.ts); a page that may be kept but is not yet is rendered whole and kept. Null
 * when this render may not be kept (deferred data, an error, a status other than 200).
 */
async function keptOrWhole(
  request: Request,
  responseStatusCode: number,
  responseHeaders: Headers,
  routerContext: EntryContext,
  nonce: string,
  laneKey: string | undefined,
): Promise<Response | null> {
  const { text, rest } = await settledText(routerContext.serverHandoffStream!);
  routerContext.serverHandoffStream = rest;
  const state = routerContext.staticHandlerContext;
  const key = renderKey({
    url: request.url,
    method: request.method.toUpperCase(),
    statusCode: responseStatusCode,
    actionData: state.actionData,
    errors: state.errors,
    nonce,
    dataText: text,
  });
  if (!key) return null;
  responseHeaders.set("Content-Type", "text/html");
  const kept = keptRender(key, nonce);
  if (kept !== null) {
    void rest.cancel().catch(() => {});
    if (laneKey) rememberLane(laneKey, key, routerContext, responseHeaders, await getOptionalUser(request));
    return new Response(kept, { headers: responseHeaders, status: responseStatusCode });
  }
  const html = await renderWhole(routerContext, request.url, nonce);
  keepRender(key, html, nonce);
  if (laneKey) rememberLane(laneKey, key, routerContext, responseHeaders, await getOptionalUser(request));
  return new Response(html as Uint8Array<ArrayBuffer>, {
    headers: responseHeaders,
    status: responseStatusCode,
  });
}

/** React Router's default streaming render. */
function streamed(
  request: Request,
  responseStatusCode: number,
  responseHeaders: Headers,
  routerContext: EntryContext,
  nonce: string,
): Promise<Response> {
  return new Promise((resolve, reject) => {
    let shellRendered = false;
    const userAgent = request.headers.get("user-agent");
    const readyOption: keyof RenderToPipeableStreamOptions =
      (userAgent && isbot(userAgent)) || routerContext.isSpaMode ? "onAllReady" : "onShellReady";
    let timeoutId: ReturnType<typeof setTimeout> | undefined = setTimeout(() => abort(), streamTimeout + 1000);

    const { pipe, abort } = renderToPipeableStream(
      <NonceContext.Provider value={nonce}>
        <ServerRouter context={routerContext} url={request.url} nonce={nonce || undefined} />
      </NonceContext.Provider>,
      {
        nonce: nonce || undefined,
        [readyOption]() {
          shellRendered = true;
          const body = new PassThrough({
            final(callback) {
              clearTimeout(timeoutId);
              timeoutId = undefined;
              callback();
            },
          });
          responseHeaders.set("Content-Type", "text/html");
          pipe(body);
          resolve(new Response(createReadableStreamFromReadable(body), { headers: responseHeaders, status: responseStatusCode }));
        },
        onShellError(error: unknown) {
          reject(error);
        },
        onError(error: unknown) {
          responseStatusCode = 500;
          if (shellRendered) logError(error, { where: "render" });
        },
      },
    );
  });
}

/** The whole page as UTF-8 bytes (every Suspense boundary resolved), for a render that will be kept. */
function renderWhole(routerContext: EntryContext, url: string, nonce: string): Promise<Buffer> {
  return new Promise((resolve, reject) => {
    const chunks: Buffer[] = [];
    const sink = new PassThrough();
    sink.on("data", (chunk: Buffer) => chunks.push(chunk));
    sink.on("end", () => {
      clearTimeout(timeoutId);
      resolve(Buffer.concat(chunks));
    });
    sink.on("error", reject);
    const timeoutId = setTimeout(() => abort(), streamTimeout + 1000);
    const { pipe, abort } = renderToPipeableStream(
      <NonceContext.Provider value={nonce}>
        <ServerRouter context={routerContext} url={url} nonce={nonce} />
      </NonceContext.Provider>,
      {
        nonce,
        onAllReady() {
          pipe(sink);
        },
        onShellError(error: unknown) {
          clearTimeout(timeoutId);
          reject(error);
        },
        onError(error: unknown) {
          clearTimeout(timeoutId);
          reject(error);
        },
      },
    );
  });
}

/** Real errors only, with their stack: a 4xx answer thrown on purpose or an aborted request is not one. */
export const handleError: HandleErrorFunction = (error, { request }) => {
  if (request.signal.aborted) return;
  if (isRouteErrorResponse(error) && error.status < 500) return;
  if (error instanceof Error && error.name === "BodyTooLarge") return;
  logError(error, { method: request.method, path: new URL(request.url).pathname });
};
