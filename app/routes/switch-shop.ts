import { redirect } from "react-router";
import { assertSameOrigin } from "~/server/origin.server";
import { listMemberships, requireUser } from "~/server/auth.server";
import { switchSessionShop } from "~/server/session.server";
import type { Route } from "./+types/switch-shop";
import { withResourceHeaders } from "~/server/security-headers.server";

export const action = withResourceHeaders(async function action({ request }: Route.ActionArgs) {
  assertSameOrigin(request);
  const { user, session } = await requireUser(request);
  const shopId = String((await request.formData()).get("shopId") ?? "");
  const memberships = await listMemberships(user.id);
  if (!memberships.some((m) => m.shopId === shopId))
    throw new Response("You are not a member of that shop.", { status: 404 });
  await switchSessionShop(session.id, shopId);
  return redirect("/boards");
});

export const loader = withResourceHeaders(async function loader() {
  return redirect("/boards");
});
