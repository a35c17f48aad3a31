import { PassThrough } from "node:stream";
import { createReadableStreamFromReadable } from "@react-router/node";
import { isbot } from "isbot";
import type { RenderToPipeableStreamOptions } from "react-dom/server";
import { renderToPipeableStream } from "react-dom/server";
import type { AppLoadContext, EntryContext } from "react-router";
import { ServerRouter } from "react-router";
import { NonceProvider } from "./components/nonce";
import { securityHeaders, transportHeaders } from "./server/security-headers.server";

export const streamTimeout = 5_000;

// For server.mjs: ends the insights read threads before the process exits (decision record 010).
export { closeReportThreads } from "~/server/read-thread.server";

/** Client navigations fetch `.data` and skip handleRequest: they get nosniff and, behind https, HSTS here. */
export function handleDataRequest(response: Response) {
  response.headers.set("X-Content-Type-Options", "nosniff");
  for (const [k, v] of Object.entries(transportHeaders())) response.headers.set(k, v);
  return response;
}

export default function handleRequest(
  request: Request,
  responseStatusCode: number,
  responseHeaders: Headers,
  routerContext: EntryContext,
  loadContext: AppLoadContext,
) {
  // A fresh nonce per document lets the hydration scripts run under a CSP without 'unsafe-inline'.
  const nonce =
    (loadContext as { cspNonce?: string } | undefined)?.cspNonce ?? crypto.randomUUID().replaceAll("-", "");
  for (const [k, v] of Object.entries(securityHeaders(nonce, import.meta.env.DEV))) responseHeaders.set(k, v);

  if (request.method.toUpperCase() === "HEAD") {
    return new Response(null, { status: responseStatusCode, headers: responseHeaders });
  }

  return new Promise((resolve, reject) => {
    let shellRendered = false;
    const userAgent = request.headers.get("user-agent");
    const readyOption: keyof RenderToPipeableStreamOptions =
      (userAgent && isbot(userAgent)) || routerContext.isSpaMode ? "onAllReady" : "onShellReady";
    let timeoutId: ReturnType<typeof setTimeout> | undefined = setTimeout(
      () => abort(),
      streamTimeout + 1000,
    );

    const { pipe, abort } = renderToPipeableStream(
      <NonceProvider value={nonce}>
        <ServerRouter context={routerContext} url={request.url} nonce={nonce} />
      </NonceProvider>,
      {
        nonce,
        [readyOption]() {
          shellRendered = true;
          const body = new PassThrough({
            final(callback) {
              clearTimeout(timeoutId);
              timeoutId = undefined;
              callback();
            },
          });
          const stream = createReadableStreamFromReadable(body);
          responseHeaders.set("Content-Type", "text/html");
          pipe(body);
          resolve(new Response(stream, { headers: responseHeaders, status: responseStatusCode }));
        },
        onShellError(error: unknown) {
          reject(error);
        },
        onError(error: unknown) {
          responseStatusCode = 500;
          if (shellRendered) console.error(error);
        },
      },
    );
  });
}
