import { db } from "~/server/db.server";
import { indexMapVersionNodes } from "~/server/map-version-nodes.server";
import { newId } from "~/server/ids.server";
import { boards, findings, jobs, maps, mapVersions, readings, runs } from "~/server/schema.server";
import { createShopWithRoles } from "./fixtures";

// A small, fully known history for the insights tests (expected counts are worked out in the test file).

const node = (
  id: string,
  kind: "source" | "rail" | "part",
  name: string,
  refdes?: string,
  extra: { value?: string; package?: string } = {},
) =>
  kind === "part"
    ? { id, kind, name, partType: "regulator", refdes: refdes ?? id.toUpperCase(), ...extra, fixes: [] }
    : kind === "rail"
      ? {
          id,
          kind,
          name,
          nominalV: 3.3,
          tolerancePct: 5,
          expected: { voltage: { nominal: 3.3, tolerancePct: 5 } },
          probe: { text: "pad", seconds: 10, needsDisassembly: false },
        }
      : { id, kind, name };

export const DOC_A = {
  format: "railwise.map",
  version: 1,
  settings: { strategy: "order" },
  nodes: [
    node("src-in", "source", "Adapter"),
    node("vin", "rail", "VIN"),
    node("u1", "part", "Main buck", "U1", { value: "3 A buck", package: "QFN-16" }),
    node("v1", "rail", "V1"),
    node("u2", "part", "Core LDO", "U2"),
    node("v2", "rail", "V2"),
  ],
  edges: [
    { id: "e1", from: "src-in", to: "vin", kind: "supplies" },
    { id: "e2", from: "vin", to: "u1", kind: "feeds" },
    { id: "e3", from: "u1", to: "v1", kind: "drives" },
    { id: "e4", from: "v1", to: "u2", kind: "feeds" },
    { id: "e5", from: "u2", to: "v2", kind: "drives" },
  ],
};
export const DOC_B = {
  ...DOC_A,
  nodes: [
    ...DOC_A.nodes,
    node("u3", "part", "Aux switch", "U3", { package: "SOT-23" }),
    node("v3", "rail", "V3"),
  ],
  edges: [
    ...DOC_A.edges,
    { id: "e6", from: "v1", to: "u3", kind: "feeds" },
    { id: "e7", from: "u3", to: "v3", kind: "drives" },
  ],
};
// Another revision of the same model, with its own ids but matching names.
const DOC_C = {
  ...DOC_A,
  nodes: [
    node("bin", "rail", "VIN"),
    node("bx", "part", "Main buck", "U7", { value: "3 A buck", package: "QFN-16" }),
    node("nv1", "rail", "V1"),
  ],
  edges: [],
};

const MIN = 60_000;
export const at = (iso: string) => new Date(`${iso}T10:00:00Z`);

type RunSpec = {
  version: string;
  board?: string;
  day: string;
  tech: "tech" | "lead";
  strategy?: "order" | "split" | "best";
  status?: "open" | "closed" | "no-fault-found";
  outcome?: "powers-on" | "still-dead" | "new-symptom" | null;
  isolatedAfterMin?: number;
  finding?: { kind: "part" | "short" | "no-fault-found"; nodeId?: string; fix?: string; parts?: string[] };
  readings?: Array<{ net: string; skipped?: boolean; correction?: boolean }>;
  escalateAfter?: number;
  serial?: string;
};

export async function createInsightsFixture() {
  const shop = await createShopWithRoles("Insights Shop");
  const s = shop.shopId;
  const mapId = newId();
  const board2 = newId();
  const map2 = newId();
  const ids = { A: newId(), B: newId(), C: newId() };
  await db.insert(maps).values({ id: mapId, shopId: s, boardId: shop.boardId, name: "Power-up" });
  await db.insert(boards).values({
    id: board2,
    shopId: s,
    maker: "Fixture Maker",
    model: "Bench 1",
    boardNumber: "FX-101",
    revision: "B",
    inputType: "barrel",
    inputMillivolts: 19_000,
  });
  await db.insert(maps).values({ id: map2, shopId: s, boardId: board2, name: "Power-up" });
  for (const [vid, map, number, doc] of [
    [ids.A, mapId, 1, DOC_A],
    [ids.B, mapId, 2, DOC_B],
    [ids.C, map2, 1, DOC_C],
  ] as const) {
    await db.transaction(async (tx) => {
      await tx.insert(mapVersions).values({ id: vid, shopId: s, mapId: map, number, document: doc });
      await indexMapVersionNodes(tx, vid, doc);
    });
  }
  let jobNumber = 100;
  const runIds: Record<string, string> = {};
  const add = async (name: string, r: RunSpec) => {
    const runId = newId();
    runIds[name] = runId;
    const started = at(r.day).getTime();
    const techId = shop.userIds[r.tech];
    let jobId: string | null = null;
    if (r.serial) {
      jobId = newId();
      await db.insert(jobs).values({
        id: jobId,
        shopId: s,
        number: jobNumber++,
        boardId: r.board ?? shop.boardId,
        serial: r.serial,
        state: "closed",
      });
    }
    const isolatedAt = r.isolatedAfterMin != null ? new Date(started + r.isolatedAfterMin * MIN) : null;
    const readingRows = (r.readings ?? []).map((x, i) => ({
      id: newId(),
      shopId: s,
      runId,
      seq: i + 1,
      netId: x.net,
      mode: "voltage" as const,
      text: "3.3",
      value: "3.3",
      verdict: "in range",
      skipped: x.skipped ?? false,
      replacesId: null as string | null,
      takenBy: techId,
      takenAt: new Date(started + (i + 1) * 10_000),
    }));
    readingRows.forEach((row, i) => {
      if (r.readings?.[i].correction) row.replacesId = readingRows[i - 1].id;
    });
    await db.insert(runs).values({
      id: runId,
      shopId: s,
      boardId: r.board ?? shop.boardId,
      mapVersionId: r.version,
      jobId,
      techId,
      strategy: r.strategy ?? "order",
      condition: { sourcesAttached: ["src-in"] },
      status: r.status ?? "closed",
      outcome: r.outcome === undefined ? "powers-on" : r.outcome,
      escalatedAt: r.escalateAfter != null ? new Date(started + r.escalateAfter * 10_000 + 5_000) : null,
      startedAt: new Date(started),
      isolatedAt,
      closedAt: r.status === "open" ? null : new Date(started + 60 * MIN),
    });
    if (readingRows.length) await db.insert(readings).values(readingRows);
    if (r.finding)
      await db.insert(findings).values({
        id: newId(),
        shopId: s,
        runId,
        boardId: r.board ?? shop.boardId,
        mapVersionId: r.version,
        kind: r.finding.kind,
        nodeId: r.finding.nodeId ?? null,
        fixKind: r.finding.fix ?? null,
        partsUsed: r.finding.parts ?? null,
        outcome:
          r.finding.kind === "no-fault-found" ? null : r.outcome === undefined ? "powers-on" : r.outcome,
        createdAt: new Date(started + 60 * MIN),
      });
  };
  const rd = (n: number, extra: RunSpec["readings"] = []) => [
    ...Array.from({ length: n }, (_, i) => ({ net: ["vin", "v1", "v1", "v2", "v2", "v2", "v2"][i] ?? "v2" })),
    ...extra,
  ];
  // Parts as the walker records them: reference designators (C12 is on the board but not on the maps).
  const U1 = ["U1"];
  // Version A, January 2026, by the technician, power-up order.
  await add("A1", {
    version: ids.A,
    day: "2026-01-10",
    tech: "tech",
    isolatedAfterMin: 1,
    readings: rd(3),
    finding: { kind: "part", nodeId: "u1", fix: "replace", parts: U1 },
    serial: "SN-1",
  });
  await add("A2", {
    version: ids.A,
    day: "2026-01-02",
    tech: "tech",
    isolatedAfterMin: 2,
    readings: rd(4),
    escalateAfter: 2,
    finding: { kind: "part", nodeId: "u1", fix: "replace", parts: U1 },
    serial: "SN-2",
  });
  await add("A3", {
    version: ids.A,
    day: "2026-01-12",
    tech: "tech",
    isolatedAfterMin: 3,
    readings: rd(5, [
      { net: "v2", skipped: true },
      { net: "v2", correction: true },
    ]),
    finding: { kind: "part", nodeId: "u1", fix: "replace", parts: U1 },
  });
  await add("A4", {
    version: ids.A,
    day: "2026-01-28",
    tech: "tech",
    outcome: "still-dead",
    isolatedAfterMin: 4,
    readings: rd(6),
    finding: { kind: "part", nodeId: "u1", fix: "replace", parts: U1 },
    serial: "SN-3",
  });
  await add("A5", {
    version: ids.A,
    day: "2026-01-14",
    tech: "tech",
    isolatedAfterMin: 10,
    readings: rd(7),
    finding: { kind: "short", nodeId: "v1", fix: "replace", parts: ["C12", "C12"] },
  });
  for (const [i, day] of ["2026-01-15", "2026-01-16", "2026-01-17", "2026-01-18", "2026-01-19"].entries())
    await add(`A${6 + i}`, {
      version: ids.A,
      day,
      tech: "tech",
      status: "no-fault-found",
      outcome: null,
      readings: rd(2),
      finding: { kind: "no-fault-found" },
    });
  await add("A11", {
    version: ids.A,
    day: "2026-01-20",
    tech: "tech",
    status: "open",
    outcome: null,
    escalateAfter: 0,
  });
  // Outside the tested date range.
  await add("OLD", {
    version: ids.A,
    day: "2025-06-01",
    tech: "tech",
    isolatedAfterMin: 1,
    readings: rd(1),
    finding: { kind: "part", nodeId: "u2", fix: "replace", parts: ["U2"] },
  });
  // Version B, February 2026, by the lead, split strategy.
  await add("B1", {
    version: ids.B,
    day: "2026-02-03",
    tech: "lead",
    strategy: "split",
    isolatedAfterMin: 2,
    readings: rd(2),
    finding: { kind: "part", nodeId: "u1", fix: "reflow", parts: [] },
    serial: "SN-1",
  });
  await add("B2", {
    version: ids.B,
    day: "2026-02-20",
    tech: "lead",
    strategy: "split",
    isolatedAfterMin: 4,
    readings: [{ net: "vin" }, { net: "v1" }, { net: "v3" }],
    escalateAfter: 1,
    finding: { kind: "part", nodeId: "u3", fix: "replace", parts: ["U3"] },
    serial: "SN-2",
  });
  await add("B3", {
    version: ids.B,
    day: "2026-02-02",
    tech: "lead",
    strategy: "split",
    isolatedAfterMin: 6,
    readings: rd(4),
    finding: { kind: "part", nodeId: "u3", fix: "replace", parts: ["U3"] },
    serial: "SN-3",
  });
  await add("B4", {
    version: ids.B,
    day: "2026-02-10",
    tech: "lead",
    strategy: "split",
    status: "no-fault-found",
    outcome: null,
    finding: { kind: "no-fault-found" },
  });
  await add("B5", {
    version: ids.B,
    day: "2026-02-11",
    tech: "lead",
    strategy: "split",
    status: "no-fault-found",
    outcome: null,
    finding: { kind: "no-fault-found" },
  });
  // The other revision (board 2), January 2026.
  await add("C1", {
    version: ids.C,
    board: board2,
    day: "2026-01-05",
    tech: "tech",
    isolatedAfterMin: 5,
    finding: { kind: "part", nodeId: "bx", fix: "replace", parts: ["U7"] },
  });
  await add("C2", {
    version: ids.C,
    board: board2,
    day: "2026-01-06",
    tech: "tech",
    isolatedAfterMin: 5,
    finding: { kind: "part", nodeId: "bx", fix: "replace", parts: ["U7"] },
  });
  await add("C3", {
    version: ids.C,
    board: board2,
    day: "2026-01-07",
    tech: "tech",
    isolatedAfterMin: 5,
    finding: { kind: "short", nodeId: "nv1", fix: "replace", parts: ["C12"] },
  });
  return { ...shop, board2, versions: ids, runIds };
}
