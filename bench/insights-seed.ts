// Seeds the insights scale bench: 100,000 runs and 1,000,000 readings (plus a finding and a job per run) in
// a bench SQLite file, with plain multi-row INSERTs in large write batches. Deterministic (fixed PRNG seed).
// Reused when the file already holds the full data set; BENCH_RESEED=1 forces a fresh file.
import { existsSync, readFileSync, rmSync } from "node:fs";
import { type Client, createClient, type InStatement } from "@libsql/client";
import type { MapDocument } from "~/lib/engine";
import { versionNodeRows } from "~/server/map-version-nodes.server";
import { OM_5130_MAP } from "../seed/maps/om-5130";
import { OM_5150_MAP } from "../seed/maps/om-5150";
import { mulberry32 } from "./lib/rng";

export const BENCH = {
  shopId: "bench-shop",
  boards: 10,
  runs: 100_000,
  readingsPerRun: 10,
  techs: 8,
  days: 365,
};

const DAY = 86_400_000;

export function benchFile() {
  return process.env.BENCH_INSIGHTS_DB ?? "data/bench-insights.db";
}

/**
 * Removes a stale bench file before the app's database module opens (and migrates) it: on BENCH_RESEED=1, or
 * when its indexes are gone without the record that lets bench/insights.ts put them back.
 */
export async function prepareBenchFile() {
  const file = benchFile();
  let stale = process.env.BENCH_RESEED === "1";
  if (!stale && existsSync(file) && !existsSync(`${file}.indexes.json`)) {
    const c = createClient({ url: `file:${file}` });
    const r = await c.execute(
      "SELECT COUNT(*) AS n FROM sqlite_master WHERE type = 'index' AND name = 'runs_shop_started'",
    );
    stale = Number(r.rows[0].n) === 0;
    // A regenerated migration (schema change) cannot be applied over the old tables: start again.
    const journal = JSON.parse(readFileSync("drizzle/meta/_journal.json", "utf8")) as {
      entries: Array<{ when: number }>;
    };
    const applied = await c
      .execute("SELECT MAX(created_at) AS at FROM __drizzle_migrations")
      .catch(() => ({ rows: [{ at: 0 }] }));
    if (Number(applied.rows[0].at) !== Math.max(...journal.entries.map((e) => e.when))) stale = true;
    c.close();
  }
  if (stale) for (const f of [file, `${file}-wal`, `${file}-shm`]) rmSync(f, { force: true });
  return file;
}

async function count(client: Client, table: string) {
  const r = await client.execute(`SELECT COUNT(*) AS n FROM ${table}`);
  return Number(r.rows[0].n);
}

/** Multi-row INSERT statements of at most `perStatement` rows each. */
function inserts(table: string, columns: string[], rows: unknown[][], perStatement: number): InStatement[] {
  const out: InStatement[] = [];
  const one = `(${columns.map(() => "?").join(",")})`;
  for (let i = 0; i < rows.length; i += perStatement) {
    const chunk = rows.slice(i, i + perStatement);
    out.push({
      sql: `INSERT INTO ${table} (${columns.join(",")}) VALUES ${chunk.map(() => one).join(",")}`,
      args: chunk.flat() as InStatement extends { args?: infer A } ? A : never,
    });
  }
  return out;
}

export async function seedInsightsBench(client: Client, log = console.log) {
  if ((await count(client, "readings")) === BENCH.runs * BENCH.readingsPerRun) {
    log(`bench data present in ${benchFile()} (reusing; BENCH_RESEED=1 to rebuild)`);
    return { reused: true, ms: 0 };
  }
  const t0 = performance.now();
  await client.execute("PRAGMA synchronous=OFF");
  const rng = mulberry32(0xbe7c_2026);
  const s = BENCH.shopId;
  const now = Date.UTC(2026, 11, 1);
  const start = now - BENCH.days * DAY;
  const base: InStatement[] = [
    { sql: "INSERT INTO shops (id, name) VALUES (?, ?)", args: [s, "Bench Shop"] },
  ];
  for (let t = 0; t < BENCH.techs; t++) {
    base.push({
      sql: "INSERT INTO users (id, email, name, password_hash) VALUES (?, ?, ?, 'x')",
      args: [`bench-user-${t}`, `tech${t}@bench.test`, `Tech ${t}`],
    });
    base.push({
      sql: "INSERT INTO members (id, shop_id, user_id, role) VALUES (?, ?, ?, ?)",
      args: [`bench-member-${t}`, s, `bench-user-${t}`, t === 0 ? "lead" : "tech"],
    });
  }
  type BoardInfo = { id: string; versions: string[]; doc: MapDocument; parts: string[]; nets: string[] };
  const boards: BoardInfo[] = [];
  for (let b = 0; b < BENCH.boards; b++) {
    const doc = b % 2 ? OM_5130_MAP : OM_5150_MAP;
    const id = `bench-board-${b}`;
    const mapId = `bench-map-${b}`;
    base.push({
      sql: "INSERT INTO boards (id, shop_id, maker, model, board_number, revision, input_type, input_millivolts) VALUES (?, ?, 'Bench Maker', ?, ?, ?, 'usb-c-pd', 20000)",
      args: [id, s, `Model ${Math.floor(b / 2)}`, `BN-${b}`, String.fromCharCode(65 + (b % 3))],
    });
    base.push({
      sql: "INSERT INTO maps (id, shop_id, board_id, name) VALUES (?, ?, ?, 'Power-up')",
      args: [mapId, s, id],
    });
    const versions = [`${mapId}-v1`, `${mapId}-v2`];
    versions.forEach((v, i) => {
      base.push({
        sql: "INSERT INTO map_versions (id, shop_id, map_id, number, document) VALUES (?, ?, ?, ?, ?)",
        args: [v, s, mapId, i + 1, JSON.stringify(doc)],
      });
      for (const row of versionNodeRows(v, doc))
        base.push({
          sql: "INSERT INTO map_version_nodes (map_version_id, node_id, node_name, kind, refdes) VALUES (?, ?, ?, ?, ?)",
          args: [row.mapVersionId, row.nodeId, row.nodeName, row.kind, row.refdes ?? null],
        });
    });
    boards.push({
      id,
      versions,
      doc,
      parts: doc.nodes.filter((n) => n.kind === "part").map((n) => n.id),
      nets: doc.nodes.filter((n) => n.kind === "rail" || n.kind === "signal").map((n) => n.id),
    });
  }
  await client.batch(base, "write");

  const strategies = ["order", "split", "best"];
  const outcomes = [
    "powers-on",
    "powers-on",
    "powers-on",
    "powers-on",
    "powers-on",
    "still-dead",
    "new-symptom",
  ];
  const serialOf: string[] = [];
  const BATCH_RUNS = 5_000;
  for (let from = 0; from < BENCH.runs; from += BATCH_RUNS) {
    const jobs: unknown[][] = [];
    const runs: unknown[][] = [];
    const readings: unknown[][] = [];
    const findings: unknown[][] = [];
    for (let i = from; i < Math.min(BENCH.runs, from + BATCH_RUNS); i++) {
      const b = boards[i % BENCH.boards];
      const version = b.versions[rng() < 0.4 ? 0 : 1];
      const started = start + Math.floor(rng() * (BENCH.days - 1) * DAY);
      const tech = `bench-user-${Math.floor(rng() * BENCH.techs)}`;
      // About 3 % of devices come back: reuse an earlier serial.
      const serial = i > 100 && rng() < 0.03 ? serialOf[Math.floor(rng() * i)] : `SN-${i}`;
      serialOf.push(serial);
      const runId = `r${i}`;
      const roll = rng();
      const kind = roll < 0.05 ? "no-fault-found" : roll < 0.15 ? "short" : "part";
      // Zipf-ish over the parts: index ⌊n·u²⌋ favours the first parts.
      const node =
        kind === "part"
          ? b.parts[Math.floor(b.parts.length * rng() ** 2)]
          : kind === "short"
            ? b.nets[Math.floor(rng() * b.nets.length)]
            : null;
      const outcome = kind === "no-fault-found" ? null : outcomes[Math.floor(rng() * outcomes.length)];
      const isolated = kind === "no-fault-found" ? null : started + (120 + Math.floor(rng() * 1800)) * 1000;
      const escalated = rng() < 0.08 ? started + 60_000 + Math.floor(rng() * 600_000) : null;
      jobs.push([`j${i}`, s, i + 1, b.id, serial, "closed"]);
      runs.push([
        runId,
        s,
        b.id,
        version,
        `j${i}`,
        tech,
        strategies[i % 3],
        '{"sourcesAttached":["src-charger"]}',
        kind === "no-fault-found" ? "no-fault-found" : "closed",
        outcome,
        escalated,
        started,
        isolated,
        started + 3_600_000,
      ]);
      for (let k = 0; k < BENCH.readingsPerRun; k++)
        readings.push([
          `${runId}-${k}`,
          s,
          runId,
          k + 1,
          b.nets[(k * 7 + i) % b.nets.length],
          "voltage",
          "3.3",
          "3.3",
          "in range",
          k === 9 && rng() < 0.05 ? 1 : 0,
          tech,
          started + (k + 1) * 45_000,
        ]);
      findings.push([
        `f${i}`,
        s,
        runId,
        b.id,
        version,
        kind,
        node,
        kind === "no-fault-found" ? null : rng() < 0.8 ? "replace" : "reflow",
        kind === "part"
          ? JSON.stringify([`${b.id}:${node}`])
          : kind === "short"
            ? '["Capacitor 0402"]'
            : null,
        outcome,
        started + 3_600_000,
      ]);
    }
    await client.batch(
      [
        ...inserts("jobs", ["id", "shop_id", "number", "board_id", "serial", "state"], jobs, 500),
        ...inserts(
          "runs",
          [
            "id",
            "shop_id",
            "board_id",
            "map_version_id",
            "job_id",
            "tech_id",
            "strategy",
            "condition",
            "status",
            "outcome",
            "escalated_at",
            "created_at",
            "isolated_at",
            "closed_at",
          ],
          runs,
          500,
        ),
        ...inserts(
          "readings",
          [
            "id",
            "shop_id",
            "run_id",
            "seq",
            "net_id",
            "mode",
            "text",
            "value",
            "verdict",
            "skipped",
            "taken_by",
            "created_at",
          ],
          readings,
          500,
        ),
        ...inserts(
          "findings",
          [
            "id",
            "shop_id",
            "run_id",
            "board_id",
            "map_version_id",
            "kind",
            "node_id",
            "fix_kind",
            "parts_used",
            "outcome",
            "created_at",
          ],
          findings,
          500,
        ),
      ],
      "write",
    );
  }
  await client.execute("PRAGMA synchronous=NORMAL");
  const ms = performance.now() - t0;
  log(
    `seeded ${await count(client, "runs")} runs, ${await count(client, "readings")} readings, ${await count(client, "findings")} findings in ${(ms / 1000).toFixed(1)} s`,
  );
  return { reused: false, ms };
}

export const benchFileExists = () => existsSync(benchFile());
