import { eq } from "drizzle-orm";
import { describe, expect, it } from "vitest";
import * as apiRoute from "~/routes/api-v1-insights";
import * as tokensRoute from "~/routes/settings-tokens";
import { db } from "~/server/db.server";
import { apiTokens } from "~/server/schema.server";
import { createShopWithRoles } from "../support/fixtures";
import { call, formRequest, getRequest } from "../support/requests";

const apiGet = (path: string, token?: string) =>
  new Request(`http://railwise.test${path}`, { headers: token ? { Authorization: `Bearer ${token}` } : {} });

async function createToken(cookie: string, name = "Parts sheet") {
  const res = await call(tokensRoute.action, {
    request: formRequest("/settings/tokens", { intent: "create", name }, cookie),
  });
  expect(res.status).toBe(200);
  const created = (res.data as { created: { id: string; token: string } | null }).created;
  expect(created?.token).toMatch(/^rw_[a-z2-7]+\.[a-z2-7]+$/);
  return created!;
}

describe("personal API tokens", () => {
  it("are open to every role in settings", async () => {
    const shop = await createShopWithRoles();
    for (const role of ["owner", "lead", "tech", "desk"] as const)
      expect(
        (await call(tokensRoute.loader, { request: getRequest("/settings/tokens", shop.cookies[role]) }))
          .status,
      ).toBe(200);
  });

  it("are shown once and stored only as a SHA-256 hash", async () => {
    const shop = await createShopWithRoles();
    const { id, token } = await createToken(shop.cookies.lead);
    const row = await db.select().from(apiTokens).where(eq(apiTokens.id, id)).get();
    const secret = token.split(".")[1];
    expect(row?.secretHash.length).toBe(32);
    expect(row?.secretHash.toString("hex")).not.toContain(Buffer.from(secret).toString("hex"));
    const list = await call(tokensRoute.loader, {
      request: getRequest("/settings/tokens", shop.cookies.lead),
    });
    expect(JSON.stringify(list.data)).not.toContain(secret);
  });

  it("read insights for a lead and answer 403 for the desk", async () => {
    const shop = await createShopWithRoles();
    const lead = await createToken(shop.cookies.lead);
    const ok = await call(apiRoute.loader, {
      request: apiGet("/api/v1/insights/hot-spots?from=2026-01-01&to=2026-01-31", lead.token),
      params: { table: "hot-spots" },
    });
    expect(ok.status).toBe(200);
    const body = await ok.response!.json();
    expect(body).toMatchObject({
      table: "hot-spots",
      filter: { from: "2026-01-01", to: "2026-01-31" },
      rows: [],
    });
    const desk = await createToken(shop.cookies.desk);
    const refused = await call(apiRoute.loader, {
      request: apiGet("/api/v1/insights/hot-spots", desk.token),
      params: { table: "hot-spots" },
    });
    expect(refused.status).toBe(403);
    const tech = await createToken(shop.cookies.tech);
    expect(
      (
        await call(apiRoute.loader, {
          request: apiGet("/api/v1/insights/parts", tech.token),
          params: { table: "parts" },
        })
      ).status,
    ).toBe(403);
  });

  it("stop working once revoked, and only their owner can revoke them", async () => {
    const shop = await createShopWithRoles();
    const { id, token } = await createToken(shop.cookies.owner);
    const use = () =>
      call(apiRoute.loader, {
        request: apiGet("/api/v1/insights/strategies", token),
        params: { table: "strategies" },
      });
    expect((await use()).status).toBe(200);
    const notMine = await call(tokensRoute.action, {
      request: formRequest("/settings/tokens", { intent: "revoke", tokenId: id }, shop.cookies.lead),
    });
    expect(notMine.status).toBe(404);
    expect((await use()).status).toBe(200);
    const revoked = await call(tokensRoute.action, {
      request: formRequest("/settings/tokens", { intent: "revoke", tokenId: id }, shop.cookies.owner),
    });
    expect(revoked.status).toBe(302);
    expect((await use()).status).toBe(401);
  });

  it("reject tampered, foreign-format and missing tokens", async () => {
    const shop = await createShopWithRoles();
    const { token } = await createToken(shop.cookies.lead);
    const tampered = `${token.slice(0, -2)}${token.endsWith("a") ? "bb" : "aa"}`;
    for (const t of [tampered, "not-a-token", undefined]) {
      const res = await call(apiRoute.loader, {
        request: apiGet("/api/v1/insights/hot-spots", t),
        params: { table: "hot-spots" },
      });
      expect(res.status).toBe(401);
    }
  });

  it("need a name; a blank one changes nothing", async () => {
    const shop = await createShopWithRoles();
    const res = await call(tokensRoute.action, {
      request: formRequest("/settings/tokens", { intent: "create", name: "  " }, shop.cookies.tech),
    });
    expect(res.status).toBe(400);
    const list = await call(tokensRoute.loader, {
      request: getRequest("/settings/tokens", shop.cookies.tech),
    });
    expect((list.data as { tokens: unknown[] }).tokens).toEqual([]);
  });
});
