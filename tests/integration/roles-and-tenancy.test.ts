import { describe, expect, it } from "vitest";
import * as board from "~/routes/board";
import * as boardsRoute from "~/routes/boards";
import * as insights from "~/routes/insights";
import * as settings from "~/routes/settings";
import * as healthz from "~/routes/healthz";
import { call, getRequest } from "../support/requests";
import { createShopWithRoles } from "../support/fixtures";

describe("roles", () => {
  it("lets only the owner open shop settings", async () => {
    const shop = await createShopWithRoles();
    expect(
      (await call(settings.loader, { request: getRequest("/settings", shop.cookies.owner) })).status,
    ).toBe(200);
    for (const role of ["lead", "tech", "desk"] as const) {
      expect(
        (await call(settings.loader, { request: getRequest("/settings", shop.cookies[role]) })).status,
      ).toBe(403);
    }
  });

  it("keeps insights from techs and the desk", async () => {
    const shop = await createShopWithRoles();
    expect(
      (await call(insights.loader, { request: getRequest("/insights", shop.cookies.lead) })).status,
    ).toBe(200);
    expect(
      (await call(insights.loader, { request: getRequest("/insights", shop.cookies.tech) })).status,
    ).toBe(403);
    expect(
      (await call(insights.loader, { request: getRequest("/insights", shop.cookies.desk) })).status,
    ).toBe(403);
  });

  it("sends a signed-out visitor to sign in, remembering where they were going", async () => {
    const res = await call(boardsRoute.loader, { request: getRequest("/boards") });
    expect(res.status).toBe(302);
    expect(res.response!.headers.get("Location")).toBe("/login?redirectTo=%2Fboards");
  });
});

describe("tenancy", () => {
  it("answers 404 for another shop's board and never lists it", async () => {
    const a = await createShopWithRoles("Shop A");
    const b = await createShopWithRoles("Shop B");
    const own = await call(board.loader, {
      request: getRequest(`/boards/${a.boardId}`, a.cookies.tech),
      params: { boardId: a.boardId },
    });
    expect(own.status).toBe(200);
    const other = await call(board.loader, {
      request: getRequest(`/boards/${b.boardId}`, a.cookies.owner),
      params: { boardId: b.boardId },
    });
    expect(other.status).toBe(404);
    expect(String(other.data)).not.toContain("Shop B");
    const list = await call(boardsRoute.loader, { request: getRequest("/boards", a.cookies.owner) });
    const ids = (list.data as { boards: Array<{ id: string }> }).boards.map((x) => x.id);
    expect(ids).toContain(a.boardId);
    expect(ids).not.toContain(b.boardId);
  });
});

describe("health", () => {
  it("reports the database reachable", async () => {
    const res = await call(healthz.loader, { request: getRequest("/healthz") });
    expect(res.status).toBe(200);
    expect(await res.response!.json()).toEqual({ ok: true, database: "reachable" });
  });
});
