// `npm run bench:insights`: every insights loader's queries at 100,000 runs / 1,000,000 readings, first with
// the schema's indexes and daily rollups, then with those indexes dropped and the rollups not read (same data,
// same run), then the indexes are rebuilt.
// Without indexes some loaders take minutes, so each naive loader runs in a child process capped at
// NAIVE_CAP_MS; a capped figure is a lower bound (printed with ">") and so is any ratio built from it.
// Last line: RESULT insights_max_ms=<slowest indexed loader, median ms> naive_ratio=<Σ naive ÷ Σ indexed>
import { spawnSync } from "node:child_process";
import { existsSync, readFileSync, rmSync, writeFileSync } from "node:fs";
import { BENCH, benchFile, prepareBenchFile, seedInsightsBench } from "./insights-seed";

const NAIVE_CAP_MS = Number(process.env.NAIVE_CAP_MS ?? 30_000);
const one = process.argv.indexOf("--one");
const file = await prepareBenchFile();
const sidecar = `${file}.indexes.json`;
process.env.DATABASE_URL = `file:${file}`;
delete process.env.SEED_DEMO;
const { client, db } = await import("~/server/db.server");
const q = await import("~/server/insights.server");
const { getFindingPriors } = await import("~/server/priors.server");
const { indexMissingVersionNodes } = await import("~/server/map-version-nodes.server");
const { parseInsightsFilter } = await import("~/lib/insights-filters");

const NOW = Date.UTC(2026, 11, 1);
const shop = BENCH.shopId;
const all = parseInsightsFilter(new URLSearchParams(), NOW).filter;
const board = parseInsightsFilter(new URLSearchParams({ board: "bench-board-0" }), NOW).filter;
const tech = parseInsightsFilter(
  new URLSearchParams({ board: "bench-board-0", tech: "bench-user-3", outcome: "powers-on" }),
  NOW,
).filter;

// The queries each route loader runs (app/routes/insights*.tsx), in the same combination.
const LOADERS: Record<string, () => Promise<unknown>> = {
  "/insights (all boards)": () =>
    Promise.all([
      indexMissingVersionNodes(db, shop),
      q.getFilterChoices(db, shop),
      q.getHotSpots(db, shop, all),
    ]),
  "/insights?board": () => Promise.all([q.getFilterChoices(db, shop), q.getHotSpots(db, shop, board)]),
  "/insights?board&tech&outcome": () =>
    Promise.all([q.getFilterChoices(db, shop), q.getHotSpots(db, shop, tech)]),
  "/insights/map/:versionId": () =>
    Promise.all([q.getFilterChoices(db, shop), q.getHotSpots(db, shop, board)]),
  "/insights/runs (all boards)": () =>
    Promise.all([
      q.getFilterChoices(db, shop),
      q.getStrategyStats(db, shop, all),
      q.getEscalations(db, shop, all),
      q.getFirstTimeFix(db, shop, all),
      q.getRepeatFailures(db, shop, all),
    ]),
  "/insights/runs?board": () =>
    Promise.all([
      q.getFilterChoices(db, shop),
      q.getStrategyStats(db, shop, board),
      q.getEscalations(db, shop, board),
      q.getFirstTimeFix(db, shop, board),
      q.getRepeatFailures(db, shop, board),
    ]),
  "/insights/parts (all boards)": () =>
    Promise.all([q.getFilterChoices(db, shop), q.getPartsUsage(db, shop, all, NOW)]),
  "walker priors": () => getFindingPriors(shop, "bench-board-0", "bench-map-0-v2", db),
};

async function time(fn: () => Promise<unknown>, reps: number) {
  await fn(); // warm the page cache and statement cache
  const ms: number[] = [];
  for (let i = 0; i < reps; i++) {
    const t = performance.now();
    await fn();
    ms.push(performance.now() - t);
  }
  ms.sort((a, b) => a - b);
  return ms[Math.floor(ms.length / 2)];
}

if (one > 0) {
  // Child mode: time one loader once (after one warm-up) and report it to the parent.
  const name = process.argv[one + 1];
  const t = performance.now();
  await LOADERS[name]();
  const ms = performance.now() - t;
  console.log(JSON.stringify({ name, ms }));
  client.close();
  process.exit(0);
}

// Indexes dropped by an interrupted earlier run are put back first.
if (existsSync(sidecar)) {
  for (const s of JSON.parse(readFileSync(sidecar, "utf8")) as Array<{ sql: string }>)
    await client.execute(s.sql.replace(/^CREATE (UNIQUE )?INDEX /, "CREATE $1INDEX IF NOT EXISTS "));
  rmSync(sidecar);
}
await seedInsightsBench(client);
console.log(`bench file ${benchFile()}: ${BENCH.runs} runs, ${BENCH.runs * BENCH.readingsPerRun} readings`);

const indexed: Record<string, number> = {};
for (const [name, fn] of Object.entries(LOADERS)) {
  indexed[name] = await time(fn, 7);
  console.log(`indexed  ${name}: ${indexed[name].toFixed(1)} ms (median of 7)`);
}

const TABLES = ["runs", "readings", "findings", "jobs", "map_version_nodes"];
const idx = await client.execute(
  `SELECT name, sql FROM sqlite_master WHERE type = 'index' AND sql IS NOT NULL AND tbl_name IN (${TABLES.map(() => "?").join(",")})`,
  TABLES,
);
const saved = idx.rows.map((r) => ({ name: String(r.name), sql: String(r.sql) }));
writeFileSync(sidecar, JSON.stringify(saved));
console.log(`dropping ${saved.length} indexes: ${saved.map((s) => s.name).join(", ")}`);
for (const s of saved) await client.execute(`DROP INDEX "${s.name}"`);
await client.execute("PRAGMA wal_checkpoint(TRUNCATE)");
const naive: Record<string, { ms: number; capped: boolean }> = {};
try {
  for (const name of Object.keys(LOADERS)) {
    const child = spawnSync(process.execPath, [...process.execArgv, process.argv[1], "--one", name], {
      // Never pass BENCH_RESEED on: the child must time the same file, not rebuild it. Naive means the rows
      // alone: no index and no daily rollup either.
      env: { ...process.env, BENCH_RESEED: "0", INSIGHTS_ROLLUPS: "off" },
      timeout: NAIVE_CAP_MS + 5_000,
      encoding: "utf8",
    });
    const line = child.stdout?.trim().split("\n").pop() ?? "";
    const parsed = child.status === 0 && line.startsWith("{") ? (JSON.parse(line) as { ms: number }) : null;
    naive[name] = parsed ? { ms: parsed.ms, capped: false } : { ms: NAIVE_CAP_MS, capped: true };
    console.log(`naive    ${name}: ${naive[name].capped ? ">" : ""}${naive[name].ms.toFixed(1)} ms`);
  }
} finally {
  const t = performance.now();
  for (const s of saved) await client.execute(s.sql);
  rmSync(sidecar, { force: true });
  console.log(`rebuilt the indexes in ${((performance.now() - t) / 1000).toFixed(1)} s`);
}

const pad = (s: string, n: number) => s.padEnd(n);
console.log(`\n${pad("loader", 34)}${pad("indexed ms", 12)}${pad("naive ms", 14)}ratio`);
for (const name of Object.keys(LOADERS)) {
  const n = naive[name];
  const gt = n.capped ? ">" : "";
  console.log(
    `${pad(name, 34)}${pad(indexed[name].toFixed(1), 12)}${pad(gt + n.ms.toFixed(1), 14)}${gt}${(n.ms / indexed[name]).toFixed(1)}`,
  );
}
const slowest = Object.keys(LOADERS).reduce((a, b) => (indexed[b] > indexed[a] ? b : a));
const maxMs = indexed[slowest];
const sum = (xs: number[]) => xs.reduce((x, y) => x + y, 0);
const ratio = sum(Object.values(naive).map((n) => n.ms)) / sum(Object.values(indexed));
const anyCapped = Object.values(naive).some((n) => n.capped);
console.log(`\nslowest indexed loader: ${slowest} (${maxMs.toFixed(1)} ms; target < 200 ms)`);
console.log(
  `naive_ratio = total naive ÷ total indexed time over all loaders${anyCapped ? `; naive loaders capped at ${NAIVE_CAP_MS} ms, so it is a lower bound` : ""}`,
);
client.close();
console.log(`RESULT insights_max_ms=${maxMs.toFixed(1)} naive_ratio=${ratio.toFixed(1)}`);
