import { eq } from "drizzle-orm";
import type { Db } from "../app/server/db.server";
import { hashPassword } from "../app/server/password.server";
import { boards, maps, mapVersions, members, shops, users } from "../app/server/schema.server";
import { DEMO_BOARDS, DEMO_MEMBERS, DEMO_PASSWORD, DEMO_SHOP } from "./demo-data";
import { seedDemoHistory } from "./demo-history.server";
import { seedDemoJobs } from "./demo-jobs.server";
import { seedDemoProbePhoto } from "./demo-photo.server";

/**
 * The invented demo shop. Fixed ids make it idempotent: a second run inserts nothing and changes nothing.
 * Only ever called when SEED_DEMO=1, so a production start never creates these known logins.
 */
export async function seedDemo(db: Db) {
  const existing = await db.select({ id: shops.id }).from(shops).where(eq(shops.id, DEMO_SHOP.id)).get();
  if (existing) return { created: false };
  const passwordHash = await hashPassword(DEMO_PASSWORD);
  await db.batch([
    db.insert(shops).values(DEMO_SHOP).onConflictDoNothing(),
    ...DEMO_MEMBERS.map((m) =>
      db
        .insert(users)
        .values({ id: m.userId, email: m.email, name: m.name, passwordHash })
        .onConflictDoNothing(),
    ),
    ...DEMO_MEMBERS.map((m) =>
      db
        .insert(members)
        .values({ id: `demo-member-${m.role}`, shopId: DEMO_SHOP.id, userId: m.userId, role: m.role })
        .onConflictDoNothing(),
    ),
    ...DEMO_BOARDS.map((b) =>
      db
        .insert(boards)
        .values({ ...b.board, shopId: DEMO_SHOP.id })
        .onConflictDoNothing(),
    ),
    ...DEMO_BOARDS.map((b) =>
      db
        .insert(maps)
        .values({
          id: b.mapId,
          shopId: DEMO_SHOP.id,
          boardId: b.board.id,
          name: b.mapName,
          draft: b.document,
          draftRevision: 1,
        })
        .onConflictDoNothing(),
    ),
    // Each demo map is also published as version 1, so runs can start on first sign-in.
    ...DEMO_BOARDS.map((b) =>
      db
        .insert(mapVersions)
        .values({
          id: `${b.mapId}-v1`,
          shopId: DEMO_SHOP.id,
          mapId: b.mapId,
          number: 1,
          document: b.document,
          note: "First published map",
          publishedBy: "demo-user-lead",
        })
        .onConflictDoNothing(),
    ),
  ]);
  // The OM-5150 map's probe photo (its document points at it), stored as an editor upload would be.
  await seedDemoProbePhoto(db);
  // Open jobs at the desk, then a few hundred past runs with findings so insights have something to show.
  await seedDemoJobs(db);
  await seedDemoHistory(db);
  return { created: true };
}
