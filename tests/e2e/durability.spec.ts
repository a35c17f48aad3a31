import { type ChildProcess, spawn } from "node:child_process";
import { rmSync } from "node:fs";
import { createClient } from "@libsql/client";
import { expect, test } from "@playwright/test";
import { freePort } from "../support/libsql-server";
import { productionServerEnv } from "./support";

// The production server is killed (SIGKILL: no shutdown hooks, no flush) in the middle of a burst of walker
// readings; after a restart on the same database file, every reading the server acknowledged with a 2xx is there.
// Node-side only: the walker's fetcher requests are sent over HTTP as the browser would send them.

const DB_FILE = `./data/h8-durability-${process.pid}.db`;
const READINGS: Array<[string, string]> = [
  ["vsys", "12.6"],
  ["v3p3-aon", "3.31"],
  ["en-5v-stby", "3.28"],
  ["v5-stby", "5.02"],
  ["v3p3-stby", "3.30"],
];

async function startServer(port: number) {
  const child: ChildProcess = spawn(process.execPath, ["server.mjs"], {
    env: productionServerEnv(port, `file:${DB_FILE}`, { SEED_DEMO: "1", SIGNIN_MAX_PER_ADDRESS: "100000" }),
    stdio: ["ignore", "ignore", "inherit"],
  });
  const base = `http://127.0.0.1:${port}`;
  await expect
    .poll(async () => (await fetch(`${base}/healthz`).catch(() => null))?.status ?? 0, { timeout: 30_000 })
    .toBe(200);
  return { base, child };
}

async function signIn(base: string) {
  const res = await fetch(`${base}/login`, {
    method: "POST",
    redirect: "manual",
    headers: { "Content-Type": "application/x-www-form-urlencoded", Origin: base },
    body: new URLSearchParams({ email: "tech@harbor.example", password: "bench-demo-2026", redirectTo: "" }),
  });
  expect(res.status).toBe(302);
  return res.headers
    .getSetCookie()
    .map((c) => c.split(";")[0])
    .find((c) => c.startsWith("rw_session="))!;
}

/** Opens a run on the demo OM-5150 board through the new-run form, as the page does. */
async function newRun(base: string, cookie: string) {
  const boardId = "demo-board-om5150";
  const page = await (
    await fetch(`${base}/runs/new?boardId=${boardId}`, { headers: { Cookie: cookie } })
  ).text();
  const mapVersionId = /name="mapVersionId"[^>]*><option value="([^"]+)"/.exec(page)?.[1];
  expect(mapVersionId, "the demo OM-5150 map has a published version").toBeTruthy();
  const res = await fetch(`${base}/runs/new?boardId=${boardId}`, {
    method: "POST",
    redirect: "manual",
    headers: { "Content-Type": "application/x-www-form-urlencoded", Origin: base, Cookie: cookie },
    body: new URLSearchParams({ boardId, mapVersionId: mapVersionId!, condition: "both", pressButton: "on" }),
  });
  expect(res.status).toBe(302);
  return /\/runs\/([A-Za-z0-9_-]+)$/.exec(res.headers.get("Location") ?? "")![1];
}

function postReading(base: string, cookie: string, runId: string, id: string, seq: number) {
  const [netId, text] = READINGS[(seq - 1) % READINGS.length];
  return fetch(`${base}/runs/${runId}.data`, {
    method: "POST",
    headers: { "Content-Type": "application/x-www-form-urlencoded", Origin: base, Cookie: cookie },
    body: new URLSearchParams({
      intent: "reading",
      id,
      netId,
      mode: "voltage",
      text,
      expectedSeq: String(seq),
    }),
  });
}

async function readingRows(sql: string, args: string[]) {
  const client = createClient({ url: `file:${DB_FILE}` });
  try {
    return (await client.execute({ sql, args })).rows;
  } finally {
    client.close();
  }
}

test.beforeAll(() => {
  for (const s of ["", "-wal", "-shm", "-journal"]) rmSync(`${DB_FILE}${s}`, { force: true });
});
test.afterAll(() => {
  for (const s of ["", "-wal", "-shm", "-journal"]) rmSync(`${DB_FILE}${s}`, { force: true });
});

test("every acknowledged reading survives a SIGKILL mid-burst", async () => {
  test.setTimeout(120_000);
  const port = await freePort();
  let server = await startServer(port);
  const cookie = await signIn(server.base);
  const runs = await Promise.all(Array.from({ length: 8 }, () => newRun(server.base, cookie)));

  const acknowledged: string[] = [];
  const attempted: string[] = [];
  let killed = false;
  // Eight technicians, each sending readings back to back (the next one after the previous is answered).
  const techs = runs.map(async (runId, t) => {
    for (let seq = 1; seq <= 400 && !killed; seq++) {
      const id = `dur-${t}-${seq}-${Math.random().toString(36).slice(2, 8)}`;
      attempted.push(id);
      try {
        const res = await postReading(server.base, cookie, runId, id, seq);
        const body = await res.text();
        if (res.status >= 200 && res.status < 300) acknowledged.push(id);
        else if (!killed)
          throw new Error(`reading refused before the kill: ${res.status} ${body.slice(0, 200)}`);
      } catch (e) {
        if (!killed) throw e;
        return;
      }
    }
  });
  // Let the burst run, then pull the plug while requests are in flight.
  await expect.poll(() => acknowledged.length, { timeout: 30_000 }).toBeGreaterThan(40);
  killed = true;
  server.child.kill("SIGKILL");
  await Promise.allSettled(techs);
  const dead = server.child;
  await new Promise((r) => (dead.exitCode !== null || dead.signalCode ? r(null) : dead.once("exit", r)));

  server = await startServer(port);
  try {
    const placeholders = acknowledged.map(() => "?").join(",");
    const rows = await readingRows(`select id from readings where id in (${placeholders})`, acknowledged);
    const stored = new Set(rows.map((r) => String(r.id)));
    const lost = acknowledged.filter((id) => !stored.has(id));
    expect(lost, `${lost.length} of ${acknowledged.length} acknowledged readings lost`).toEqual([]);
    // Nothing beyond what was sent appears, and each run's readings are numbered without gaps.
    const all = await readingRows(
      `select run_id, seq, id from readings where run_id in (${runs.map(() => "?").join(",")}) order by run_id, seq`,
      runs,
    );
    const sent = new Set(attempted);
    for (const r of all) expect(sent.has(String(r.id))).toBe(true);
    for (const runId of runs) {
      const seqs = all.filter((r) => r.run_id === runId).map((r) => Number(r.seq));
      expect(seqs).toEqual(seqs.map((_, i) => i + 1));
    }
    // The restarted app shows the run with its readings (its own loader, not just the file).
    const page = await fetch(`${server.base}/runs/${runs[0]}`, {
      headers: { Cookie: await signIn(server.base) },
    });
    expect(page.status).toBe(200);
  } finally {
    server.child.kill("SIGTERM");
  }
});

test("a replayed reading (same client id) is stored once", async () => {
  test.setTimeout(90_000);
  const port = await freePort();
  const server = await startServer(port);
  try {
    const cookie = await signIn(server.base);
    const runId = await newRun(server.base, cookie);
    const id = `replay-${Date.now().toString(36)}`;
    const first = await postReading(server.base, cookie, runId, id, 1);
    expect(first.status).toBe(200);
    // The network dropped the answer; the walker sends the very same request again.
    const second = await postReading(server.base, cookie, runId, id, 1);
    expect(second.status).toBe(200);
    const rows = await readingRows("select id, seq from readings where run_id = ?", [runId]);
    expect(rows.map((r) => [String(r.id), Number(r.seq)])).toEqual([[id, 1]]);
    // A different id for the next step is a new reading, numbered 2.
    expect((await postReading(server.base, cookie, runId, `${id}-b`, 2)).status).toBe(200);
    expect((await readingRows("select id from readings where run_id = ?", [runId])).length).toBe(2);
  } finally {
    server.child.kill("SIGTERM");
  }
});
