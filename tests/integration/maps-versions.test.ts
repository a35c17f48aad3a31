import { eq } from "drizzle-orm";
import { describe, expect, it } from "vitest";
import { type MapDocument, type MapNode, mapFromJson } from "~/lib/engine";
import * as compare from "~/routes/map-compare";
import * as editor from "~/routes/map-editor";
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

  it("starts a new draft from an older version, asking first when the draft has unpublished changes", async () => {
    const { shop, mapId } = await publishedMap();
    await save(mapId, shop.cookies.lead, 1, [
      { op: "remove-node", id: "v3" },
      { op: "remove-edge", id: "u1--v3" },
    ]);
    const asked = await post(mapId, shop.cookies.lead, {
      intent: "draft-from-version",
      revision: "2",
      number: "1",
    });
    expect(asked.status).toBe(409);
    expect(asked.data).toMatchObject({ ok: false, needsConfirm: true, revision: 2 });
    const message = (asked.data as { message: string }).message;
    expect(message).toMatch(/since version 1: 1 node removed, 1 link added or removed/);
    expect(message).not.toMatch(/Another lead/);
    expect((await db.select().from(maps).where(eq(maps.id, mapId)).get())!.draftRevision).toBe(2);

    const r = await post(mapId, shop.cookies.lead, {
      intent: "draft-from-version",
      revision: "2",
      number: "1",
      confirm: "1",
    });
    expect(r.data).toMatchObject({ ok: true, revision: 3 });
    const doc = (await load(mapId, shop.cookies.lead)).data!.doc;
    expect(doc.nodes.map((n) => n.id)).toContain("v3");
  });

  it("starts a new draft without asking when the draft is exactly a published version", async () => {
    const { shop, mapId } = await publishedMap();
    await save(mapId, shop.cookies.lead, 1, [{ op: "put-node", node: src("battery") }]);
    const p2 = await post(mapId, shop.cookies.lead, { intent: "publish", revision: "2", note: "battery" });
    expect(p2.data).toMatchObject({ ok: true, published: 2 });
    // Just published: nothing to lose.
    const back = await post(mapId, shop.cookies.lead, {
      intent: "draft-from-version",
      revision: "2",
      number: "1",
    });
    expect(back.data).toMatchObject({ ok: true, revision: 3 });
    // The draft is now version 1 (not the latest), still nothing to lose.
    const forward = await post(mapId, shop.cookies.lead, {
      intent: "draft-from-version",
      revision: "3",
      number: "2",
    });
    expect(forward.data).toMatchObject({ ok: true, revision: 4 });
    // Moving one node on the canvas is a change worth asking about.
    const moved = { ...(src("battery") as object), position: { x: 500, y: 40 } } as MapNode;
    await save(mapId, shop.cookies.lead, 4, [{ op: "put-node", node: moved }]);
    const ask = await post(mapId, shop.cookies.lead, {
      intent: "draft-from-version",
      revision: "5",
      number: "1",
    });
    expect(ask.status).toBe(409);
    expect((ask.data as { message: string }).message).toMatch(/1 node moved/);
  });

  it("answers a stale revision with a conflict before asking anything", async () => {
    const { shop, mapId } = await publishedMap();
    const r = await post(mapId, shop.cookies.lead, {
      intent: "draft-from-version",
      revision: "0",
      number: "1",
    });
    expect(r.status).toBe(409);
    expect(r.data).toMatchObject({ conflict: true, revision: 1 });
  });

  it("shows a published version read-only through the editor's loader, and refuses a bad number", async () => {
    const { shop, mapId } = await publishedMap();
    await save(mapId, shop.cookies.lead, 1, [{ op: "put-node", node: src("draft-only") }]);
    const v1 = await call(editor.loader, {
      request: getRequest(`/maps/${mapId}?version=1`, shop.cookies.desk),
      params: { mapId },
    });
    expect(v1.status).toBe(200);
    const d = v1.data as { doc: MapDocument; viewing: { number: number; note: string } };
    expect(d.viewing).toMatchObject({ number: 1, note: "first" });
    expect(d.doc.nodes.map((n) => n.id).sort()).toEqual(["chg", "u1", "v3", "vin"]);
    // Laid out for the canvas even though the version was stored without positions.
    expect(d.doc.nodes.every((n) => n.position)).toBe(true);
    const draft = (await load(mapId, shop.cookies.desk)).data as unknown as {
      viewing: null;
      doc: MapDocument;
    };
    expect(draft.viewing).toBeNull();
    expect(draft.doc.nodes.map((n) => n.id)).toContain("draft-only");
    for (const [q, status] of [
      ["9", 404],
      ["0", 400],
      ["two", 400],
    ] as const) {
      const r = await call(editor.loader, {
        request: getRequest(`/maps/${mapId}?version=${q}`, shop.cookies.lead),
        params: { mapId },
      });
      expect(r.status, q).toBe(status);
    }
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
