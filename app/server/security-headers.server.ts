import { secureCookies } from "./env.server";

// One year, every subdomain (ASVS 5.0 3.4.1 asks for at least a year and, at level 2, subdomains too).
const HSTS = "max-age=31536000; includeSubDomains";

/**
 * Only when the app is served over https (Secure cookies): a plain-http local demo that sent HSTS would make
 * the browser refuse that host over http for a year.
 */
export function transportHeaders(): Record<string, string> {
  return secureCookies() ? { "Strict-Transport-Security": HSTS } : {};
}

/**
 * Headers for every HTML document. Scripts run only with this response's nonce (no 'unsafe-inline' for scripts);
 * styles allow inline because the node editor positions nodes with style attributes. In development Vite's
 * client needs a websocket and eval-free inline modules, so the policy is relaxed there.
 */
export function securityHeaders(nonce: string, dev = false): Record<string, string> {
  const csp = [
    "default-src 'self'",
    `script-src 'self' 'nonce-${nonce}'${dev ? " 'unsafe-inline'" : ""}`,
    "style-src 'self' 'unsafe-inline'",
    "img-src 'self' data: blob:",
    "font-src 'self'",
    `connect-src 'self'${dev ? " ws: wss:" : ""}`,
    "form-action 'self'",
    "frame-ancestors 'none'",
    "base-uri 'none'",
    "object-src 'none'",
  ].join("; ");
  return {
    "Content-Security-Policy": dev ? csp.replace(`'nonce-${nonce}'`, "") : csp,
    "Referrer-Policy": "strict-origin-when-cross-origin",
    "X-Content-Type-Options": "nosniff",
    "X-Frame-Options": "DENY",
    "Permissions-Policy": "camera=(self), microphone=(), geolocation=()",
    ...transportHeaders(),
  };
}

/** Files, exports, JSON and redirects load nothing and are never framed. */
export const RESOURCE_CSP = "default-src 'none'; frame-ancestors 'none'";

function applyResourceHeaders(headers: Headers) {
  headers.set("X-Content-Type-Options", "nosniff");
  const csp = headers.get("Content-Security-Policy");
  // A route may tighten the policy (e.g. `sandbox` for stored uploads); it is never loosened, and never framed.
  if (!csp) headers.set("Content-Security-Policy", RESOURCE_CSP);
  else if (!/frame-ancestors/.test(csp))
    headers.set("Content-Security-Policy", `${csp}; frame-ancestors 'none'`);
  if (!headers.has("Referrer-Policy")) headers.set("Referrer-Policy", "no-referrer");
  for (const [k, v] of Object.entries(transportHeaders())) headers.set(k, v);
}

type WithInit = { type: "DataWithResponseInit"; init: ResponseInit | null };
const isDataWithInit = (v: unknown): v is WithInit =>
  typeof v === "object" && v !== null && (v as { type?: unknown }).type === "DataWithResponseInit";

function withHeaders<T>(out: T): T {
  if (out instanceof Response) {
    try {
      applyResourceHeaders(out.headers);
      return out;
    } catch {
      // Responses such as Response.redirect() have immutable headers: copy them into one that can change.
      const copy = new Response(out.body, out);
      applyResourceHeaders(copy.headers);
      return copy as T;
    }
  }
  if (isDataWithInit(out)) {
    const headers = new Headers(out.init?.headers);
    applyResourceHeaders(headers);
    out.init = { ...out.init, headers };
  }
  return out;
}

/**
 * Resource routes (files, exports, JSON, redirects) never pass through entry.server, so their loaders and
 * actions are wrapped in this: whatever they return or throw leaves with nosniff, a policy that loads nothing
 * and forbids framing, and HSTS behind https. tests/integration/resource-headers.test.ts walks every one.
 */
export function withResourceHeaders<F extends (...args: never[]) => unknown>(
  fn: F,
): (...args: Parameters<F>) => Promise<Awaited<ReturnType<F>>> {
  return async (...args): Promise<Awaited<ReturnType<F>>> => {
    let out: Awaited<ReturnType<F>>;
    try {
      out = (await fn(...args)) as Awaited<ReturnType<F>>;
    } catch (thrown) {
      throw withHeaders(thrown);
    }
    return withHeaders(out);
  };
}
