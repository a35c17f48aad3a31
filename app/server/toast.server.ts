import { createCookieSessionStorage, redirect } from "react-router";
import { env, secureCookies } from "./env.server";

export type Toast = { kind: "success" | "error" | "info"; message: string };

// Action results reach the next page as a one-time flash cookie, shown as a toast.
const storage = createCookieSessionStorage<Record<string, never>, { toast: Toast }>({
  cookie: {
    name: "rw_flash",
    httpOnly: true,
    sameSite: "lax",
    path: "/",
    secrets: [env.SESSION_SECRET],
    secure: secureCookies(),
  },
});

export async function redirectWithToast(url: string, toast: Toast, init: ResponseInit = {}) {
  const session = await storage.getSession();
  session.flash("toast", toast);
  const headers = new Headers(init.headers);
  headers.append("Set-Cookie", await storage.commitSession(session));
  return redirect(url, { ...init, headers });
}

export async function getToast(request: Request) {
  const session = await storage.getSession(request.headers.get("Cookie"));
  const toast = session.get("toast") ?? null;
  const headers = toast ? { "Set-Cookie": await storage.commitSession(session) } : undefined;
  return { toast, headers };
}
