import { redirect } from "react-router";
import { z } from "zod";
import { assertSameOrigin } from "~/server/origin.server";
import { listMemberships, requireUser } from "~/server/auth.server";
import { switchSessionShop } from "~/server/session.server";
import type { Route } from "./+types/switch-shop";
import { withResourceHeaders } from "~/server/security-headers.server";

const SwitchShopSchema = z.object({ shopId: z.string().trim().min(1).max(64) });

export const action = withResourceHeaders(async function action({ request }: Route.ActionArgs) {
  assertSameOrigin(request);
  const { user, session } = await requireUser(request);
  const parsed = SwitchShopSchema.safeParse(Object.fromEntries(await request.formData()));
  if (!parsed.success) throw new Response("Choose a shop to switch to.", { status: 400 });
  const { shopId } = parsed.data;
  const memberships = await listMemberships(user.id);
  if (!memberships.some((m) => m.shopId === shopId))
    throw new Response("You are not a member of that shop.", { status: 404 });
  await switchSessionShop(session.id, shopId);
  return redirect("/boards");
});

export const loader = withResourceHeaders(async function loader() {
  return redirect("/boards");
});
