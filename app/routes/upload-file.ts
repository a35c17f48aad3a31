import { and, eq } from "drizzle-orm";
import { notFound, requireMember } from "~/server/auth.server";
import { db } from "~/server/db.server";
import { uploads } from "~/server/schema.server";
import { storage } from "~/server/storage.server";
import type { Route } from "./+types/upload-file";
import { withResourceHeaders } from "~/server/security-headers.server";

/** Serves an uploaded file to members of the shop that owns it, with its sniffed type and no sniffing by the browser. */
export const loader = withResourceHeaders(async function loader({ request, params }: Route.LoaderArgs) {
  const { shop } = await requireMember(request);
  const row = await db
    .select()
    .from(uploads)
    .where(and(eq(uploads.id, params.uploadId), eq(uploads.shopId, shop.id)))
    .get();
  if (!row) notFound("That file");
  const file = await storage.get(row.storageKey);
  if (!file) notFound("That file");
  return new Response(file.bytes as BodyInit, {
    headers: {
      "Content-Type": row.contentType,
      "Content-Length": String(file.bytes.length),
      "X-Content-Type-Options": "nosniff",
      "Content-Security-Policy": "default-src 'none'; sandbox",
      "Cache-Control": "private, max-age=3600",
      ETag: `"${row.sha256}"`,
    },
  });
});
