import { redirect } from "react-router";
import { assertSameOrigin } from "~/server/origin.server";
import { clearSessionCookie, deleteAllSessions, deleteSession, getSession } from "~/server/session.server";
import type { Route } from "./+types/logout";
import { withResourceHeaders } from "~/server/security-headers.server";

// Sign-out is a POST only (a GET link could be triggered by another site); `everywhere` ends every session.
export const action = withResourceHeaders(async function action({ request }: Route.ActionArgs) {
  assertSameOrigin(request);
  const form = await request.formData();
  const found = await getSession(request);
  if (found) {
    if (form.get("everywhere") === "1") await deleteAllSessions(found.user.id);
    else await deleteSession(found.session.id);
  }
  return redirect("/login", { headers: { "Set-Cookie": clearSessionCookie() } });
});

export const loader = withResourceHeaders(async function loader() {
  return redirect("/");
});
