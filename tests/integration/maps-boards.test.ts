import { eq } from "drizzle-orm";
import { describe, expect, it } from "vitest";
import * as board from "~/routes/board";
import * as boardsRoute from "~/routes/boards";
import * as meters from "~/routes/settings-meters";
import { db } from "~/server/db.server";
import { boards, meterProfiles } from "~/server/schema.server";
import { createShopWithRoles } from "../support/fixtures";
import { call, formRequest, getRequest } from "../support/requests";

const NEW_BOARD = {
  intent: "create",
  maker: "Testwell",
  model: "Slate 14",
  boardNumber: "TW-1400",
  revision: "B",
  inputType: "usb-c-pd",
  inputVolts: "20V",
  batteryCells: "3",
  notes: "",
};

describe("boards", () => {
  it("lets a lead create a board, storing the input in millivolts", async () => {
    const shop = await createShopWithRoles();
    const r = await call(boardsRoute.action, {
      request: formRequest("/boards", NEW_BOARD, shop.cookies.lead),
    });
    expect(r.status).toBe(302);
    const id = r.response!.headers.get("Location")!.split("/").pop()!;
    const row = await db.select().from(boards).where(eq(boards.id, id)).get();
    expect(row).toMatchObject({
      shopId: shop.shopId,
      inputMillivolts: 20_000,
      batteryCells: 3,
      revision: "B",
    });
  });

  it("refuses bad input with messages beside the fields and stores nothing", async () => {
    const shop = await createShopWithRoles();
    const r = await call(boardsRoute.action, {
      request: formRequest(
        "/boards",
        { ...NEW_BOARD, inputVolts: "20 ohm", batteryCells: "40", maker: "" },
        shop.cookies.lead,
      ),
    });
    expect(r.status).toBe(400);
    const errors = (r.data as { result: { error: Record<string, string[]> } }).result.error;
    expect(Object.keys(errors).sort()).toEqual(["batteryCells", "inputVolts", "maker"]);
    const rows = await db.select().from(boards).where(eq(boards.shopId, shop.shopId)).all();
    expect(rows).toHaveLength(1); // only the fixture's board
  });

  it("refuses board edits from tech and desk", async () => {
    const shop = await createShopWithRoles();
    for (const role of ["tech", "desk"] as const) {
      const r = await call(boardsRoute.action, {
        request: formRequest("/boards", NEW_BOARD, shop.cookies[role]),
      });
      expect(r.status).toBe(403);
      const e = await call(board.action, {
        request: formRequest(`/boards/${shop.boardId}`, { intent: "archive" }, shop.cookies[role]),
        params: { boardId: shop.boardId },
      });
      expect(e.status).toBe(403);
    }
  });

  it("filters by search text, maker and revision, and hides archived boards", async () => {
    const shop = await createShopWithRoles();
    await call(boardsRoute.action, { request: formRequest("/boards", NEW_BOARD, shop.cookies.lead) });
    const list = async (qs: string) =>
      (
        (await call(boardsRoute.loader, { request: getRequest(`/boards${qs}`, shop.cookies.desk) })).data as {
          boards: Array<{ boardNumber: string }>;
        }
      ).boards.map((b) => b.boardNumber);
    expect(await list("")).toEqual(["FX-100", "TW-1400"]);
    expect(await list("?q=slate")).toEqual(["TW-1400"]);
    expect(await list("?maker=Fixture+Maker")).toEqual(["FX-100"]);
    expect(await list("?revision=B")).toEqual(["TW-1400"]);
    expect(await list("?q=%25")).toEqual([]); // a LIKE wildcard is searched for literally
    const archived = await call(board.action, {
      request: formRequest(`/boards/${shop.boardId}`, { intent: "archive" }, shop.cookies.lead),
      params: { boardId: shop.boardId },
    });
    expect(archived.status).toBe(302);
    expect(await list("")).toEqual(["TW-1400"]);
    expect(await list("?archived=1")).toEqual(["FX-100"]);
  });

  it("edits a board and creates a map on it; another shop's board is 404", async () => {
    const shop = await createShopWithRoles();
    const r = await call(board.action, {
      request: formRequest(
        `/boards/${shop.boardId}`,
        { ...NEW_BOARD, intent: "edit", inputVolts: "19.5 V" },
        shop.cookies.owner,
      ),
      params: { boardId: shop.boardId },
    });
    expect(r.status).toBe(302);
    const row = await db.select().from(boards).where(eq(boards.id, shop.boardId)).get();
    expect(row).toMatchObject({ model: "Slate 14", inputMillivolts: 19_500 });
    const m = await call(board.action, {
      request: formRequest(
        `/boards/${shop.boardId}`,
        { intent: "create-map", name: "Main power" },
        shop.cookies.lead,
      ),
      params: { boardId: shop.boardId },
    });
    expect(m.status).toBe(302);
    expect(m.response!.headers.get("Location")).toMatch(/^\/maps\//);
    const page = await call(board.loader, {
      request: getRequest(`/boards/${shop.boardId}`, shop.cookies.tech),
      params: { boardId: shop.boardId },
    });
    const d = page.data as { maps: Array<{ name: string }>; recentRuns: unknown[]; topFindings: unknown[] };
    expect(d.maps.map((x) => x.name)).toEqual(["Main power"]);
    expect(d.recentRuns).toEqual([]);
    expect(d.topFindings).toEqual([]);
    const other = await createShopWithRoles("Other");
    const foreign = await call(board.action, {
      request: formRequest(`/boards/${shop.boardId}`, { intent: "archive" }, other.cookies.owner),
      params: { boardId: shop.boardId },
    });
    expect(foreign.status).toBe(404);
  });
});

describe("meter profiles", () => {
  it("stores ranges parsed from the manual's ±(% of reading + counts) lines", async () => {
    // Accuracy is ±(% of reading + counts), one count being one step of the last digit on the range in use
    // (EURAMET cg-15 v3.0, 2015): so each range keeps its full scale and its resolution.
    const shop = await createShopWithRoles();
    const r = await call(meters.action, {
      request: formRequest(
        "/settings/meters",
        {
          name: "Bench meter",
          voltage: "600mV, 0.1mV, 0.5, 2\n6V, 1mV, 0.5, 2",
          resistance: "600R, 0.1R, 0.9, 5",
          isDefault: "on",
        },
        shop.cookies.lead,
      ),
    });
    expect(r.status).toBe(302);
    const row = await db.select().from(meterProfiles).where(eq(meterProfiles.shopId, shop.shopId)).get();
    expect(row!.isDefault).toBe(true);
    expect(row!.profile).toEqual({
      name: "Bench meter",
      voltage: [
        { fullScale: 0.6, resolution: 0.0001, pctOfReading: 0.5, counts: 2 },
        { fullScale: 6, resolution: 0.001, pctOfReading: 0.5, counts: 2 },
      ],
      resistance: [{ fullScale: 600, resolution: 0.1, pctOfReading: 0.9, counts: 5 }],
    });
  });

  it("refuses a malformed line with its line number and stores nothing; tech and desk get 403", async () => {
    const shop = await createShopWithRoles();
    const r = await call(meters.action, {
      request: formRequest(
        "/settings/meters",
        { name: "Bad", voltage: "6V, 1mV, 0.5, 2\n6V, 1mV" },
        shop.cookies.owner,
      ),
    });
    expect(r.status).toBe(400);
    expect(JSON.stringify(r.data)).toContain("Line 2");
    expect(await db.select().from(meterProfiles).where(eq(meterProfiles.shopId, shop.shopId)).all()).toEqual(
      [],
    );
    for (const role of ["tech", "desk"] as const) {
      const l = await call(meters.loader, { request: getRequest("/settings/meters", shop.cookies[role]) });
      expect(l.status).toBe(403);
    }
  });
});
