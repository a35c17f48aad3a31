// Builds real Request objects for calling route loaders and actions directly, as the framework would.
const ORIGIN = "http://railwise.test";

export function cookieFrom(response: Response, name = "rw_session"): string | null {
  const all = response.headers.getSetCookie?.() ?? [];
  for (const c of all) {
    const [pair] = c.split(";");
    const [k, v] = pair.split("=");
    if (k === name) return `${k}=${v}`;
  }
  return null;
}

export function formRequest(pathname: string, fields: Record<string, string>, cookie?: string | null) {
  const body = new URLSearchParams(fields);
  return new Request(ORIGIN + pathname, {
    method: "POST",
    body,
    headers: { "Content-Type": "application/x-www-form-urlencoded", ...(cookie ? { Cookie: cookie } : {}) },
  });
}

export function getRequest(pathname: string, cookie?: string | null) {
  return new Request(ORIGIN + pathname, { headers: cookie ? { Cookie: cookie } : {} });
}

type Args = { request: Request; params?: Record<string, string>; context?: unknown };
// biome-ignore lint/suspicious/noExplicitAny: route functions have generated per-route argument types
type RouteFn = (args: any) => unknown;

/** Calls a loader or action and returns what it returned or threw (redirects and errors are thrown Responses). */
export async function call(
  fn: RouteFn,
  args: Args,
): Promise<{ status: number; response?: Response; data?: unknown }> {
  try {
    const out = await fn({ params: {}, context: {}, ...args });
    if (out instanceof Response) return { status: out.status, response: out };
    const maybe = out as { type?: string; data?: unknown; init?: ResponseInit | null } | null;
    if (maybe && maybe.type === "DataWithResponseInit") {
      return {
        status: maybe.init?.status ?? 200,
        data: maybe.data,
        response: new Response(null, maybe.init ?? undefined),
      };
    }
    return { status: 200, data: out };
  } catch (thrown) {
    if (thrown instanceof Response)
      return { status: thrown.status, response: thrown, data: await thrown.clone().text() };
    throw thrown;
  }
}
