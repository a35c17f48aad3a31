import { and, eq } from "drizzle-orm";
import { describe, expect, it } from "vitest";
import * as boards from "~/routes/boards";
import * as settings from "~/routes/settings";
import { db } from "~/server/db.server";
import { newId } from "~/server/ids.server";
import { members, sessions } from "~/server/schema.server";
import { createSession, sessionCookie } from "~/server/session.server";
import { createShopWithRoles } from "../support/fixtures";
import { call, formRequest, getRequest } from "../support/requests";

// A removed member's sessions end with the membership (ASVS 5.0 7.4.2): the next request is signed out, not
// merely refused, and no session row is left that names the shop.

const memberOf = (shopId: string, userId: string) =>
  db
    .select()
    .from(members)
    .where(and(eq(members.shopId, shopId), eq(members.userId, userId)))
    .get();

async function remove(ownerCookie: string, memberId: string) {
  return call(settings.action, {
    request: formRequest("/settings", { intent: "remove-member", memberId }, ownerCookie),
  });
}

const sessionsOf = (userId: string) => db.select().from(sessions).where(eq(sessions.userId, userId)).all();

describe("removing a member", () => {
  it("deletes every session of theirs when it was their only shop, so their next request is signed out", async () => {
    const shop = await createShopWithRoles();
    const tech = shop.userIds.tech;
    // A second device of the same technician.
    const other = sessionCookie((await createSession(tech, shop.shopId)).token).split(";")[0];
    expect(await sessionsOf(tech)).toHaveLength(2);
    const before = await call(boards.loader, { request: getRequest("/boards", shop.cookies.tech) });
    expect(before.status).toBe(200);

    const res = await remove(shop.cookies.owner, (await memberOf(shop.shopId, tech))!.id);
    expect(res.status).toBe(302);
    expect(await sessionsOf(tech)).toEqual([]);
    for (const cookie of [shop.cookies.tech, other]) {
      const after = await call(boards.loader, { request: getRequest("/boards", cookie) });
      expect(after.status).toBe(302);
      expect(after.response!.headers.get("Location")).toMatch(/^\/login/);
    }
    // Nobody else was signed out.
    expect(await sessionsOf(shop.userIds.lead)).toHaveLength(1);
    expect(await sessionsOf(shop.userIds.owner)).toHaveLength(1);
  });

  it("ends the sessions working in this shop but keeps those working in the member's other shop", async () => {
    const a = await createShopWithRoles("Shop A");
    const b = await createShopWithRoles("Shop B");
    const lead = a.userIds.lead;
    await db.insert(members).values({ id: newId(), shopId: b.shopId, userId: lead, role: "tech" });
    const inB = await createSession(lead, b.shopId);

    const res = await remove(a.cookies.owner, (await memberOf(a.shopId, lead))!.id);
    expect(res.status).toBe(302);
    const left = await sessionsOf(lead);
    expect(left.map((s) => s.id)).toEqual([inB.id]);
    const stillIn = await call(boards.loader, {
      request: getRequest("/boards", sessionCookie(inB.token).split(";")[0]),
    });
    expect(stillIn.status).toBe(200);
    expect(JSON.stringify(stillIn.data)).not.toContain("Shop A");
  });

  it("keeps every session when the removal is refused (the last owner)", async () => {
    const shop = await createShopWithRoles();
    const owner = shop.userIds.owner;
    const res = await remove(shop.cookies.owner, (await memberOf(shop.shopId, owner))!.id);
    expect(res.status).toBe(400);
    expect(await sessionsOf(owner)).toHaveLength(1);
    expect(await memberOf(shop.shopId, owner)).toBeTruthy();
  });

  it("leaves sessions alone on a role change: the new role applies at the next request", async () => {
    const shop = await createShopWithRoles();
    const res = await call(settings.action, {
      request: formRequest(
        "/settings",
        {
          intent: "change-role",
          memberId: (await memberOf(shop.shopId, shop.userIds.lead))!.id,
          role: "desk",
        },
        shop.cookies.owner,
      ),
    });
    expect(res.status).toBe(302);
    expect(await sessionsOf(shop.userIds.lead)).toHaveLength(1);
  });
});
