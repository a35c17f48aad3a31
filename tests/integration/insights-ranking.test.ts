import { describe, expect, it } from "vitest";
import { failureRate } from "~/lib/engine";
import { parseInsightsFilter } from "~/lib/insights-filters";
import { db } from "~/server/db.server";
import { newId } from "~/server/ids.server";
import { getHotSpots } from "~/server/insights.server";
import { indexMapVersionNodes } from "~/server/map-version-nodes.server";
import { findings, maps, mapVersions, runs } from "~/server/schema.server";
import { createShopWithRoles } from "../support/fixtures";

describe("Wilson interval used by the insights", () => {
  // Check values: Newcombe, Statistics in Medicine 17:857–872 (1998), recomputed; formula from the
  // NIST/SEMATECH e-Handbook of Statistical Methods §7.2.4.1 (Wilson 1927), z = 1.959964.
  it.each([
    [81, 263, 0.2553, 0.3662],
    [15, 148, 0.0624, 0.1605],
    [0, 20, 0, 0.1611],
    [1, 29, 0.0061, 0.1718],
  ])("%i/%i → %f–%f", (k, n, low, high) => {
    const r = failureRate(k, n);
    expect(r.ok).toBe(true);
    if (!r.ok) return;
    expect(r.value.low).toBeCloseTo(low, 4);
    expect(r.value.high).toBeCloseTo(high, 4);
  });
});

describe("hot spot ranking", () => {
  it("does not rank 2 failures in 3 runs above 40 in 100 (lower bound first)", async () => {
    const shop = await createShopWithRoles("Ranking Shop");
    const mapId = newId();
    await db.insert(maps).values({ id: mapId, shopId: shop.shopId, boardId: shop.boardId, name: "Power-up" });
    const part = (id: string) => ({
      id,
      kind: "part",
      name: `Part ${id}`,
      partType: "regulator",
      refdes: id,
      fixes: [],
    });
    // Version 1 holds p-common; version 2 holds only p-rare, so their denominators are 100 and 3.
    const v1 = newId();
    const v2 = newId();
    for (const [id, number, nodes] of [
      [v1, 1, [part("p-common")]],
      [v2, 2, [part("p-rare")]],
    ] as const) {
      const doc = { format: "railwise.map", version: 1, settings: { strategy: "order" }, nodes, edges: [] };
      await db.insert(mapVersions).values({ id, shopId: shop.shopId, mapId, number, document: doc });
      await indexMapVersionNodes(db, id, doc);
    }
    const runRows: Array<typeof runs.$inferInsert> = [];
    const findingRows: Array<typeof findings.$inferInsert> = [];
    const add = (version: string, nodeId: string | null) => {
      const id = newId();
      runRows.push({
        id,
        shopId: shop.shopId,
        boardId: shop.boardId,
        mapVersionId: version,
        techId: shop.userIds.tech,
        strategy: "order",
        condition: { sourcesAttached: [] },
        status: "closed",
        outcome: "powers-on",
        startedAt: new Date("2026-05-01T10:00:00Z"),
      });
      findingRows.push({
        id: newId(),
        shopId: shop.shopId,
        runId: id,
        boardId: shop.boardId,
        mapVersionId: version,
        kind: nodeId ? "part" : "no-fault-found",
        nodeId,
      });
    };
    for (let i = 0; i < 100; i++) add(v1, i < 40 ? "p-common" : null);
    for (let i = 0; i < 3; i++) add(v2, i < 2 ? "p-rare" : null);
    await db.insert(runs).values(runRows);
    await db.insert(findings).values(findingRows);

    const { filter } = parseInsightsFilter(new URLSearchParams("from=2026-05-01&to=2026-05-31"));
    const rows = await getHotSpots(db, shop.shopId, filter);
    expect(rows.map((r) => [r.nodeId, r.failures, r.runs])).toEqual([
      ["p-common", 40, 100],
      ["p-rare", 2, 3],
    ]);
    // The raw rate would have put 2/3 (66.7 %) first; the lower bounds are about 0.31 and 0.21.
    expect(rows[1].rate).toBeGreaterThan(rows[0].rate);
    expect(rows[0].low).toBeGreaterThan(rows[1].low);
  });
});
