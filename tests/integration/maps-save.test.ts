import { eq } from "drizzle-orm";
import { describe, expect, it } from "vitest";
import { type IssueCode, type MapNode, validateMap } from "~/lib/engine";
import type { MapChange } from "~/lib/map-changes";
import { db } from "~/server/db.server";
import { maps } from "~/server/schema.server";
import { createShopWithRoles } from "../support/fixtures";
import * as editor from "~/routes/map-editor";
import { edge, load, newMap, part, post, puts, rail, save, src, validBase } from "../support/maps";
import { call } from "../support/requests";

type Shop = Awaited<ReturnType<typeof createShopWithRoles>>;

async function freshMap(shop: Shop) {
  return newMap(shop.shopId, shop.boardId, shop.userIds.lead);
}

async function draftRow(mapId: string) {
  return db.select().from(maps).where(eq(maps.id, mapId)).get();
}

/** Saves `changes` on a new map through the editor's action, then asks the engine what the stored draft has. */
async function saveAndReport(shop: Shop, changes: MapChange[]) {
  const mapId = await freshMap(shop);
  const saved = await save(mapId, shop.cookies.lead, 0, changes);
  expect(saved.status).toBe(200);
  expect(saved.data).toEqual({ ok: true, revision: 1 });
  const loaded = await load(mapId, shop.cookies.lead);
  const report = validateMap(loaded.data!.doc);
  if (!report.ok) throw new Error(report.error.message);
  const publish = await post(mapId, shop.cookies.lead, { intent: "publish", revision: "1", note: "try" });
  return { mapId, report: report.value, publish };
}

// Each graph rule of the engine's validateMap, produced by a change-set saved through the editor's action.
const base = validBase();
const RULES: Array<{ code: IssueCode; severity: "error" | "warning"; changes: () => MapChange[] }> = [
  {
    code: "dangling-edge",
    severity: "error",
    changes: () => [...puts(base), { op: "put-edge", edge: edge("drives", "u1", "ghost") }],
  },
  {
    code: "wrong-edge-kind",
    severity: "error",
    // A source straight to a part: "supplies" must go source → net.
    changes: () => [...puts(base), { op: "put-edge", edge: edge("supplies", "chg", "u1", "bad-kind") }],
  },
  {
    code: "cycle",
    severity: "error",
    changes: () => [...puts(base), { op: "put-edge", edge: edge("feeds", "v3", "u1") }],
  },
  {
    code: "net-no-driver",
    severity: "error",
    changes: () => [...puts(base), { op: "put-node", node: rail("lonely", 5) }],
  },
  {
    code: "multiple-drivers",
    severity: "error",
    changes: () => [
      ...puts(base),
      { op: "put-node", node: part("u2", "U2") },
      { op: "put-edge", edge: edge("feeds", "vin", "u2") },
      { op: "put-edge", edge: edge("drives", "u2", "v3") },
    ],
  },
  {
    code: "part-no-output",
    severity: "error",
    changes: () => [
      ...puts(base),
      { op: "put-node", node: part("u9", "U9") },
      { op: "put-edge", edge: edge("feeds", "vin", "u9") },
    ],
  },
  {
    code: "part-no-input",
    severity: "warning",
    changes: () => [
      ...puts({ nodes: base.nodes.filter((n) => n.id !== "v3"), edges: base.edges.slice(0, 2) }),
      { op: "put-node", node: part("u5", "U5") },
      { op: "put-node", node: rail("v5", 5) },
      { op: "put-edge", edge: edge("drives", "u5", "v5") },
      { op: "put-node", node: rail("v3", 3.3) },
      { op: "put-edge", edge: edge("drives", "u1", "v3") },
    ],
  },
  {
    code: "net-no-expected",
    severity: "error",
    changes: () => [
      ...puts(base),
      { op: "put-node", node: { ...(rail("v3") as object), expected: {} } as MapNode },
    ],
  },
  {
    code: "duplicate-refdes",
    severity: "error",
    changes: () => [
      ...puts(base),
      { op: "put-node", node: part("u2", "u1") },
      { op: "put-node", node: rail("v5", 5) },
      { op: "put-edge", edge: edge("feeds", "vin", "u2") },
      { op: "put-edge", edge: edge("drives", "u2", "v5") },
    ],
  },
  {
    code: "stage-order",
    severity: "error",
    // An S0 (working) input feeding the part that makes an S5 (soft-off) rail is backwards.
    changes: () =>
      puts({
        nodes: [
          src("chg"),
          rail("vin", 19, { stage: "S0" }),
          part("u1", "U1"),
          rail("v3", 3.3, { stage: "S5" }),
        ],
        edges: base.edges,
      }),
  },
  {
    code: "unreachable",
    severity: "error",
    changes: () => [
      ...puts(base),
      { op: "put-node", node: part("u7", "U7") },
      { op: "put-node", node: rail("v7", 1.8) },
      { op: "put-node", node: part("u8", "U8") },
      { op: "put-node", node: rail("v8", 1.2) },
      { op: "put-edge", edge: edge("drives", "u7", "v7") },
      { op: "put-edge", edge: edge("feeds", "v7", "u8") },
      { op: "put-edge", edge: edge("drives", "u8", "v8") },
      { op: "put-edge", edge: edge("feeds", "v8", "u7") },
    ],
  },
  {
    code: "duplicate-edge",
    severity: "warning",
    changes: () => [...puts(base), { op: "put-edge", edge: edge("drives", "u1", "v3", "again") }],
  },
  {
    code: "window-below-threshold",
    severity: "warning",
    // 0.2 Ω..1 kΩ starts below the default 1 Ω shorted threshold, so a healthy rail could read as shorted.
    changes: () => [
      ...puts(base),
      {
        op: "put-node",
        node: rail("v3", 3.3, {
          expected: { voltage: { nominal: 3.3, tolerancePct: 5 }, resistance: { min: 0.2, max: 1000 } },
        } as Partial<MapNode>),
      },
    ],
  },
  {
    code: "source-no-output",
    severity: "warning",
    changes: () => [...puts(base), { op: "put-node", node: src("button") }],
  },
  {
    code: "nominal-outside-expected",
    severity: "warning",
    changes: () => [
      ...puts(base),
      {
        op: "put-node",
        node: rail("v3", 3.3, { expected: { voltage: { min: 4.5, max: 5.5 } } } as Partial<MapNode>),
      },
    ],
  },
];

describe("the editor's save action and the engine's rules", () => {
  it("saves a valid map as a change-set, answers with the new revision only, and publishes version 1", async () => {
    const shop = await createShopWithRoles();
    const mapId = await freshMap(shop);
    const r = await save(mapId, shop.cookies.lead, 0, puts(validBase()));
    expect(r).toMatchObject({ status: 200, data: { ok: true, revision: 1 } });
    // Small answer: the revision, not the document.
    expect(JSON.stringify(r.data).length).toBeLessThan(60);
    const loaded = await load(mapId, shop.cookies.lead);
    expect(loaded.data!.doc.nodes.map((n) => n.id)).toEqual(["chg", "vin", "u1", "v3"]);
    const p = await post(mapId, shop.cookies.lead, { intent: "publish", revision: "1", note: "first" });
    expect(p.status).toBe(200);
    expect(p.data).toMatchObject({ ok: true, published: 1 });
  });

  for (const rule of RULES) {
    it(`reports ${rule.code} (${rule.severity}) for a draft saved through the action; publish ${rule.severity === "error" ? "refuses" : "allows"} it`, async () => {
      const shop = await createShopWithRoles();
      const { report, publish } = await saveAndReport(shop, rule.changes());
      const hit = report.issues.find((i) => i.code === rule.code);
      expect(hit, JSON.stringify(report.issues)).toBeDefined();
      expect(hit!.severity).toBe(rule.severity);
      if (rule.severity === "error") {
        expect(publish.status).toBe(422);
        const issues = (publish.data as { issues: Array<{ code: string }> }).issues;
        expect(issues.map((i) => i.code)).toContain(rule.code);
      } else {
        expect(publish.status).toBe(200);
      }
    });
  }

  it("refuses a change whose node breaks the document schema and writes nothing", async () => {
    const shop = await createShopWithRoles();
    const mapId = await freshMap(shop);
    const bad = { op: "put-node", node: { id: "x", kind: "rail", name: "X", nominalV: 3.3 } };
    const r = await save(mapId, shop.cookies.lead, 0, [bad]);
    expect(r.status).toBe(400);
    expect((r.data as { message: string }).message).toMatch(/could not be saved/);
    expect((await draftRow(mapId))!.draftRevision).toBe(0);
  });

  it("refuses a draft over the engine's node limit (too-large) and writes nothing", async () => {
    const shop = await createShopWithRoles();
    const mapId = await freshMap(shop);
    const many = Array.from({ length: 2001 }, (_, i) => ({ op: "put-node", node: src(`s${i}`) }));
    const r = await save(mapId, shop.cookies.lead, 0, many);
    expect(r.status).toBe(400);
    expect((r.data as { message: string }).message).toMatch(/at most 2000/);
    expect((await draftRow(mapId))!.draftRevision).toBe(0);
  });

  it("catches duplicate ids (not reachable by a change-set) on import, which refuses them", async () => {
    const shop = await createShopWithRoles();
    const mapId = await freshMap(shop);
    const g = validBase();
    const doc = {
      format: "railwise.map",
      version: 1,
      settings: { strategy: "best" },
      nodes: [...g.nodes, src("chg")],
      edges: g.edges,
    };
    const r = await post(mapId, shop.cookies.lead, {
      intent: "import",
      revision: "0",
      json: JSON.stringify(doc),
    });
    expect(r.status).toBe(422);
    expect((r.data as { issues: Array<{ code: string }> }).issues.map((i) => i.code)).toContain(
      "duplicate-id",
    );
    expect((await draftRow(mapId))!.draftRevision).toBe(0);
  });

  it("saves a part's safety notes and a fix whose label was edited after it was added", async () => {
    const shop = await createShopWithRoles();
    const mapId = await freshMap(shop);
    await save(mapId, shop.cookies.lead, 0, puts(validBase()));
    const edited = {
      ...(part("u1", "U1") as object),
      fixes: [{ id: "replace", kind: "replace", label: "Replace U1 (check the input cap too)" }],
      safetyNotes: "Disconnect the battery before hot air here.",
    } as MapNode;
    const r = await save(mapId, shop.cookies.lead, 1, [{ op: "put-node", node: edited }]);
    expect(r.data).toEqual({ ok: true, revision: 2 });
    const u1 = (await load(mapId, shop.cookies.lead)).data!.doc.nodes.find((n) => n.id === "u1");
    expect(u1).toMatchObject({
      safetyNotes: "Disconnect the battery before hot air here.",
      fixes: [{ id: "replace", kind: "replace", label: "Replace U1 (check the input cap too)" }],
    });
    // An empty fix label or over-long notes are refused and leave the draft as it was.
    for (const bad of [
      { ...edited, fixes: [{ id: "replace", kind: "replace", label: "x".repeat(201) }] },
      { ...edited, safetyNotes: "x".repeat(4001) },
    ]) {
      const refused = await save(mapId, shop.cookies.lead, 2, [{ op: "put-node", node: bad }]);
      expect(refused.status).toBe(400);
    }
    expect((await draftRow(mapId))!.draftRevision).toBe(2);
  });

  it("applies removals and updates by id", async () => {
    const shop = await createShopWithRoles();
    const mapId = await freshMap(shop);
    await save(mapId, shop.cookies.lead, 0, puts(validBase()));
    const r = await save(mapId, shop.cookies.lead, 1, [
      { op: "remove-edge", id: "u1--v3" },
      { op: "remove-node", id: "v3" },
      { op: "put-node", node: { ...(part("u1", "U1") as object), name: "Input regulator" } },
      { op: "settings", settings: { strategy: "order", missingThresholdV: 0.2 } },
    ]);
    expect(r.data).toEqual({ ok: true, revision: 2 });
    const doc = (await load(mapId, shop.cookies.lead)).data!.doc;
    expect(doc.nodes.map((n) => n.id)).toEqual(["chg", "vin", "u1"]);
    expect(doc.nodes[2].name).toBe("Input regulator");
    expect(doc.edges.map((e) => e.id)).toEqual(["chg--vin", "vin--u1"]);
    expect(doc.settings).toEqual({ strategy: "order", missingThresholdV: 0.2 });
  });
});

describe("concurrency, roles and tenancy", () => {
  it("answers 409 to a save based on a stale revision and keeps the other lead's change", async () => {
    const shop = await createShopWithRoles();
    const mapId = await freshMap(shop);
    const first = await save(mapId, shop.cookies.lead, 0, puts(validBase()));
    expect(first.status).toBe(200);
    // The owner (also allowed to edit) saves on top of revision 1 ...
    const other = await save(mapId, shop.cookies.owner, 1, [{ op: "put-node", node: src("battery") }]);
    expect(other.data).toEqual({ ok: true, revision: 2 });
    // ... while the lead still works from revision 1.
    const stale = await save(mapId, shop.cookies.lead, 1, [{ op: "remove-node", id: "chg" }]);
    expect(stale.status).toBe(409);
    expect(stale.data).toMatchObject({ ok: false, conflict: true, revision: 2 });
    expect((stale.data as { message: string }).message).toMatch(/Another lead changed this map/);
    const row = await draftRow(mapId);
    expect(row!.draftRevision).toBe(2);
    expect((row!.draft as { nodes: Array<{ id: string }> }).nodes.map((n) => n.id)).toContain("chg");
    // Publishing from a stale revision is refused too.
    const pub = await post(mapId, shop.cookies.lead, { intent: "publish", revision: "1", note: "stale" });
    expect(pub.status).toBe(409);
  });

  it("lets desk and tech read the map but refuses their saves with 403", async () => {
    const shop = await createShopWithRoles();
    const mapId = await freshMap(shop);
    await save(mapId, shop.cookies.lead, 0, puts(validBase()));
    for (const role of ["desk", "tech"] as const) {
      const read = await load(mapId, shop.cookies[role]);
      expect(read.status).toBe(200);
      const r = await save(mapId, shop.cookies[role], 1, [{ op: "remove-node", id: "chg" }]);
      expect(r.status).toBe(403);
      const p = await post(mapId, shop.cookies[role], { intent: "publish", revision: "1", note: "x" });
      expect(p.status).toBe(403);
    }
    expect((await draftRow(mapId))!.draftRevision).toBe(1);
  });

  it("answers 404 for another shop's map, to its loader and its action", async () => {
    const a = await createShopWithRoles("Shop A");
    const b = await createShopWithRoles("Shop B");
    const mapId = await freshMap(a);
    expect((await load(mapId, b.cookies.lead)).status).toBe(404);
    const r = await save(mapId, b.cookies.lead, 0, puts(validBase()));
    expect(r.status).toBe(404);
    expect((await draftRow(mapId))!.draftRevision).toBe(0);
  });
});

describe("oversize request bodies", () => {
  const url = (mapId: string) => `http://railwise.test/maps/${mapId}`;
  /** A body that counts what the action pulls from it: `chunks` pieces of 64 kB. */
  function countedStream(chunks: number) {
    const seen = { bytes: 0 };
    const piece = new TextEncoder().encode("x".repeat(64_000));
    let left = chunks;
    const stream = new ReadableStream<Uint8Array>(
      {
        pull(c) {
          if (left-- <= 0) return c.close();
          seen.bytes += piece.byteLength;
          c.enqueue(piece);
        },
      },
      { highWaterMark: 0 },
    );
    return { stream, seen };
  }
  const refusal = (r: { data?: unknown }) => r.data as { ok: boolean; message: string };

  it("refuses a body whose Content-Length is over the limit before reading it, and writes nothing", async () => {
    const shop = await createShopWithRoles();
    const mapId = await freshMap(shop);
    const limit = editor.maxEditorBodyBytes("application/x-www-form-urlencoded");
    const { stream, seen } = countedStream(200);
    const request = new Request(url(mapId), {
      method: "POST",
      body: stream,
      duplex: "half",
      headers: {
        Cookie: shop.cookies.lead,
        "Content-Type": "application/x-www-form-urlencoded",
        "Content-Length": String(limit + 1),
      },
    } as RequestInit);
    const r = await call(editor.action, { request, params: { mapId } });
    expect(r.status).toBe(413);
    expect(refusal(r).ok).toBe(false);
    expect(refusal(r).message).toMatch(/at most 2 MB of map data.*Nothing was changed/);
    expect(seen.bytes).toBe(0);
    expect((await draftRow(mapId))!.draftRevision).toBe(0);
  });

  it("stops reading a chunked body (no Content-Length) once it passes the limit, and writes nothing", async () => {
    const shop = await createShopWithRoles();
    const mapId = await freshMap(shop);
    const limit = editor.maxEditorBodyBytes("application/x-www-form-urlencoded");
    // 20 MB offered; the action must give up soon after the limit rather than buffer it all.
    const { stream, seen } = countedStream(Math.ceil(20_000_000 / 64_000));
    const request = new Request(url(mapId), {
      method: "POST",
      body: stream,
      duplex: "half",
      headers: { Cookie: shop.cookies.lead, "Content-Type": "application/x-www-form-urlencoded" },
    } as RequestInit);
    expect(request.headers.get("Content-Length")).toBeNull();
    const r = await call(editor.action, { request, params: { mapId } });
    expect(r.status).toBe(413);
    expect(refusal(r).message).toMatch(/Nothing was changed/);
    expect(seen.bytes).toBeGreaterThan(limit);
    expect(seen.bytes).toBeLessThanOrEqual(limit + 64_000);
    expect((await draftRow(mapId))!.draftRevision).toBe(0);
  });

  it("refuses a multipart import over 2 MB by its length, and still imports a small one sent the same way", async () => {
    const shop = await createShopWithRoles();
    const mapId = await freshMap(shop);
    const multipart = async (json: string) => {
      const fd = new FormData();
      fd.set("intent", "import");
      fd.set("revision", "0");
      fd.set("json", json);
      const encoded = new Response(fd);
      const bytes = new Uint8Array(await encoded.arrayBuffer());
      return new Request(url(mapId), {
        method: "POST",
        body: bytes,
        headers: {
          Cookie: shop.cookies.lead,
          "Content-Type": encoded.headers.get("Content-Type")!,
          "Content-Length": String(bytes.byteLength),
        },
      });
    };
    const g = validBase();
    const doc = { format: "railwise.map", version: 1, settings: { strategy: "best" }, ...g };
    // A valid document padded past 2 MB with whitespace, which JSON allows between tokens.
    const big = JSON.stringify(doc).replace("{", `{${" ".repeat(2_100_000)}`);
    const tooBig = await call(editor.action, { request: await multipart(big), params: { mapId } });
    expect(tooBig.status).toBe(413);
    expect(refusal(tooBig).message).toMatch(/The request is 2\.\d MB; the map editor takes at most 2 MB/);
    expect((await draftRow(mapId))!.draftRevision).toBe(0);

    const ok = await call(editor.action, {
      request: await multipart(JSON.stringify(doc)),
      params: { mapId },
    });
    expect(ok.status).toBe(200);
    expect((await draftRow(mapId))!.draftRevision).toBe(1);
  });
});
