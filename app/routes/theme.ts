import { data } from "react-router";
import { assertSameOrigin } from "~/server/origin.server";
import { THEMES, type Theme, themeCookie } from "~/lib/theme";
import type { Route } from "./+types/theme";
import { withResourceHeaders } from "~/server/security-headers.server";

export const action = withResourceHeaders(async function action({ request }: Route.ActionArgs) {
  assertSameOrigin(request);
  const theme = String((await request.formData()).get("theme") ?? "");
  if (!(THEMES as readonly string[]).includes(theme)) {
    return data({ error: "Theme must be system, light or dark." }, { status: 400 });
  }
  return data({ theme }, { headers: { "Set-Cookie": themeCookie(theme as Theme) } });
});
