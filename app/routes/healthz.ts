import { sql } from "drizzle-orm";
import { db } from "~/server/db.server";
import { withResourceHeaders } from "~/server/security-headers.server";

export const loader = withResourceHeaders(async function loader() {
  try {
    await db.run(sql`select 1`);
    return Response.json({ ok: true, database: "reachable" }, { headers: { "Cache-Control": "no-store" } });
  } catch {
    return Response.json(
      { ok: false, database: "unreachable" },
      { status: 503, headers: { "Cache-Control": "no-store" } },
    );
  }
});
