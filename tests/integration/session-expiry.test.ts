import { eq } from "drizzle-orm";
import { describe, expect, it } from "vitest";
import * as appLayout from "~/routes/app-layout";
import { db } from "~/server/db.server";
import { sessions } from "~/server/schema.server";
import { createShopWithRoles } from "../support/fixtures";
import { call, getRequest } from "../support/requests";

const idOf = (cookie: string) => decodeURIComponent(cookie.split("=")[1]).split(".")[0];

describe("session expiry", () => {
  it("ends a session idle for more than 7 days", async () => {
    const shop = await createShopWithRoles();
    const id = idOf(shop.cookies.tech);
    await db
      .update(sessions)
      .set({ lastSeenAt: new Date(Date.now() - 8 * 24 * 3600_000) })
      .where(eq(sessions.id, id));
    expect((await call(appLayout.loader, { request: getRequest("/boards", shop.cookies.tech) })).status).toBe(
      302,
    );
    expect(await db.select().from(sessions).where(eq(sessions.id, id)).get()).toBeUndefined();
  });

  it("ends a session past its 30-day absolute lifetime even when active", async () => {
    const shop = await createShopWithRoles();
    const id = idOf(shop.cookies.lead);
    await db
      .update(sessions)
      .set({ expiresAt: new Date(Date.now() - 1000) })
      .where(eq(sessions.id, id));
    expect((await call(appLayout.loader, { request: getRequest("/boards", shop.cookies.lead) })).status).toBe(
      302,
    );
  });

  it("refuses a cookie whose secret does not match", async () => {
    const shop = await createShopWithRoles();
    const forged = `rw_session=${encodeURIComponent(`${idOf(shop.cookies.owner)}.aaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaa`)}`;
    expect((await call(appLayout.loader, { request: getRequest("/boards", forged) })).status).toBe(302);
    expect(
      (await call(appLayout.loader, { request: getRequest("/boards", shop.cookies.owner) })).status,
    ).toBe(200);
  });
});
