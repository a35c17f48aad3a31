import { and, eq } from "drizzle-orm";
import { describe, expect, it } from "vitest";
import * as forgot from "~/routes/forgot-password";
import * as invite from "~/routes/invite";
import * as login from "~/routes/login";
import * as reset from "~/routes/reset-password";
import * as settings from "~/routes/settings";
import { db } from "~/server/db.server";
import { listCapturedEmail } from "~/server/email.server";
import { emailTokens, members, users } from "~/server/schema.server";
import { call, formRequest, getRequest } from "../support/requests";
import { createShopWithRoles, FIXTURE_PASSWORD } from "../support/fixtures";

const linkIn = (text: string, path: string) =>
  new RegExp(`https?://[^\\s]+${path}/([a-z0-9]+)`).exec(text)?.[1];

describe("invitations", () => {
  it("e-mails a single-use link that creates the account and membership", async () => {
    const shop = await createShopWithRoles();
    const sent = await call(settings.action, {
      request: formRequest(
        "/settings",
        { intent: "invite", email: "new.tech@fixture.test", role: "tech" },
        shop.cookies.owner,
      ),
    });
    expect(sent.status).toBe(302);
    const mail = (await listCapturedEmail()).find((m) => m.to === "new.tech@fixture.test");
    expect(mail?.subject).toMatch(/invited you/);
    const token = linkIn(mail!.text, "/invite")!;
    expect(token).toBeTruthy();
    const page = await call(invite.loader, { request: getRequest(`/invite/${token}`), params: { token } });
    expect(page.data).toMatchObject({ valid: true, role: "tech", hasAccount: false });
    const accepted = await call(invite.action, {
      request: formRequest(`/invite/${token}`, { name: "New Tech", password: "a long enough password" }),
      params: { token },
    });
    expect(accepted.status).toBe(302);
    const user = await db.select().from(users).where(eq(users.email, "new.tech@fixture.test")).get();
    const member = await db
      .select()
      .from(members)
      .where(and(eq(members.userId, user!.id), eq(members.shopId, shop.shopId)))
      .get();
    expect(member?.role).toBe("tech");
    const again = await call(invite.action, {
      request: formRequest(`/invite/${token}`, { name: "Someone Else", password: "another long password" }),
      params: { token },
    });
    expect(again.status).toBe(400);
  });

  it("lets only the owner invite", async () => {
    const shop = await createShopWithRoles();
    const res = await call(settings.action, {
      request: formRequest(
        "/settings",
        { intent: "invite", email: "x@fixture.test", role: "owner" },
        shop.cookies.lead,
      ),
    });
    expect(res.status).toBe(403);
    expect(
      await db.select().from(emailTokens).where(eq(emailTokens.email, "x@fixture.test")).get(),
    ).toBeUndefined();
  });
});

describe("owners", () => {
  it("never removes or demotes the last owner", async () => {
    const shop = await createShopWithRoles();
    const ownerMember = await db
      .select()
      .from(members)
      .where(and(eq(members.shopId, shop.shopId), eq(members.role, "owner")))
      .get();
    const demote = await call(settings.action, {
      request: formRequest(
        "/settings",
        { intent: "change-role", memberId: ownerMember!.id, role: "lead" },
        shop.cookies.owner,
      ),
    });
    expect(demote.status).toBe(400);
    const remove = await call(settings.action, {
      request: formRequest(
        "/settings",
        { intent: "remove-member", memberId: ownerMember!.id },
        shop.cookies.owner,
      ),
    });
    expect(remove.status).toBe(400);
    expect((await db.select().from(members).where(eq(members.id, ownerMember!.id)).get())?.role).toBe(
      "owner",
    );
  });

  it("keeps one owner when two owners demote each other at the same moment", async () => {
    const shop = await createShopWithRoles();
    const lead = await db
      .select()
      .from(members)
      .where(and(eq(members.shopId, shop.shopId), eq(members.role, "lead")))
      .get();
    await db.update(members).set({ role: "owner" }).where(eq(members.id, lead!.id));
    const owner = await db
      .select()
      .from(members)
      .where(and(eq(members.shopId, shop.shopId), eq(members.userId, shop.userIds.owner)))
      .get();
    const [a, b] = await Promise.all([
      call(settings.action, {
        request: formRequest(
          "/settings",
          { intent: "change-role", memberId: lead!.id, role: "tech" },
          shop.cookies.owner,
        ),
      }),
      call(settings.action, {
        request: formRequest(
          "/settings",
          { intent: "change-role", memberId: owner!.id, role: "tech" },
          shop.cookies.lead,
        ),
      }),
    ]);
    expect([a.status, b.status].sort()).toEqual([302, 400]);
    const owners = await db
      .select()
      .from(members)
      .where(and(eq(members.shopId, shop.shopId), eq(members.role, "owner")))
      .all();
    expect(owners).toHaveLength(1);
  });

  it("changes another member's role", async () => {
    const shop = await createShopWithRoles();
    const tech = await db
      .select()
      .from(members)
      .where(and(eq(members.shopId, shop.shopId), eq(members.role, "tech")))
      .get();
    const res = await call(settings.action, {
      request: formRequest(
        "/settings",
        { intent: "change-role", memberId: tech!.id, role: "lead" },
        shop.cookies.owner,
      ),
    });
    expect(res.status).toBe(302);
    expect((await db.select().from(members).where(eq(members.id, tech!.id)).get())?.role).toBe("lead");
  });

  it("answers 404 for a member id from another shop", async () => {
    const a = await createShopWithRoles("A");
    const b = await createShopWithRoles("B");
    const bTech = await db
      .select()
      .from(members)
      .where(and(eq(members.shopId, b.shopId), eq(members.role, "tech")))
      .get();
    const res = await call(settings.action, {
      request: formRequest("/settings", { intent: "remove-member", memberId: bTech!.id }, a.cookies.owner),
    });
    expect(res.status).toBe(404);
    expect(await db.select().from(members).where(eq(members.id, bTech!.id)).get()).toBeTruthy();
  });
});

describe("password reset", () => {
  it("answers the same for unknown addresses and sends a single-use link for known ones", async () => {
    const shop = await createShopWithRoles();
    const email = `tech-${shop.shopId}@fixture.test`;
    const unknown = await call(forgot.action, {
      request: formRequest("/forgot-password", { email: "ghost@fixture.test" }),
    });
    const known = await call(forgot.action, { request: formRequest("/forgot-password", { email }) });
    expect((unknown.data as { sent: boolean }).sent).toBe(true);
    expect((known.data as { sent: boolean }).sent).toBe(true);
    expect((await listCapturedEmail()).some((m) => m.to === "ghost@fixture.test")).toBe(false);
    const mail = (await listCapturedEmail()).find((m) => m.to === email)!;
    const token = linkIn(mail.text, "/reset-password")!;
    const done = await call(reset.action, {
      request: formRequest(`/reset-password/${token}`, {
        password: "brand new password!",
        confirm: "brand new password!",
      }),
      params: { token },
    });
    expect(done.status).toBe(302);
    // The old password no longer works, the new one does, and the old session was ended.
    const oldPw = await call(login.action, {
      request: formRequest("/login", { email, password: FIXTURE_PASSWORD }),
    });
    expect(oldPw.status).toBe(400);
    const newPw = await call(login.action, {
      request: formRequest("/login", { email, password: "brand new password!" }),
    });
    expect(newPw.status).toBe(302);
    const reuse = await call(reset.action, {
      request: formRequest(`/reset-password/${token}`, {
        password: "third password here",
        confirm: "third password here",
      }),
      params: { token },
    });
    expect(reuse.status).toBe(400);
  });

  it("retires older reset links once one of them is used", async () => {
    const shop = await createShopWithRoles();
    const email = `desk-${shop.shopId}@fixture.test`;
    await call(forgot.action, { request: formRequest("/forgot-password", { email }) });
    await call(forgot.action, { request: formRequest("/forgot-password", { email }) });
    const [newer, older] = (await listCapturedEmail()).filter((m) => m.to === email);
    const newToken = linkIn(newer.text, "/reset-password")!;
    const oldToken = linkIn(older.text, "/reset-password")!;
    expect(newToken).not.toBe(oldToken);
    const done = await call(reset.action, {
      request: formRequest(`/reset-password/${newToken}`, {
        password: "the newest password",
        confirm: "the newest password",
      }),
      params: { token: newToken },
    });
    expect(done.status).toBe(302);
    const page = await call(reset.loader, {
      request: getRequest(`/reset-password/${oldToken}`),
      params: { token: oldToken },
    });
    expect(page.data).toEqual({ valid: false });
  });

  it("refuses an expired link", async () => {
    const shop = await createShopWithRoles();
    const email = `lead-${shop.shopId}@fixture.test`;
    await call(forgot.action, { request: formRequest("/forgot-password", { email }) });
    const mail = (await listCapturedEmail()).find((m) => m.to === email)!;
    const token = linkIn(mail.text, "/reset-password")!;
    await db
      .update(emailTokens)
      .set({ expiresAt: new Date(Date.now() - 1000) })
      .where(eq(emailTokens.email, email));
    const page = await call(reset.loader, {
      request: getRequest(`/reset-password/${token}`),
      params: { token },
    });
    expect(page.data).toEqual({ valid: false });
  });
});
