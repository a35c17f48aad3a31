import { eq } from "drizzle-orm";
import { describe, expect, it } from "vitest";
import { mapFromJson } from "~/lib/engine";
import * as compare from "~/routes/map-compare";
import * as exporter from "~/routes/map-export";
import { db } from "~/server/db.server";
import { maps, mapVersions } from "~/server/schema.server";
import { createShopWithRoles } from "../support/fixtures";
import { load, newMap, post, puts, rail, save, src, validBase } from "../support/maps";
import { call, getRequest } from "../support/requests";

async function publishedMap() {
  const shop = await createShopWithRoles();
  const mapId = await newMap(shop.shopId, shop.boardId, shop.userIds.lead);
  await save(mapId, shop.cookies.lead, 0, puts(validBase()));
  const p1 = await post(mapId, shop.cookies.lead, { intent: "publish", revision: "1", note: "first" });
  expect(p1.status).toBe(200);
  return { shop, mapId };
}

describe("versions", () => {
  it("numbers versions, keeps each one unchanged by later draft edits, and compares them", async () => {
    const { shop, mapId } = await publishedMap();
    await save(mapId, shop.cookies.lead, 1, [
      { op: "put-node", node: src("battery") },
      { op: "put-edge", edge: { id: "battery--vin", from: "battery", to: "vin", kind: "supplies" } },
      { op: "put-node", node: rail("v3", 3.3, { name: "3V3_MAIN" }) },
      { op: "remove-node", id: "zzz-not-there" },
    ]);
    const p2 = await post(mapId, shop.cookies.lead, { intent: "publish", revision: "2", note: "battery" });
    expect(p2.data).toMatchObject({ ok: true, published: 2 });
    const rows = await db.select().from(mapVersions).where(eq(mapVersions.mapId, mapId)).all();
    expect(rows.map((r) => r.number).sort()).toEqual([1, 2]);
    const v1 = rows.find((r) => r.number === 1)!;
    expect((v1.document as { nodes: unknown[] }).nodes).toHaveLength(4);

    const diff = await call(compare.loader, {
      request: getRequest(`/maps/${mapId}/compare?a=1&b=2`, shop.cookies.tech),
      params: { mapId },
    });
    expect(diff.status).toBe(200);
    const d = diff.data as {
      added: Array<{ id: string }>;
      removed: unknown[];
      changed: Array<{ id: string; fields: string[] }>;
      edgesAdded: number;
    };
    expect(d.added.map((n) => n.id)).toEqual(["battery"]);
    expect(d.removed).toEqual([]);
    expect(d.changed).toEqual([expect.objectContaining({ id: "v3", fields: ["name"] })]);
    expect(d.edgesAdded).toBe(1);
  });

  it("starts a new draft from an older version", async () => {
    const { shop, mapId } = await publishedMap();
    await save(mapId, shop.cookies.lead, 1, [
      { op: "remove-node", id: "v3" },
      { op: "remove-edge", id: "u1--v3" },
    ]);
    const r = await post(mapId, shop.cookies.lead, {
      intent: "draft-from-version",
      revision: "2",
      number: "1",
    });
    expect(r.data).toMatchObject({ ok: true, revision: 3 });
    const doc = (await load(mapId, shop.cookies.lead)).data!.doc;
    expect(doc.nodes.map((n) => n.id)).toContain("v3");
  });

  it("exports a version as a map document the engine reads back", async () => {
    const { shop, mapId } = await publishedMap();
    const r = await call(exporter.loader, {
      request: getRequest(`/maps/${mapId}/export?version=1`, shop.cookies.desk),
      params: { mapId },
    });
    expect(r.status).toBe(200);
    expect(r.response!.headers.get("Content-Disposition")).toMatch(
      /attachment; filename=".*-v1\.railwise-map\.json"/,
    );
    const text = await r.response!.text();
    const back = mapFromJson(text);
    expect(back.ok).toBe(true);
    if (back.ok) expect(back.value.nodes).toHaveLength(4);
    const missing = await call(exporter.loader, {
      request: getRequest(`/maps/${mapId}/export?version=9`, shop.cookies.desk),
      params: { mapId },
    });
    expect(missing.status).toBe(404);
  });

  it("refuses to publish an empty map", async () => {
    const shop = await createShopWithRoles();
    const mapId = await newMap(shop.shopId, shop.boardId, shop.userIds.lead);
    const r = await post(mapId, shop.cookies.lead, { intent: "publish", revision: "0", note: "nothing" });
    expect(r.status).toBe(422);
  });
});

describe("import", () => {
  async function expectNothingWritten(mapId: string, revision: number) {
    const row = await db.select().from(maps).where(eq(maps.id, mapId)).get();
    expect(row!.draftRevision).toBe(revision);
    expect((row!.draft as { nodes: unknown[] }).nodes).toHaveLength(4);
  }

  it("refuses malformed JSON, an oversize file and a map with errors, and writes nothing", async () => {
    const { shop, mapId } = await publishedMap();
    const bad = await post(mapId, shop.cookies.lead, { intent: "import", revision: "1", json: "{ not json" });
    expect(bad.status).toBe(400);
    expect((bad.data as { message: string }).message).toMatch(/not valid JSON.*Nothing was changed/);
    const huge = await post(mapId, shop.cookies.lead, {
      intent: "import",
      revision: "1",
      json: " ".repeat(2_000_001),
    });
    expect(huge.status).toBe(413);
    const wrongShape = await post(mapId, shop.cookies.lead, {
      intent: "import",
      revision: "1",
      json: JSON.stringify({ format: "something-else", nodes: [] }),
    });
    expect(wrongShape.status).toBe(400);
    const g = validBase();
    const withError = {
      format: "railwise.map",
      version: 1,
      settings: { strategy: "best" },
      nodes: [...g.nodes, rail("alone")],
      edges: g.edges,
    };
    const invalid = await post(mapId, shop.cookies.lead, {
      intent: "import",
      revision: "1",
      json: JSON.stringify(withError),
    });
    expect(invalid.status).toBe(422);
    await expectNothingWritten(mapId, 1);
  });

  it("imports a valid document into the draft", async () => {
    const { shop, mapId } = await publishedMap();
    const g = validBase();
    const doc = {
      format: "railwise.map",
      version: 1,
      settings: { strategy: "split" },
      nodes: g.nodes.slice(0, 2),
      edges: g.edges.slice(0, 1),
    };
    const r = await post(mapId, shop.cookies.lead, {
      intent: "import",
      revision: "1",
      json: JSON.stringify(doc),
    });
    expect(r.data).toMatchObject({ ok: true, revision: 2 });
    const loaded = (await load(mapId, shop.cookies.lead)).data!.doc;
    expect(loaded.settings.strategy).toBe("split");
    expect(loaded.nodes).toHaveLength(2);
  });

  it("refuses import from the desk", async () => {
    const { shop, mapId } = await publishedMap();
    const r = await post(mapId, shop.cookies.desk, { intent: "import", revision: "1", json: "{}" });
    expect(r.status).toBe(403);
    await expectNothingWritten(mapId, 1);
  });
});

describe("version node index", () => {
  it("writes the published version's nodes in the same batch as the version", async () => {
    const { mapId } = await publishedMap();
    const { mapVersionNodes } = await import("~/server/schema.server");
    const v = await db.select().from(mapVersions).where(eq(mapVersions.mapId, mapId)).get();
    const rows = await db.select().from(mapVersionNodes).where(eq(mapVersionNodes.mapVersionId, v!.id)).all();
    expect(rows.map((r) => r.nodeId).sort()).toEqual(["chg", "u1", "v3", "vin"]);
    expect(rows.find((r) => r.nodeId === "u1")?.refdes).toBe("U1");
  });
});
