import { eq } from "drizzle-orm";
import type { MapDocument, MapNode } from "../app/lib/engine";
import type { Db } from "../app/server/db.server";
import { mapVersionNodeStatements } from "../app/server/map-version-nodes.server";
import { findings, jobs, mapVersions, readings, runs } from "../app/server/schema.server";
import { OM_5130_MAP } from "./maps/om-5130";
import { OM_5150_MAP } from "./maps/om-5150";

// Invented repair history for the demo shop, so the insights pages have something to show on first start.
// A fixed PRNG seed makes every count reproducible (tests/integration/demo-history.test.ts asserts them);
// only the timestamps move with the day the seed runs (the history always ends yesterday).

export const DEMO_HISTORY_SEED = 0x5eed_2026;
const SHOP = "demo-harbor";
const DAY = 86_400_000;
const HISTORY_DAYS = 300;

export const DEMO_HISTORY_BOARDS = [
  {
    boardId: "demo-board-om5150",
    versionId: "demo-map-om5150-v1",
    doc: OM_5150_MAP,
    runs: 240,
    serial: "M15",
  },
  {
    boardId: "demo-board-om5130",
    versionId: "demo-map-om5130-v1",
    doc: OM_5130_MAP,
    runs: 120,
    serial: "M13",
  },
] as const;

// Mostly the junior technician; the lead takes escalations and some runs of his own.
const TECHS = [
  { id: "demo-user-tech", weight: 0.7 },
  { id: "demo-user-lead", weight: 0.3 },
];
const LEAD = "demo-user-lead";

function mulberry32(seed: number): () => number {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

function sampleWeighted(rng: () => number, weights: readonly number[]): number {
  const total = weights.reduce((s, w) => s + w, 0);
  let x = rng() * total;
  for (let i = 0; i < weights.length; i++) {
    x -= weights[i];
    if (x < 0) return i;
  }
  return weights.length - 1;
}

type Net = Extract<MapNode, { kind: "rail" | "signal" }>;
type Part = Extract<MapNode, { kind: "part" }>;

/** Everything a generated run needs to know about a map, worked out once. */
function prepareMap(doc: MapDocument, rng: () => number) {
  const byId = new Map(doc.nodes.map((n, i) => [n.id, { n, i }]));
  const parents = new Map<string, string[]>();
  for (const e of doc.edges) parents.set(e.to, [...(parents.get(e.to) ?? []), e.from]);
  const upstreamNets = (id: string): Net[] => {
    const seen = new Set<string>();
    const stack = [...(parents.get(id) ?? [])];
    while (stack.length) {
      const x = stack.pop()!;
      if (seen.has(x)) continue;
      seen.add(x);
      stack.push(...(parents.get(x) ?? []));
    }
    return [...seen]
      .map((x) => byId.get(x)!)
      .filter((x) => x.n.kind === "rail" || x.n.kind === "signal")
      .sort((a, b) => a.i - b.i)
      .map((x) => x.n as Net);
  };
  const parts = doc.nodes.filter((n): n is Part => n.kind === "part");
  // Zipf-ish (s = 1.1) over the parts in a shuffled but fixed order: a few parts fail far more often.
  const ranked = [...parts];
  for (let i = ranked.length - 1; i > 0; i--) {
    const j = Math.floor(rng() * (i + 1));
    [ranked[i], ranked[j]] = [ranked[j], ranked[i]];
  }
  const weights = ranked.map((_, i) => 1 / (i + 1) ** 1.1);
  const outputs = (p: Part) =>
    doc.edges.filter((e) => e.from === p.id && e.kind === "drives").map((e) => byId.get(e.to)!.n as Net);
  const shortable = doc.nodes.filter(
    (n): n is Net =>
      (n.kind === "rail" || n.kind === "signal") && !!n.expected.resistance && n.kind === "rail",
  );
  return { ranked, weights, upstreamNets, outputs, shortable };
}

const volts = (n: Net, rng: () => number) => {
  const nominal = n.kind === "rail" ? n.nominalV : n.highV;
  return (nominal * (1 + (rng() - 0.5) * 0.02)).toFixed(nominal >= 10 ? 2 : 3);
};

export type DemoHistoryCounts = { runs: number; readings: number; findings: number; jobs: number };

/**
 * Adds the invented history (runs, readings, findings, closed jobs numbered from 5001) to the demo shop.
 * Needs seedDemo's boards and published versions; idempotent (fixed ids, skipped when already present).
 * Also indexes the demo versions' nodes for the insights, in case the seed did not.
 */
export async function seedDemoHistory(
  db: Db,
  now = Date.now(),
): Promise<DemoHistoryCounts & { created: boolean }> {
  const present = await db.select({ id: runs.id }).from(runs).where(eq(runs.id, "demo-run-0001")).get();
  const built = buildDemoHistory(now);
  if (present) return { ...countsOf(built), created: false };
  for (const b of DEMO_HISTORY_BOARDS) {
    const v = await db
      .select({ id: mapVersions.id })
      .from(mapVersions)
      .where(eq(mapVersions.id, b.versionId))
      .get();
    if (!v)
      throw new Error(`seedDemoHistory needs the published demo version ${b.versionId}; run seedDemo first.`);
  }
  const statements = [
    ...DEMO_HISTORY_BOARDS.flatMap((b) => mapVersionNodeStatements(db, b.versionId, b.doc)),
    ...chunks(built.jobs, 200).map((c) => db.insert(jobs).values(c).onConflictDoNothing()),
    ...chunks(built.runs, 200).map((c) => db.insert(runs).values(c).onConflictDoNothing()),
    ...chunks(built.readings, 500).map((c) => db.insert(readings).values(c).onConflictDoNothing()),
    ...chunks(built.findings, 300).map((c) => db.insert(findings).values(c).onConflictDoNothing()),
  ];
  // One write batch: the whole history lands in one transaction or not at all.
  await db.batch(statements as unknown as Parameters<Db["batch"]>[0]);
  return { ...countsOf(built), created: true };
}

function chunks<T>(xs: T[], size: number): T[][] {
  const out: T[][] = [];
  for (let i = 0; i < xs.length; i += size) out.push(xs.slice(i, i + size));
  return out;
}

const countsOf = (b: ReturnType<typeof buildDemoHistory>): DemoHistoryCounts => ({
  runs: b.runs.length,
  readings: b.readings.length,
  findings: b.findings.length,
  jobs: b.jobs.length,
});

type RunRow = typeof runs.$inferInsert;
type ReadingRow = typeof readings.$inferInsert;
type FindingRow = typeof findings.$inferInsert;
type JobRow = typeof jobs.$inferInsert;

/** The rows, without touching the database (pure given `now`). */
export function buildDemoHistory(now: number) {
  const rng = mulberry32(DEMO_HISTORY_SEED);
  const end = Math.floor(now / DAY) * DAY - DAY; // yesterday, midnight UTC
  const start = end - HISTORY_DAYS * DAY;
  type Plan = { board: (typeof DEMO_HISTORY_BOARDS)[number]; at: number; serial: string; repeatOf?: Plan };
  const plans: Plan[] = [];
  let serialNo = 0;
  for (const board of DEMO_HISTORY_BOARDS) {
    for (let i = 0; i < board.runs; i++) {
      serialNo++;
      plans.push({
        board,
        at: start + Math.floor(rng() * (HISTORY_DAYS - 3) * DAY) + 9 * 3600_000,
        serial: `${board.serial}-${String(104_000 + serialNo * 37).padStart(7, "0")}`,
      });
    }
  }
  // Returns on the same serial: most within 30 days (repeat failures), some later (outside the window).
  const base = plans.slice();
  for (const p of base) {
    const r = rng();
    if (r < 0.06)
      plans.push({
        board: p.board,
        serial: p.serial,
        at: p.at + (3 + Math.floor(rng() * 22)) * DAY,
        repeatOf: p,
      });
    else if (r < 0.08)
      plans.push({
        board: p.board,
        serial: p.serial,
        at: p.at + (40 + Math.floor(rng() * 20)) * DAY,
        repeatOf: p,
      });
  }
  // Returns that would fall after the end of the history are left out.
  plans.splice(0, plans.length, ...plans.filter((p) => p.at < end));
  plans.sort((a, b) => a.at - b.at || a.serial.localeCompare(b.serial));

  const maps = new Map(DEMO_HISTORY_BOARDS.map((b) => [b.boardId, prepareMap(b.doc, rng)]));
  const out = {
    runs: [] as RunRow[],
    readings: [] as ReadingRow[],
    findings: [] as FindingRow[],
    jobs: [] as JobRow[],
  };
  const lastFault = new Map<string, string>();

  plans.forEach((plan, idx) => {
    const n = String(idx + 1).padStart(4, "0");
    const runId = `demo-run-${n}`;
    const jobId = `demo-job-h${n}`;
    const m = maps.get(plan.board.boardId)!;
    const techId =
      TECHS[
        sampleWeighted(
          rng,
          TECHS.map((t) => t.weight),
        )
      ].id;
    const strategy = (["order", "split", "best"] as const)[sampleWeighted(rng, [0.3, 0.35, 0.35])];
    const battery = rng() < 0.4;
    const roll = rng();
    const kind: "part" | "short" | "no-fault-found" =
      roll < 0.05 ? "no-fault-found" : roll < 0.16 ? "short" : "part";
    let part: Part = m.ranked[sampleWeighted(rng, m.weights)];
    // A return often fails at the same place again.
    const previous = plan.repeatOf ? lastFault.get(plan.repeatOf.serial) : undefined;
    if (previous && rng() < 0.5) part = m.ranked.find((p) => p.id === previous) ?? part;
    const shorted = m.shortable[Math.floor(rng() * m.shortable.length)];
    const faultNet = kind === "short" ? shorted : m.outputs(part)[0];
    const upstream = kind === "short" ? m.upstreamNets(shorted.id) : m.upstreamNets(part.id);

    // Which nets got probed: power-up order reads everything on the way; bisection and best-next far fewer.
    let probed: Net[];
    if (kind === "no-fault-found") probed = upstream.slice(0, Math.max(3, upstream.length));
    else if (strategy === "order") probed = upstream;
    else {
      const want = Math.min(
        upstream.length,
        Math.ceil(Math.log2(upstream.length + 2)) - (strategy === "best" && rng() < 0.5 ? 1 : 0),
      );
      probed = [];
      for (let k = 1; k <= want; k++)
        probed.push(upstream[Math.min(upstream.length - 1, Math.floor((k * upstream.length) / (want + 1)))]);
      probed = [...new Set(probed)];
    }
    let t = plan.at;
    const rows: ReadingRow[] = [];
    const take = (net: Net, mode: "voltage" | "resistance", text: string, value: string, verdict: string) => {
      t += (35 + Math.floor(rng() * 90)) * 1000 + (net.probe.needsDisassembly ? 240_000 : 0);
      rows.push({
        id: `demo-rd-${n}-${String(rows.length + 1).padStart(2, "0")}`,
        shopId: SHOP,
        runId,
        seq: rows.length + 1,
        netId: net.id,
        mode,
        text,
        value,
        verdict,
        takenBy: techId,
        takenAt: new Date(t),
      });
    };
    for (const net of probed) {
      const v = volts(net, rng);
      take(net, "voltage", v, v, "in range");
    }
    if (kind !== "no-fault-found" && faultNet) {
      take(faultNet, "voltage", "0.02", "0.02", "missing");
      if (kind === "short") take(faultNet, "resistance", "0.4", "0.4", "shorted");
    }
    // Escalations: more often for the junior technician and on long walks; the lead finishes the run.
    let escalatedAt: Date | null = null;
    if (rows.length > 2 && rng() < (techId === LEAD ? 0.02 : 0.12)) {
      const at = 1 + Math.floor(rng() * (rows.length - 1));
      escalatedAt = new Date((rows[at - 1].takenAt as Date).getTime() + 20_000);
      for (const r of rows.slice(at)) {
        r.takenBy = LEAD;
        r.takenAt = new Date((r.takenAt as Date).getTime() + 15 * 60_000);
      }
      t += 15 * 60_000;
    }
    // A few corrections and skips, which the insights do not count as probes.
    if (rows.length > 3 && rng() < 0.08) {
      const orig = rows[1];
      t += 30_000;
      rows.push({
        ...orig,
        id: `${orig.id}-fix`,
        seq: rows.length + 1,
        replacesId: orig.id,
        takenAt: new Date(t),
      });
    }
    const isolatedAt = kind === "no-fault-found" ? null : new Date(t + 5_000);
    const fixMinutes = kind === "no-fault-found" ? 10 : 25 + Math.floor(rng() * 70);
    const closedAt = new Date(t + fixMinutes * 60_000);
    const o = rng();
    const outcome =
      kind === "no-fault-found" ? null : o < 0.86 ? "powers-on" : o < 0.94 ? "still-dead" : "new-symptom";

    out.jobs.push({
      id: jobId,
      shopId: SHOP,
      number: 5001 + idx,
      boardId: plan.board.boardId,
      serial: plan.serial,
      complaint: plan.repeatOf
        ? "Back again: no power"
        : rng() < 0.7
          ? "No power"
          : "Powers off after a few seconds",
      state: "closed",
      assignedTo: techId,
      createdAt: new Date(plan.at - 3 * 3600_000),
    });
    out.runs.push({
      id: runId,
      shopId: SHOP,
      boardId: plan.board.boardId,
      mapVersionId: plan.board.versionId,
      jobId,
      techId,
      strategy,
      condition: { sourcesAttached: battery ? ["src-charger", "src-battery"] : ["src-charger"] },
      status: kind === "no-fault-found" ? "no-fault-found" : "closed",
      outcome,
      escalatedAt,
      startedAt: new Date(plan.at),
      isolatedAt,
      closedAt,
    });
    out.readings.push(...rows);
    let fixKind: string | null = null;
    let partsUsed: string[] | null = null;
    if (kind === "part") {
      const fix = part.fixes[rng() < 0.7 || part.fixes.length === 1 ? 0 : 1] ?? part.fixes[0];
      // Stored as the walker stores it: the id of the map's fix (e.g. "replace", "check-en").
      fixKind = fix?.id ?? "other";
      // Stored as the walker stores it: reference designators. A "check the series resistor" fix usually
      // ends with that resistor replaced.
      partsUsed =
        fix?.kind === "replace"
          ? [part.refdes]
          : fix?.kind === "check-series-resistor"
            ? [seriesResistor(plan.board.doc, part).refdes]
            : [];
      // A draw that once added a consumable to replacements: kept, so every later draw (and so every count
      // the tests pin) stays as it was.
      if (fix?.kind === "replace") rng();
      lastFault.set(plan.serial, part.id);
    } else if (kind === "short") {
      fixKind = "replace";
      // The shorted capacitor is the one the net is probed at, when its probe point names one ("C415 pad").
      const cap = /^(C\d+)\b/.exec(shorted.probe.text)?.[1];
      partsUsed = cap ? [cap] : [];
    }
    out.findings.push({
      id: `demo-finding-${n}`,
      shopId: SHOP,
      runId,
      boardId: plan.board.boardId,
      mapVersionId: plan.board.versionId,
      kind,
      nodeId: kind === "part" ? part.id : kind === "short" ? shorted.id : null,
      fixKind,
      partsUsed,
      outcome,
      createdAt: closedAt,
    });
  });
  return out;
}

function seriesResistor(doc: MapDocument, p: Part): Part {
  // The resistor driving this part's enable input, when the map has one.
  const inputs = doc.edges.filter((e) => e.to === p.id && e.kind === "feeds").map((e) => e.from);
  const driver = doc.edges.find(
    (e) =>
      e.kind === "drives" &&
      inputs.includes(e.to) &&
      doc.nodes.find((n) => n.id === e.from && n.kind === "part" && n.partType === "resistor"),
  );
  const r = driver ? (doc.nodes.find((n) => n.id === driver.from) as Part) : undefined;
  return r ?? p;
}
