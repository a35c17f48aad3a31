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
  };
}
