import { audit } from "~/server/audit.server";
import { requireMember } from "~/server/auth.server";
import { exportCustomer } from "~/server/customers.server";
import type { Route } from "./+types/customer-export";
import { withResourceHeaders } from "~/server/security-headers.server";

// Everything held about one customer, as a JSON download for the owner (a subject access request).
export const loader = withResourceHeaders(async function loader({ request, params }: Route.LoaderArgs) {
  const { shop, user } = await requireMember(request, { permission: "manage:customers" });
  const exported = await exportCustomer(shop.id, params.customerId);
  if (!exported) throw new Response("That customer was not found in your shop.", { status: 404 });
  await audit({ shopId: shop.id, actorId: user.id, action: "customer.exported", subject: params.customerId });
  return new Response(JSON.stringify({ shop: shop.name, ...exported }, null, 2), {
    headers: {
      "Content-Type": "application/json; charset=utf-8",
      "Content-Disposition": `attachment; filename="customer-${params.customerId}.json"`,
      "Cache-Control": "no-store",
    },
  });
});
