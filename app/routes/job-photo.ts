import { requireMember } from "~/server/auth.server";
import { readJobPhoto } from "~/server/job-photos.server";
import type { Route } from "./+types/job-photo";
import { withResourceHeaders } from "~/server/security-headers.server";

export const loader = withResourceHeaders(async function loader({ request, params }: Route.LoaderArgs) {
  const { shop } = await requireMember(request, { permission: "view:jobs" });
  const file = await readJobPhoto(shop.id, params.jobId, params.photoId);
  if (!file) throw new Response("That photo was not found in your shop.", { status: 404 });
  return new Response(file.bytes as BodyInit, {
    headers: {
      "Content-Type": file.type,
      "X-Content-Type-Options": "nosniff",
      "Cache-Control": "private, max-age=3600",
      "Content-Security-Policy": "default-src 'none'",
    },
  });
});
