import { count } from "drizzle-orm";
import { describe, expect, it } from "vitest";
import { db } from "~/server/db.server";
import { boards, maps, mapVersions, members, shops, users } from "~/server/schema.server";
import { seedDemo } from "../../seed/demo.server";

describe("demo seed", () => {
  it("creates the invented shop with one member per role and is idempotent", async () => {
    const first = await seedDemo(db);
    expect(first.created).toBe(true);
    const counts = async () =>
      Promise.all(
        [shops, users, members, boards, maps, mapVersions].map(
          async (t) => (await db.select({ n: count() }).from(t).get())!.n,
        ),
      );
    const after1 = await counts();
    expect(after1).toEqual([1, 4, 4, 2, 2, 2]);
    const second = await seedDemo(db);
    expect(second.created).toBe(false);
    expect(await counts()).toEqual(after1);
    const roles = (await db.select({ role: members.role }).from(members).all()).map((r) => r.role).sort();
    expect(roles).toEqual(["desk", "lead", "owner", "tech"]);
  });
});
