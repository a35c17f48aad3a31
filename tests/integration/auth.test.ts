import { count, eq } from "drizzle-orm";
import { describe, expect, it } from "vitest";
import * as login from "~/routes/login";
import * as logout from "~/routes/logout";
import * as signup from "~/routes/signup";
import { db } from "~/server/db.server";
import { members, sessions, shops, users } from "~/server/schema.server";
import { call, cookieFrom, formRequest, getRequest } from "../support/requests";
import * as appLayout from "~/routes/app-layout";

const PASSWORD = "correct horse battery";

async function signUp(email: string, shopName = "Test Bench") {
  const res = await call(signup.action, {
    request: formRequest("/signup", { name: "Pat Tester", shopName, email, password: PASSWORD }),
  });
  expect(res.status).toBe(302);
  return cookieFrom(res.response!)!;
}

describe("sign-up", () => {
  it("creates a shop with its first owner and signs them in", async () => {
    const cookie = await signUp("first@bench.test");
    const user = await db.select().from(users).where(eq(users.email, "first@bench.test")).get();
    expect(user).toBeTruthy();
    const member = await db.select().from(members).where(eq(members.userId, user!.id)).get();
    expect(member?.role).toBe("owner");
    const shop = await db.select().from(shops).where(eq(shops.id, member!.shopId)).get();
    expect(shop?.name).toBe("Test Bench");
    const layout = await call(appLayout.loader, { request: getRequest("/boards", cookie) });
    expect(layout.status).toBe(200);
    expect((layout.data as { role: string }).role).toBe("owner");
  });

  it("stores argon2id with at least OWASP's minimum parameters", async () => {
    // OWASP Password Storage Cheat Sheet: argon2id, m=19456 KiB (19 MiB), t=2, p=1 as the minimum.
    await signUp("hash@bench.test");
    const user = await db.select().from(users).where(eq(users.email, "hash@bench.test")).get();
    const m = /^\$argon2id\$v=19\$m=(\d+),t=(\d+),p=(\d+)\$/.exec(user!.passwordHash);
    expect(m).not.toBeNull();
    expect(Number(m![1])).toBeGreaterThanOrEqual(19456);
    expect(Number(m![2])).toBeGreaterThanOrEqual(2);
    expect(Number(m![3])).toBeGreaterThanOrEqual(1);
  });

  it("refuses bad input with messages beside the fields and writes nothing", async () => {
    const before = await db.select({ n: count() }).from(users).get();
    const res = await call(signup.action, {
      request: formRequest("/signup", {
        name: "",
        shopName: "X",
        email: "not-an-address",
        password: "short",
      }),
    });
    expect(res.status).toBe(400);
    const errors = (res.data as { result: { error: Record<string, string[]> } }).result.error;
    expect(errors.email?.[0]).toMatch(/e-mail address/);
    expect(errors.password?.[0]).toMatch(/12 characters/);
    expect(errors.shopName?.[0]).toMatch(/2 characters/);
    const after = await db.select({ n: count() }).from(users).get();
    expect(after!.n).toBe(before!.n);
  });

  it("refuses a filled honeypot", async () => {
    const res = await call(signup.action, {
      request: formRequest("/signup", {
        name: "Bot",
        shopName: "Bots",
        email: "bot@bench.test",
        password: PASSWORD,
        website: "spam",
      }),
    });
    expect(res.status).toBe(400);
    expect(await db.select().from(users).where(eq(users.email, "bot@bench.test")).get()).toBeUndefined();
  });
});

describe("sign-in", () => {
  it("gives one message for a wrong password and an unknown account", async () => {
    await signUp("known@bench.test");
    const wrong = await call(login.action, {
      request: formRequest("/login", { email: "known@bench.test", password: "nope nope nope" }),
    });
    const unknown = await call(login.action, {
      request: formRequest("/login", { email: "nobody@bench.test", password: "nope nope nope" }),
    });
    const msg = (r: typeof wrong) =>
      (r.data as { result: { error: Record<string, string[]> } }).result.error[""];
    expect(wrong.status).toBe(400);
    expect(msg(wrong)).toEqual(["That e-mail and password do not match an account."]);
    expect(msg(unknown)).toEqual(msg(wrong));
  });

  it("sets an httpOnly, SameSite=Lax cookie and rotates the session id at each sign-in", async () => {
    const first = await signUp("rotate@bench.test");
    const res = await call(login.action, {
      request: formRequest("/login", { email: "rotate@bench.test", password: PASSWORD }, first),
    });
    expect(res.status).toBe(302);
    const raw = res.response!.headers.getSetCookie().find((c) => c.startsWith("rw_session="))!;
    expect(raw).toMatch(/HttpOnly/);
    expect(raw).toMatch(/SameSite=Lax/);
    const second = cookieFrom(res.response!)!;
    expect(second).not.toBe(first);
    // The old session is gone: its cookie no longer opens the app.
    const old = await call(appLayout.loader, { request: getRequest("/boards", first) });
    expect(old.status).toBe(302);
    expect(old.response!.headers.get("Location")).toMatch(/^\/login/);
    const fresh = await call(appLayout.loader, { request: getRequest("/boards", second) });
    expect(fresh.status).toBe(200);
  });

  it("stores only a hash of the session secret", async () => {
    const cookie = await signUp("hashsess@bench.test");
    const token = decodeURIComponent(cookie.split("=")[1]);
    const [id, secret] = token.split(".");
    const row = await db.select().from(sessions).where(eq(sessions.id, id)).get();
    expect(row).toBeTruthy();
    expect(Buffer.from(row!.secretHash).toString("utf8")).not.toContain(secret);
    expect(row!.secretHash.length).toBe(32);
  });

  it("throttles after 10 failures per account, with the wait in the message, and refuses even the right password", async () => {
    await signUp("throttle@bench.test");
    for (let i = 0; i < 10; i++) {
      const r = await call(login.action, {
        request: formRequest("/login", { email: "throttle@bench.test", password: `wrong-${i}-password` }),
      });
      expect(r.status).toBe(400);
    }
    const blocked = await call(login.action, {
      request: formRequest("/login", { email: "throttle@bench.test", password: PASSWORD }),
    });
    expect(blocked.status).toBe(429);
    const msg = (blocked.data as { result: { error: Record<string, string[]> } }).result.error[""][0];
    expect(msg).toMatch(/Too many failed sign-ins\. Wait 15 minutes/);
  });

  it("signs out this session, or every session", async () => {
    const a = await signUp("out@bench.test");
    const b = cookieFrom(
      (
        await call(login.action, {
          request: formRequest("/login", { email: "out@bench.test", password: PASSWORD }),
        })
      ).response!,
    )!;
    const c = cookieFrom(
      (
        await call(login.action, {
          request: formRequest("/login", { email: "out@bench.test", password: PASSWORD }),
        })
      ).response!,
    )!;
    await call(logout.action, { request: formRequest("/logout", {}, a) });
    expect((await call(appLayout.loader, { request: getRequest("/boards", a) })).status).toBe(302);
    expect((await call(appLayout.loader, { request: getRequest("/boards", b) })).status).toBe(200);
    await call(logout.action, { request: formRequest("/logout", { everywhere: "1" }, b) });
    expect((await call(appLayout.loader, { request: getRequest("/boards", b) })).status).toBe(302);
    expect((await call(appLayout.loader, { request: getRequest("/boards", c) })).status).toBe(302);
  });
});
