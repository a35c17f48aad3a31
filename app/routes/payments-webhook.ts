import { handleWebhook } from "~/server/payments.server";
import type { Route } from "./+types/payments-webhook";

// The payment provider calls this, not a member: no session guard. The signature over the raw body is the
// guard (payments.server.ts verifies it with the SDK and answers 400 to anything else).
export async function action({ request }: Route.ActionArgs) {
  if (request.method !== "POST") return new Response("Method not allowed", { status: 405 });
  return handleWebhook(request);
}

export function loader() {
  return new Response("Method not allowed", { status: 405, headers: { Allow: "POST" } });
}
