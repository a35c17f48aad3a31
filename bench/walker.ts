// Bench walker speed: the production build under 50 simulated technicians.
//
//   npm run bench:walker            (RAILWISE_BUILD_DIR picks the build folder, BENCH_PORT the port; default 3451;
//                                    WEB_CONCURRENCY the server's worker processes, default 2: one per core;
//                                    BENCH_NODE_ARGS extra node flags for the server, e.g. to profile it)
//
// 1. Fixed offered rate: 50 techs, each submitting a reading every 500 ms = 100 readings/s. Each reading is what
//    the walker's fetcher sends (POST /runs/:id.data); its answer carries the run as it now stands (the next
//    step), so the browser asks for nothing more (asserted in tests/e2e/walker.spec.ts). The round trip is
//    from sending the reading to the last byte of that answer. autocannon's rate limiter hands a connection its
//    quota at the start of each second, so the 50 connections are separate autocannon instances started 20 ms
//    apart to spread the load over the second. The figures are void when fewer than 99 % of the offered
//    readings were achieved, and a reading whose answer lacks the next step counts as an error.
// 2. Flat out: 50 connections, no rate limit: the most readings/s sustained.
// 3. The walker route's first load: gzip size of every script it modulepreloads (gzip level 6, as the server's
//    compression middleware uses).
// Last line: RESULT walker_p95_ms=<ms> walker_max_rps=<n> achieved_rps=<n> errors=<n> walker_js_kb_gz=<kb>
import { type ChildProcess, execSync, spawn } from "node:child_process";
import { existsSync, rmSync } from "node:fs";
import { gzipSync } from "node:zlib";
import { createClient } from "@libsql/client";
import autocannon from "autocannon";

const BUILD = process.env.RAILWISE_BUILD_DIR ?? "build";
const PORT = Number(process.env.BENCH_PORT ?? 3451);
const ORIGIN = `http://127.0.0.1:${PORT}`;
const TECHS = 50;
const OFFERED_READINGS_PER_S = 100;
const DURATION_S = Number(process.env.BENCH_SECONDS ?? 10);
const DB_FILE = `./data/bench-walker-${PORT}.db`;
const WORKERS = process.env.WEB_CONCURRENCY ?? "2";

// Nets of the demo OM-5150 map with plausible live readings; the walker judges each one.
const READINGS: Array<[string, string]> = [
  ["vsys", "12.6"],
  ["v3p3-aon", "3.31"],
  ["en-5v-stby", "3.28"],
  ["v5-stby", "5.02"],
  ["v3p3-stby", "3.30"],
];

type TechState = {
  runId: string;
  seq: number;
  t0: number;
  pairs: number;
  saved: number;
  bad: number;
  resyncing?: boolean;
};

// After a conflict (e.g. an action that timed out at the client but was saved), a tech reads the run's last step
// again, as the walker does by revalidating; the bench reads it from its own database file.
let benchDb: ReturnType<typeof createClient> | null = null;
/** The sequence number the run's next reading must carry, read from the bench's database file. */
async function nextSeq(runId: string) {
  benchDb ??= createClient({ url: `file:${DB_FILE}` });
  const r = await benchDb.execute({
    sql: "select coalesce(max(seq), 0) as s from readings where run_id = ?",
    args: [runId],
  });
  return Number(r.rows[0]?.s ?? 0) + 1;
}

function resync(st: TechState) {
  if (st.resyncing) return;
  st.resyncing = true;
  nextSeq(st.runId)
    .then((seq) => {
      st.seq = seq;
    })
    .finally(() => {
      st.resyncing = false;
    });
}

/** A phase that stops mid-request leaves a reading saved whose answer never came: start each phase in step. */
async function resyncAll(techs: TechState[]) {
  await new Promise((r) => setTimeout(r, 300));
  for (const st of techs) st.seq = await nextSeq(st.runId);
}

function log(msg: string) {
  console.log(msg);
}

async function waitForHealth(timeoutMs = 30_000) {
  const start = Date.now();
  while (Date.now() - start < timeoutMs) {
    try {
      const res = await fetch(`${ORIGIN}/healthz`);
      if (res.ok) return;
    } catch {
      // not up yet
    }
    await new Promise((r) => setTimeout(r, 200));
  }
  throw new Error(`server did not answer ${ORIGIN}/healthz`);
}

function startServer(): ChildProcess {
  for (const suffix of ["", "-wal", "-shm"]) rmSync(`${DB_FILE}${suffix}`, { force: true });
  // BENCH_NODE_ARGS, e.g. "--cpu-prof --cpu-prof-dir=/tmp/prof", is passed to the server's node.
  const nodeArgs = (process.env.BENCH_NODE_ARGS ?? "").split(" ").filter(Boolean);
  const child = spawn(process.execPath, [...nodeArgs, "server.mjs"], {
    env: {
      ...process.env,
      NODE_ENV: "production",
      PORT: String(PORT),
      HOST: "127.0.0.1",
      RAILWISE_BUILD_DIR: BUILD,
      DATABASE_URL: `file:${DB_FILE}`,
      SEED_DEMO: "1",
      MAIL_CAPTURE: "1",
      SIGNIN_MAX_PER_ADDRESS: "100000",
      SESSION_SECRET: "bench-walker-session-secret-0123456789",
      // One worker process per core of this 2-core machine (server.mjs); WEB_CONCURRENCY=1 measures one.
      WEB_CONCURRENCY: WORKERS,
    },
    stdio: ["ignore", "ignore", "inherit"],
  });
  return child;
}

async function signIn(email: string, password: string): Promise<string> {
  const res = await fetch(`${ORIGIN}/login`, {
    method: "POST",
    redirect: "manual",
    headers: { "Content-Type": "application/x-www-form-urlencoded", Origin: ORIGIN },
    body: new URLSearchParams({ email, password, redirectTo: "" }),
  });
  const cookie = res.headers
    .getSetCookie()
    .map((c) => c.split(";")[0])
    .find((c) => c.startsWith("rw_session="));
  if (!cookie) throw new Error(`sign-in failed: ${res.status}`);
  return cookie;
}

async function createRun(cookie: string, boardId: string, mapVersionId: string): Promise<string> {
  const res = await fetch(`${ORIGIN}/runs/new?boardId=${boardId}`, {
    method: "POST",
    redirect: "manual",
    headers: { "Content-Type": "application/x-www-form-urlencoded", Origin: ORIGIN, Cookie: cookie },
    body: new URLSearchParams({
      boardId,
      mapVersionId,
      condition: "both",
      pressButton: "on",
      strategy: "best",
    }),
  });
  const loc = res.headers.get("Location") ?? "";
  const m = /\/runs\/([a-z0-9]+)$/.exec(loc);
  if (!m) throw new Error(`run not created: ${res.status} ${loc}`);
  return m[1];
}

function requestsFor(st: TechState, cookie: string, roundTrips: number[] | null): autocannon.Request[] {
  return [
    {
      method: "POST" as const,
      path: `/runs/${st.runId}.data`,
      headers: { "Content-Type": "application/x-www-form-urlencoded", Origin: ORIGIN, Cookie: cookie },
      setupRequest: (req: autocannon.Request) => {
        st.t0 = performance.now();
        const [netId, text] = READINGS[st.seq % READINGS.length];
        req.body = new URLSearchParams({
          intent: "reading",
          id: `${st.runId}-${st.seq}-${Math.random().toString(36).slice(2, 10)}`,
          netId,
          mode: "voltage",
          text,
          expectedSeq: String(st.seq),
        }).toString();
        return req;
      },
      onResponse: (status: number, body: string) => {
        // The answer must carry the fresh run (its next sequence number), or the walker would have to ask again.
        if (status === 200 && body.includes("nextSeq")) {
          st.seq++;
          st.saved++;
          // The first request of a connection was built before the socket opened: its start is not a send time.
          if (roundTrips && st.pairs > 0) roundTrips.push(performance.now() - st.t0);
          st.pairs++;
        } else {
          st.bad++;
          tally(status === 200 ? "POST 200 without the run" : `POST ${status}`);
          if (status === 409) resync(st);
        }
      },
    },
  ];
}

type Result = autocannon.Result;

function runCannon(opts: autocannon.Options): Promise<Result> {
  return new Promise((resolve, reject) => {
    autocannon(opts, (err, result) => (err ? reject(err) : resolve(result)));
  });
}

// Non-2xx answers are counted once, by status, in the requests' own handlers; autocannon adds transport
// errors and timeouts.
const failures = (r: Result) => r.errors + r.timeouts;
const statusTally = new Map<string, number>();
const tally = (key: string) => statusTally.set(key, (statusTally.get(key) ?? 0) + 1);
const tallyText = (r: Result[]) =>
  [
    ...[...statusTally].map(([k, n]) => `${k}: ${n}`),
    `transport errors: ${r.reduce((a, x) => a + x.errors, 0)}`,
    `timeouts: ${r.reduce((a, x) => a + x.timeouts, 0)}`,
  ].join(", ");

async function walkerJsKbGz(cookie: string, runId: string) {
  const html = await (await fetch(`${ORIGIN}/runs/${runId}`, { headers: { Cookie: cookie } })).text();
  const hrefs = [...html.matchAll(/<link rel="modulepreload" href="([^"]+)"/g)].map((m) => m[1]);
  if (!hrefs.length) throw new Error("the walker page preloads no scripts: is it the production build?");
  let bytes = 0;
  for (const href of new Set(hrefs)) {
    const body = Buffer.from(await (await fetch(new URL(href, ORIGIN))).arrayBuffer());
    bytes += gzipSync(body, { level: 6 }).length;
  }
  return { kb: bytes / 1024, scripts: new Set(hrefs).size };
}

function percentile(sorted: number[], p: number) {
  if (!sorted.length) return Number.NaN;
  return sorted[Math.min(sorted.length - 1, Math.ceil(p * sorted.length) - 1)];
}

async function main() {
  if (!existsSync(`${BUILD}/server/index.js`)) {
    log(`building into ${BUILD} …`);
    execSync("npx react-router build", {
      stdio: "inherit",
      env: { ...process.env, RAILWISE_BUILD_DIR: BUILD },
    });
  }
  const server = startServer();
  try {
    await waitForHealth();
    const cookie = await signIn("tech@harbor.example", "bench-demo-2026");
    const boardId = "demo-board-om5150";
    const form = await (
      await fetch(`${ORIGIN}/runs/new?boardId=${boardId}`, { headers: { Cookie: cookie } })
    ).text();
    const versionId = /name="mapVersionId"[^>]*><option value="([^"]+)"/.exec(form)?.[1];
    if (!versionId)
      throw new Error(
        `no published OM-5150 map version in the demo data: ${form.slice(form.indexOf("<main"), form.indexOf("<main") + 1500)}`,
      );
    const techs: TechState[] = [];
    for (let i = 0; i < TECHS; i++)
      techs.push({
        runId: await createRun(cookie, boardId, versionId),
        seq: 1,
        t0: 0,
        pairs: 0,
        saved: 0,
        bad: 0,
      });
    const js = await walkerJsKbGz(cookie, techs[0].runId);
    log(`walker route preloads ${js.scripts} scripts: ${js.kb.toFixed(1)} KB gzip`);

    // Warm-up (not measured): JIT, caches, SQLite pages.
    let w = 0;
    await runCannon({
      url: ORIGIN,
      connections: 10,
      duration: 2,
      setupClient: (client) => client.setRequests(requestsFor(techs[w++ % TECHS], cookie, null)),
    });
    for (const t of techs) {
      t.pairs = 0;
      t.saved = 0;
      t.bad = 0;
    }

    // 1. Fixed offered rate.
    await resyncAll(techs);
    const roundTrips: number[] = [];
    const perConnRate = OFFERED_READINGS_PER_S / TECHS; // requests/s: one request per reading
    const started = performance.now();
    const results = await Promise.all(
      techs.map(
        (t, i) =>
          new Promise<Result>((resolve, reject) => {
            setTimeout(
              () => {
                runCannon({
                  url: ORIGIN,
                  connections: 1,
                  connectionRate: perConnRate,
                  duration: DURATION_S,
                  requests: requestsFor(t, cookie, roundTrips),
                }).then(resolve, reject);
              },
              (i * 1000) / TECHS,
            );
          }),
      ),
    );
    const wall = (performance.now() - started) / 1000;
    const saved = techs.reduce((a, t) => a + t.saved, 0);
    const achieved = saved / DURATION_S;
    const errorsA = results.reduce((a, r) => a + failures(r), 0) + techs.reduce((a, t) => a + t.bad, 0);
    roundTrips.sort((a, b) => a - b);
    const p50 = percentile(roundTrips, 0.5);
    const p95 = percentile(roundTrips, 0.95);
    const p99 = percentile(roundTrips, 0.99);
    log(
      `fixed rate: offered ${OFFERED_READINGS_PER_S} readings/s for ${DURATION_S} s (${wall.toFixed(1)} s wall), achieved ${achieved.toFixed(1)} readings/s, ${errorsA} errors (${tallyText(results)})`,
    );
    statusTally.clear();
    log(
      `round trip (reading sent to answer with the next step), ${roundTrips.length} readings: p50 ${p50.toFixed(1)} ms, p95 ${p95.toFixed(1)} ms, p99 ${p99.toFixed(1)} ms`,
    );
    const valid = achieved >= 0.99 * OFFERED_READINGS_PER_S;
    if (!valid)
      log(`VOID: achieved ${achieved.toFixed(1)} < 99 % of the offered ${OFFERED_READINGS_PER_S} readings/s`);
    log(
      p95 < 50 && errorsA === 0
        ? "target met: p95 < 50 ms with zero errors"
        : "target NOT met: p95 < 50 ms with zero errors",
    );

    // 2. Flat out.
    await resyncAll(techs);
    for (const t of techs) {
      t.saved = 0;
      t.bad = 0;
    }
    let k = 0;
    const flat = await runCannon({
      url: ORIGIN,
      connections: TECHS,
      duration: DURATION_S,
      setupClient: (client) => client.setRequests(requestsFor(techs[k++ % TECHS], cookie, null)),
    });
    const maxReadings = techs.reduce((a, t) => a + t.saved, 0) / DURATION_S;
    const errorsB = failures(flat) + techs.reduce((a, t) => a + t.bad, 0);
    log(
      `flat out, ${TECHS} connections: ${maxReadings.toFixed(0)} readings/s (${flat.requests.average.toFixed(0)} requests/s, latency p99 ${flat.latency.p99} ms), ${errorsB} errors (${tallyText([flat])})`,
    );

    console.log(
      `RESULT walker_p95_ms=${valid ? p95.toFixed(1) : "void"} walker_max_rps=${maxReadings.toFixed(0)} achieved_rps=${achieved.toFixed(1)} errors=${errorsA + errorsB} walker_js_kb_gz=${js.kb.toFixed(1)}`,
    );
  } finally {
    server.kill("SIGTERM");
  }
}

main().catch((e) => {
  console.error(e);
  process.exit(1);
});
