import { listCapturedEmail } from "~/server/email.server";
import { mailCaptureOn } from "~/server/env.server";
import { withResourceHeaders } from "~/server/security-headers.server";

// The captured mail as JSON, for end-to-end tests; 404 whenever capture is off.
export const loader = withResourceHeaders(async function loader() {
  if (!mailCaptureOn()) return new Response("Not found", { status: 404 });
  return Response.json(
    { messages: await listCapturedEmail(100) },
    { headers: { "Cache-Control": "no-store" } },
  );
});
