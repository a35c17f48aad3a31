import { handleWebhook } from "~/server/payments.server";
import type { Route } from "./+types/payments-webhook";
import { withResourceHeaders } from "~/server/security-headers.server";

// The payment provider calls this, not a member: no session guard. The signature over the raw body is the
// guard (payments.server.ts verifies it with the SDK and answers 400 to anything else).
export const action = withResourceHeaders(async function action({ request }: Route.ActionArgs) {
  if (request.method !== "POST") return new Response("Method not allowed", { status: 405 });
  return handleWebhook(request);
});

export const loader = withResourceHeaders(function loader() {
  return new Response("Method not allowed", { status: 405, headers: { Allow: "POST" } });
});
