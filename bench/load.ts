// Mixed load on the production build (issue 8, item 6):
//
//   npm run bench:load      (BENCH_SOAK_S seconds, default 300; BENCH_RATE requests/s, default 150;
//                            RAILWISE_BUILD_DIR picks the build folder, BENCH_PORT the port, default 3481;
//                            WEB_CONCURRENCY the server's worker processes, default 2: one per core)
//
// 50 connections at a fixed offered rate: 70 % walker readings (POST /runs/:id.data, the walker fetcher's
// action), 10 % editor saves (POST /maps/:id.data, intent=save), 15 % page loads (boards, runs, jobs, a run's
// walker page) and 5 % insights loads. autocannon's rate limiter hands a connection its quota at the start of
// each second, so each connection is its own autocannon instance, started 1000/50 ms after the previous one,
// to spread the load over the second (as bench/walker.ts does). Every connection cycles through the same
// 20-request mix (14 readings, 2 saves, 3 pages, 1 insights), rotated so the kinds interleave across connections.
// Each connection's readings go to one walker run for 25 readings, then to a fresh run (runs started at setup).
// Latency is measured per request from send to last byte. The figures are void when the achieved rate is below
// 99 % of the offered one. After a 30-second warm-up at the same rate, server memory is read from /proc at the
// start and end of the soak, and every 30 s between.
//
// BENCH_HEAP=1 adds another diagnosis: heap snapshots of every worker at the soak's start and end, and the live
// JavaScript heap they hold (what a leak grows, free of the garbage V8 has not collected yet). Each snapshot
// pauses its worker for a few seconds and grows its native memory, so the latency and memory figures of such a
// run are disturbed.
// BENCH_PROBE=1 replaces the soak by a diagnosis: each kind of request sent alone, one after another, with the
// server's CPU time per request (BENCH_PROBE_N requests each, BENCH_PROBE_ONLY=<label text> to pick kinds).
// Data: a copy of the insights bench file (bench/insights-seed.ts: 100,000 runs and 1,000,000 readings in its
// own shop, seeded once and reused), with the demo shop seeded on top when the server starts (SEED_DEMO=1).
// Readings, saves and pages go to the demo shop; the insights loads go to the bench shop's lead, so they
// query the million readings. Insights loads rotate through the hot spots, runs and parts pages.
// Last line: RESULT walker_p95_ms=<ms> other_p95_max_ms=<ms> achieved_rps=<n> errors=<n> rss_growth_mb=<mb>
import { type ChildProcess, execSync, spawn } from "node:child_process";
import { copyFileSync, existsSync, mkdirSync, readdirSync, readFileSync, rmSync, statSync } from "node:fs";
import { createClient } from "@libsql/client";
import autocannon from "autocannon";
import { hashPassword } from "~/server/password.server";

const BUILD = process.env.RAILWISE_BUILD_DIR ?? "build";
const PORT = Number(process.env.BENCH_PORT ?? 3481);
const ORIGIN = `http://127.0.0.1:${PORT}`;
const CONNECTIONS = 50;
const RATE = Number(process.env.BENCH_RATE ?? 150);
// autocannon paces each connection in whole requests per second: the rate must divide evenly among them.
if (!Number.isInteger(RATE / 50) || RATE <= 0)
  throw new Error(`BENCH_RATE must be a positive multiple of 50 (one request/s per connection); got ${RATE}`);
const SOAK_S = Number(process.env.BENCH_SOAK_S ?? 300);
const HEAP = process.env.BENCH_HEAP === "1";
const HEAP_DIR = `/tmp/railwise-bench-heap-${process.pid}`;
// A walker run of the demo map takes a handful of readings to a few dozen: each connection starts on a fresh
// run after this many, as a tech moves on to the next board (one run would otherwise grow to hundreds of
// readings over the soak, which no bench session does).
const RUN_READINGS = 25;
// Seconds of the same load before the soak: the server's heaps and caches grow to their working size in the
// first half minute of load (the 30-second memory trace shows it), which is not what the soak is to measure.
const PROBE = process.env.BENCH_PROBE === "1";
// (The probe sends its own requests one at a time after a short warm-up, and needs no soak's worth of runs.)
const WARMUP_S = PROBE ? 3 : 30;
const DB_FILE = `./data/h8-bench-load-${PORT}.db`;
const BOARD = "demo-board-om5150";
const PASSWORD = "bench-demo-2026";
// The insights bench shop's lead (bench/insights-seed.ts seeds bench-user-0 as its lead).
const BENCH_LEAD = { id: "bench-user-0", email: "tech0@bench.test" };
const INSIGHTS_PAGES = ["/insights", "/insights/runs", "/insights/parts", "/insights?board=bench-board-0"];

type Kind = "reading" | "save" | "page" | "insights";
const MIX: Kind[] = (
  [
    "R",
    "R",
    "S",
    "R",
    "P",
    "R",
    "R",
    "R",
    "P",
    "R",
    "I",
    "R",
    "R",
    "S",
    "R",
    "P",
    "R",
    "R",
    "R",
    "R",
  ] as const
).map((k) => ({ R: "reading", S: "save", P: "page", I: "insights" })[k] as Kind);
if (MIX.filter((k) => k === "reading").length !== 14 || MIX.filter((k) => k === "page").length !== 3)
  throw new Error("the request mix must be 14 readings, 2 saves, 3 pages and 1 insights load in 20");
const PAGES = ["/boards", "/runs", "/jobs"];
// Nets of the demo OM-5150 map with plausible live readings.
const READINGS: Array<[string, string]> = [
  ["vsys", "12.6"],
  ["v3p3-aon", "3.31"],
  ["en-5v-stby", "3.28"],
  ["v5-stby", "5.02"],
  ["v3p3-stby", "3.30"],
];

const log = (msg: string) => console.log(msg);

/** The load file starts as a copy of the insights bench file; its lead gets a password to sign in with. */
async function prepareData() {
  log("preparing the insights bench data (seeded once, then reused) …");
  const out = execSync("npx tsx bench/insights-data.ts", {
    encoding: "utf8",
    stdio: ["ignore", "pipe", "inherit"],
  });
  const source = out.trim().split("\n").at(-1)!;
  for (const s of ["", "-wal", "-shm"]) rmSync(`${DB_FILE}${s}`, { force: true });
  copyFileSync(source, DB_FILE);
  const c = createClient({ url: `file:${DB_FILE}` });
  await c.execute({
    sql: "update users set password_hash = ? where id = ?",
    args: [await hashPassword(PASSWORD), BENCH_LEAD.id],
  });
  const n = Number((await c.execute("select count(*) as n from readings")).rows[0].n);
  c.close();
  log(`load file ${DB_FILE}: ${n.toLocaleString("en")} readings before the demo shop is added`);
}

function startServer(): ChildProcess {
  // BENCH_NODE_ARGS, e.g. "--cpu-prof --cpu-prof-dir=/tmp/prof", is passed to the server's node.
  const nodeArgs = (process.env.BENCH_NODE_ARGS ?? "").split(" ").filter(Boolean);
  if (HEAP) {
    mkdirSync(HEAP_DIR, { recursive: true });
    nodeArgs.push("--heapsnapshot-signal=SIGUSR2", `--diagnostic-dir=${HEAP_DIR}`);
  }
  return spawn(process.execPath, [...nodeArgs, "server.mjs"], {
    env: {
      ...process.env,
      NODE_ENV: "production",
      PORT: String(PORT),
      HOST: "127.0.0.1",
      RAILWISE_BUILD_DIR: BUILD,
      DATABASE_URL: `file:${DB_FILE}`,
      SEED_DEMO: "1",
      MAIL_CAPTURE: "1",
      SECURE_COOKIES: "0",
      SIGNIN_MAX_PER_ADDRESS: "100000",
      SESSION_SECRET: "bench-load-session-secret-0123456789",
      // One worker process per core of this 2-core machine (server.mjs); WEB_CONCURRENCY=1 measures one.
      WEB_CONCURRENCY: process.env.WEB_CONCURRENCY ?? "2",
    },
    stdio: ["ignore", "ignore", "inherit"],
  });
}

/**
 * The machine's CPU time so far, from /proc/stat: all of it and what the hypervisor gave to other guests
 * ("steal"). This is a shared virtual machine whose speed varies from minute to minute; steal shows only part
 * of it (on 2026-12-03 the machine ran at half speed for an hour with steal under 1 %: docs/benchmarks.md).
 */
function machineCpu(): { total: number; steal: number } {
  const cpu = readFileSync("/proc/stat", "utf8").split("\n")[0].trim().split(/\s+/).slice(1).map(Number);
  // user nice system idle iowait irq softirq steal (guest time is already inside user and nice).
  return { total: cpu.slice(0, 8).reduce((a, b) => a + b, 0), steal: cpu[7] ?? 0 };
}

async function waitForHealth(timeoutMs = 30_000) {
  const start = Date.now();
  while (Date.now() - start < timeoutMs) {
    if ((await fetch(`${ORIGIN}/healthz`).catch(() => null))?.ok) return;
    await new Promise((r) => setTimeout(r, 200));
  }
  throw new Error(`server did not answer ${ORIGIN}/healthz`);
}

/**
 * Memory of the server and its worker processes (server.mjs forks WEB_CONCURRENCY workers), in MB: `VmRSS`
 * in all, or `RssAnon`, the anonymous part (heaps, native allocations), which is what a leak grows. The rest
 * is file-backed: the SQLite file is memory-mapped (mmap_size 1 GiB per connection), so reading the 390 MB
 * bench file fills RSS with page cache the kernel can drop at will.
 */
const rssMb = (pid: number, field: "VmRSS" | "RssAnon" = "VmRSS"): number =>
  overProcessTree(pid, (p) => {
    const m = new RegExp(`${field}:\\s+(\\d+) kB`).exec(readFileSync(`/proc/${p}/status`, "utf8"));
    return m ? Number(m[1]) / 1024 : Number.NaN;
  });

/**
 * BENCH_HEAP=1: the live JavaScript heap of the server's workers in MB, from a heap snapshot of each (a snapshot
 * collects garbage first, so it holds only what is reachable). The main threads only; the read threads hold
 * statements in flight and nothing else.
 */
async function liveHeapMb(pid: number): Promise<number> {
  const children = childrenOf(pid);
  const workers = children.length ? children : [pid];
  let total = 0;
  for (const worker of workers) {
    const before = new Set(readdirSync(HEAP_DIR));
    process.kill(worker, "SIGUSR2");
    // The file appears at once and grows while V8 writes it; it is complete once its size stops changing.
    let file = "";
    let size = -1;
    for (let waited = 0; waited < 120_000; waited += 500) {
      await new Promise((r) => setTimeout(r, 500));
      file ||= readdirSync(HEAP_DIR).find((f) => !before.has(f) && f.includes(`.${worker}.`)) ?? "";
      if (!file) continue;
      const now = statSync(`${HEAP_DIR}/${file}`).size;
      if (now > 0 && now === size) break;
      size = now;
    }
    if (!file) throw new Error(`worker ${worker} wrote no heap snapshot`);
    const snap = JSON.parse(readFileSync(`${HEAP_DIR}/${file}`, "utf8")) as {
      snapshot: { meta: { node_fields: string[] } };
      nodes: number[];
    };
    rmSync(`${HEAP_DIR}/${file}`);
    const fields = snap.snapshot.meta.node_fields;
    const width = fields.length;
    const selfSize = fields.indexOf("self_size");
    for (let i = selfSize; i < snap.nodes.length; i += width) total += snap.nodes[i];
  }
  return total / 1e6;
}

/** A figure of a process summed with the same figure of all its descendants (server.mjs forks its workers). */
function overProcessTree(pid: number, figure: (pid: number) => number): number {
  return childrenOf(pid).reduce((sum, child) => sum + overProcessTree(child, figure), figure(pid));
}

/** The process ids a process has started (none once it has ended). */
function childrenOf(pid: number): number[] {
  try {
    return readFileSync(`/proc/${pid}/task/${pid}/children`, "utf8")
      .trim()
      .split(/\s+/)
      .filter(Boolean)
      .map(Number);
  } catch {
    return [];
  }
}

async function signIn(email: string) {
  const res = await fetch(`${ORIGIN}/login`, {
    method: "POST",
    redirect: "manual",
    headers: { "Content-Type": "application/x-www-form-urlencoded", Origin: ORIGIN },
    body: new URLSearchParams({ email, password: PASSWORD, redirectTo: "" }),
  });
  const cookie = res.headers
    .getSetCookie()
    .map((c) => c.split(";")[0])
    .find((c) => c.startsWith("rw_session="));
  if (!cookie) throw new Error(`sign-in of ${email} failed: ${res.status}`);
  return cookie;
}

async function post(path: string, cookie: string, fields: Record<string, string>) {
  return fetch(`${ORIGIN}${path}`, {
    method: "POST",
    redirect: "manual",
    headers: { "Content-Type": "application/x-www-form-urlencoded", Origin: ORIGIN, Cookie: cookie },
    body: new URLSearchParams(fields),
  });
}

type Conn = {
  runId: string;
  /** Runs started for this connection and not yet used: it moves on to the next after RUN_READINGS readings. */
  spare: string[];
  mapId: string;
  seq: number;
  revision: number;
  saves: number;
  t0: number;
};

const benchDb = () => createClient({ url: `file:${DB_FILE}` });

function saveBody(c: Conn) {
  const node = {
    id: "bench-rail",
    kind: "rail",
    name: `BENCH ${c.saves}`,
    nominalV: 3.3,
    tolerancePct: 5,
    expected: { voltage: { nominal: 3.3, tolerancePct: 5 } },
    probe: { text: "test pad", seconds: 20, needsDisassembly: false },
  };
  return new URLSearchParams({
    intent: "save",
    revision: String(c.revision),
    changes: JSON.stringify([{ op: "put-node", node }]),
  }).toString();
}

function percentile(sorted: number[], p: number) {
  if (!sorted.length) return Number.NaN;
  return sorted[Math.min(sorted.length - 1, Math.ceil(p * sorted.length) - 1)];
}

function runCannon(opts: autocannon.Options): Promise<autocannon.Result> {
  return new Promise((resolve, reject) => autocannon(opts, (err, r) => (err ? reject(err) : resolve(r))));
}

/** CPU time (user + system, ms) of the server and its worker processes so far, from /proc. */
const cpuMs = (pid: number): number =>
  overProcessTree(pid, (p) => {
    const fields = readFileSync(`/proc/${p}/stat`, "utf8").split(") ")[1].split(" ");
    // utime and stime are fields 14 and 15 of stat, in clock ticks (100 per second on Linux).
    return (Number(fields[11]) + Number(fields[12])) * 10;
  });

/**
 * BENCH_PROBE=1: instead of the soak, sends each kind of request one after another and prints the server's CPU
 * time per request of that kind: where the capacity of the machine goes (not a target, a diagnosis).
 */
async function probeCpu(
  pid: number,
  conns: Conn[],
  cookies: { tech: string; lead: string; analyst: string },
  resync: (c: Conn, kind: Kind) => Promise<void>,
) {
  const N = Number(process.env.BENCH_PROBE_N ?? 100);
  for (const c of conns) {
    await resync(c, "reading");
    await resync(c, "save");
  }
  // BENCH_PROBE_ONLY=<text>[,<text>…]: only the kinds whose label contains one of them (to profile one kind).
  const only = (process.env.BENCH_PROBE_ONLY ?? "").split(",");
  const measure = async (label: string, send: (i: number) => Promise<Response>) => {
    if (!only.some((o) => label.includes(o))) return;
    await send(0); // warm
    const cpu0 = cpuMs(pid);
    const t0 = performance.now();
    let bad = 0;
    for (let i = 1; i <= N; i++) {
      const res = await send(i);
      await res.arrayBuffer();
      if (res.status >= 300) bad++;
    }
    const cpu = (cpuMs(pid) - cpu0) / N;
    const wall = (performance.now() - t0) / N;
    log(
      `probe ${label.padEnd(40)} cpu ${cpu.toFixed(1)} ms/request  wall ${wall.toFixed(1)} ms  non-2xx ${bad}`,
    );
  };
  const get = (path: string, cookie: string) => () =>
    fetch(`${ORIGIN}${path}`, { headers: { Cookie: cookie } });
  // The floor: the server's cost of a request that does almost no work (one `select 1`, no session, no page).
  await measure("floor /healthz", get("/healthz", ""));
  await measure("reading", async (i) => {
    const c = conns[i % conns.length];
    const [netId, text] = READINGS[(c.seq - 1) % READINGS.length];
    const res = await post(`/runs/${c.runId}.data`, cookies.tech, {
      intent: "reading",
      id: `${c.runId}-${c.seq}-probe${i}`,
      netId,
      mode: "voltage",
      text,
      expectedSeq: String(c.seq),
    });
    if (res.ok) c.seq++;
    else await resync(c, "reading");
    return res;
  });
  await measure("save", async (i) => {
    const c = conns[i % conns.length];
    c.saves++;
    const res = await fetch(`${ORIGIN}/maps/${c.mapId}.data`, {
      method: "POST",
      headers: { "Content-Type": "application/x-www-form-urlencoded", Origin: ORIGIN, Cookie: cookies.lead },
      body: saveBody(c),
    });
    if (res.ok) c.revision++;
    else await resync(c, "save");
    return res;
  });
  for (const path of [...PAGES, `/runs/${conns[0].runId}`])
    await measure(`page ${path}`, get(path, cookies.tech));
  for (const path of INSIGHTS_PAGES) await measure(`insights ${path}`, get(path, cookies.analyst));
}

async function main() {
  if (!existsSync(`${BUILD}/server/index.js`)) {
    log(`building into ${BUILD} …`);
    execSync("npx react-router build", {
      stdio: "inherit",
      env: { ...process.env, RAILWISE_BUILD_DIR: BUILD },
    });
  }
  await prepareData();
  const server = startServer();
  const db = benchDb();
  try {
    await waitForHealth();
    const tech = await signIn("tech@harbor.example");
    const lead = await signIn("lead@harbor.example");
    const analyst = await signIn(BENCH_LEAD.email);
    const form = await (
      await fetch(`${ORIGIN}/runs/new?boardId=${BOARD}`, { headers: { Cookie: tech } })
    ).text();
    const versionId = /name="mapVersionId"[^>]*><option value="([^"]+)"/.exec(form)?.[1];
    if (!versionId) throw new Error("no published OM-5150 map version in the demo data");

    const startRun = async () => {
      const run = await post(`/runs/new?boardId=${BOARD}`, tech, {
        boardId: BOARD,
        mapVersionId: versionId,
        condition: "both",
        pressButton: "on",
      });
      const runId = /\/runs\/([A-Za-z0-9_-]+)$/.exec(run.headers.get("Location") ?? "")?.[1];
      if (!runId) throw new Error(`setup failed: starting a run answered ${run.status}`);
      return runId;
    };
    // Enough runs for every connection's readings over warm-up and soak (with one to spare).
    const perConn = PROBE
      ? 2
      : Math.ceil(((SOAK_S + WARMUP_S + 2) * (RATE / CONNECTIONS) * 0.7) / RUN_READINGS) + 1;
    log(
      `starting ${CONNECTIONS * perConn} runs (${perConn} per connection, ${RUN_READINGS} readings each) …`,
    );
    const conns: Conn[] = [];
    for (let i = 0; i < CONNECTIONS; i++) {
      const map = await post(`/boards/${BOARD}`, lead, { intent: "create-map", name: `Load bench map ${i}` });
      const mapId = /\/maps\/([A-Za-z0-9_-]+)$/.exec(map.headers.get("Location") ?? "")?.[1];
      if (!mapId) throw new Error(`setup failed: map ${map.status}`);
      const spare: string[] = [];
      for (let k = 0; k < perConn; k += 4)
        spare.push(...(await Promise.all(Array.from({ length: Math.min(4, perConn - k) }, startRun))));
      conns.push({ runId: spare.shift()!, spare, mapId, seq: 1, revision: 0, saves: 0, t0: 0 });
    }

    const latencies: Record<Kind, number[]> = { reading: [], save: [], page: [], insights: [] };
    // The insights loads also by page: their p95 is the mix's, and the pages differ fourfold in cost.
    const byInsightsPage = new Map<string, number[]>(INSIGHTS_PAGES.map((path) => [path, []]));
    const statuses = new Map<string, number>();
    let errors = 0;
    let done = 0;
    let measuring = false;
    const resync = async (c: Conn, kind: Kind) => {
      // After a refused save or reading, read the current revision / step back, as the editor and walker do.
      if (kind === "save") {
        const r = await db.execute({
          sql: "select draft_revision as r from maps where id = ?",
          args: [c.mapId],
        });
        c.revision = Number(r.rows[0]?.r ?? c.revision);
      } else {
        const r = await db.execute({
          sql: "select coalesce(max(seq), 0) as s from readings where run_id = ?",
          args: [c.runId],
        });
        c.seq = Number(r.rows[0]?.s ?? 0) + 1;
      }
    };

    const requestsFor = (c: Conn, offset: number): autocannon.Request[] =>
      MIX.map((_, j) => MIX[(j + offset) % MIX.length]).map((kind, j) => {
        const walkerPage = kind === "page" && j % 4 === 3;
        const path =
          kind === "insights"
            ? INSIGHTS_PAGES[offset % INSIGHTS_PAGES.length]
            : walkerPage
              ? `/runs/${c.runId}`
              : PAGES[(j + offset) % PAGES.length];
        const done1 = (status: number) => {
          const ms = performance.now() - c.t0;
          done++;
          if (measuring) {
            latencies[kind].push(ms);
            if (kind === "insights") byInsightsPage.get(path)?.push(ms);
            const key = `${kind} ${status}`;
            statuses.set(key, (statuses.get(key) ?? 0) + 1);
          }
          const ok = status >= 200 && status < 300;
          if (!ok && measuring) errors++;
          if (kind === "reading") {
            if (!ok) void resync(c, kind);
            else if (++c.seq > RUN_READINGS && c.spare.length) {
              // The run is long enough: the tech moves on to the next board.
              c.runId = c.spare.shift()!;
              c.seq = 1;
            }
          }
          if (kind === "save") ok ? c.revision++ : void resync(c, kind);
        };
        if (kind === "reading")
          return {
            method: "POST",
            path: `/runs/${c.runId}.data`,
            headers: { "Content-Type": "application/x-www-form-urlencoded", Origin: ORIGIN, Cookie: tech },
            setupRequest: (req: autocannon.Request) => {
              c.t0 = performance.now();
              req.path = `/runs/${c.runId}.data`;
              const [netId, text] = READINGS[(c.seq - 1) % READINGS.length];
              req.body = new URLSearchParams({
                intent: "reading",
                id: `${c.runId}-${c.seq}-${Math.random().toString(36).slice(2, 10)}`,
                netId,
                mode: "voltage",
                text,
                expectedSeq: String(c.seq),
              }).toString();
              return req;
            },
            onResponse: done1,
          };
        if (kind === "save")
          return {
            method: "POST",
            path: `/maps/${c.mapId}.data`,
            headers: { "Content-Type": "application/x-www-form-urlencoded", Origin: ORIGIN, Cookie: lead },
            setupRequest: (req: autocannon.Request) => {
              c.t0 = performance.now();
              c.saves++;
              req.body = saveBody(c);
              return req;
            },
            onResponse: done1,
          };
        return {
          method: "GET",
          path,
          headers: { Cookie: kind === "insights" ? analyst : tech },
          setupRequest: (req: autocannon.Request) => {
            c.t0 = performance.now();
            if (walkerPage) req.path = `/runs/${c.runId}`;
            return req;
          },
          onResponse: done1,
        };
      });

    const phase = (seconds: number, rate: number) =>
      Promise.all(
        conns.map(
          (c, i) =>
            new Promise<autocannon.Result>((resolve, reject) =>
              setTimeout(
                () =>
                  runCannon({
                    url: ORIGIN,
                    connections: 1,
                    connectionRate: rate / CONNECTIONS,
                    duration: seconds,
                    requests: requestsFor(c, i),
                  }).then(resolve, reject),
                (i * 1000) / CONNECTIONS,
              ),
            ),
        ),
      );

    // Warm-up (not measured): JIT, caches, SQLite pages, and the heaps grown to their working size, so the
    // soak's start and end memory compare the same steady state (BENCH_PROBE needs only a short one).
    await phase(WARMUP_S, RATE);
    if (PROBE) {
      await probeCpu(server.pid!, conns, { tech, lead, analyst }, resync);
      return;
    }
    await new Promise((r) => setTimeout(r, 500));
    // A warm-up request cut off at its end may have saved a reading whose answer never came: start in step.
    for (const c of conns) {
      await resync(c, "reading");
      await resync(c, "save");
    }
    const heapStart = HEAP ? await liveHeapMb(server.pid!) : 0;
    const rssStart = rssMb(server.pid!);
    const anonStart = rssMb(server.pid!, "RssAnon");
    log(
      `offered ${RATE} requests/s from ${CONNECTIONS} connections for ${SOAK_S} s; server RSS ${rssStart.toFixed(1)} MB`,
    );
    const cpuStart = machineCpu();
    measuring = true;
    done = 0;
    const started = performance.now();
    // Memory over the soak, every 30 s: a bounded cache levels off, a leak keeps climbing.
    const memTrace = setInterval(() => {
      const t = Math.round((performance.now() - started) / 1000);
      log(
        `  t=${t}s server RSS ${rssMb(server.pid!).toFixed(1)} MB, anonymous ${rssMb(server.pid!, "RssAnon").toFixed(1)} MB`,
      );
    }, 30_000);
    const results = await phase(SOAK_S, RATE).finally(() => clearInterval(memTrace));
    const wall = (performance.now() - started) / 1000;
    measuring = false;
    const rssEnd = rssMb(server.pid!);
    const anonEnd = rssMb(server.pid!, "RssAnon");
    const transportErrors = results.reduce((a, r) => a + r.errors + r.timeouts, 0);
    errors += transportErrors;
    const achieved = done / SOAK_S;
    const valid = achieved >= 0.99 * RATE;

    const p95: Record<Kind, number> = { reading: 0, save: 0, page: 0, insights: 0 };
    for (const kind of Object.keys(latencies) as Kind[]) {
      const s = latencies[kind].sort((a, b) => a - b);
      p95[kind] = percentile(s, 0.95);
      log(
        `${kind.padEnd(8)} n=${String(s.length).padStart(6)}  p50 ${percentile(s, 0.5).toFixed(1)} ms  p95 ${p95[kind].toFixed(1)} ms  p99 ${percentile(s, 0.99).toFixed(1)} ms`,
      );
    }
    for (const [path, ms] of byInsightsPage) {
      const s = ms.sort((a, b) => a - b);
      log(
        `  insights ${path.padEnd(32)} n=${String(s.length).padStart(5)}  p50 ${percentile(s, 0.5).toFixed(1)} ms  p95 ${percentile(s, 0.95).toFixed(1)} ms`,
      );
    }
    log(
      `statuses: ${[...statuses].map(([k, n]) => `${k}×${n}`).join(", ")}; transport errors/timeouts ${transportErrors}`,
    );
    log(
      `throughput: ${achieved.toFixed(1)} requests/s achieved of ${RATE} offered (${wall.toFixed(1)} s wall)`,
    );
    log(
      `server RSS: start ${rssStart.toFixed(1)} MB, end ${rssEnd.toFixed(1)} MB; anonymous (heap and native, the growth figure): start ${anonStart.toFixed(1)} MB, end ${anonEnd.toFixed(1)} MB`,
    );
    const cpuEnd = machineCpu();
    const steal = (100 * (cpuEnd.steal - cpuStart.steal)) / Math.max(1, cpuEnd.total - cpuStart.total);
    log(`machine: ${steal.toFixed(1)} % of the CPU time over the soak was taken by the hypervisor (steal)`);
    if (HEAP) {
      const heapEnd = await liveHeapMb(server.pid!);
      log(
        `live JavaScript heap of the workers (heap snapshots): start ${heapStart.toFixed(1)} MB, end ${heapEnd.toFixed(1)} MB (taking them paused the workers and grew their native memory: this run's latency and memory figures are disturbed)`,
      );
    }
    if (!valid) log(`VOID: achieved ${achieved.toFixed(1)} < 99 % of the offered ${RATE} requests/s`);
    const otherMax = Math.max(p95.save, p95.page, p95.insights);
    const growth = anonEnd - anonStart;
    log(
      p95.reading < 50 && otherMax < 200 && errors === 0 && growth < 50
        ? "targets met: reading p95 < 50 ms, others < 200 ms, zero errors, RSS growth < 50 MB"
        : "targets NOT met (reading p95 < 50 ms, others < 200 ms, zero errors, RSS growth < 50 MB)",
    );
    const fig = (x: number) => (valid ? x.toFixed(1) : "void");
    console.log(
      `RESULT walker_p95_ms=${fig(p95.reading)} other_p95_max_ms=${fig(otherMax)} achieved_rps=${achieved.toFixed(1)} errors=${errors} rss_growth_mb=${growth.toFixed(1)}`,
    );
  } finally {
    db.close();
    server.kill("SIGTERM");
    if (HEAP) rmSync(HEAP_DIR, { recursive: true, force: true });
  }
}

main().catch((e) => {
  console.error(e);
  process.exit(1);
});
