const refuse = () => new Response("Cross-site requests are not accepted here.", { status: 403 });

/**
 * React Router refuses cross-origin posts to page routes, but not to resource routes: those call this first.
 * Browsers send Origin on cross-site POSTs, and Sec-Fetch-Site where supported; either naming another site
 * is refused. Requests with neither (scripts with an API token, server-side tests) pass.
 */
export function assertSameOrigin(request: Request) {
  const site = request.headers.get("Sec-Fetch-Site");
  if (site && site !== "same-origin" && site !== "none") throw refuse();
  const origin = request.headers.get("Origin");
  if (!origin) return;
  if (origin === "null") throw refuse();
  let host: string;
  try {
    host = new URL(origin).host;
  } catch {
    throw refuse();
  }
  if (host !== new URL(request.url).host && host !== request.headers.get("Host")) throw refuse();
}
