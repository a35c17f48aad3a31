import { type ChildProcess, spawn } from "node:child_process";
import { readFileSync, rmSync } from "node:fs";
import { expect, test } from "@playwright/test";
import { freePort } from "../support/libsql-server";
import { productionServerEnv } from "./support";

// server.mjs with WEB_CONCURRENCY=2: the workers it forks run with the JavaScript heap limit WORKER_HEAP_MB sets
// (256 MB by default, docs/benchmarks.md on why), and without one when it is 0. Node-side only.

const DB_FILE = `./data/h8-workers-${process.pid}.db`;

async function workerArgs(env: Record<string, string>): Promise<string[][]> {
  const port = await freePort();
  // This machine's own setting must not stand in for server.mjs's default.
  const { WORKER_HEAP_MB: _heap, ...inherited } = process.env;
  const child: ChildProcess = spawn(process.execPath, ["server.mjs"], {
    env: productionServerEnv(
      port,
      `file:${DB_FILE}`,
      { WEB_CONCURRENCY: "2", NODE_OPTIONS: "", ...env },
      inherited,
    ),
    stdio: ["ignore", "ignore", "inherit"],
  });
  try {
    const children = () =>
      readFileSync(`/proc/${child.pid}/task/${child.pid}/children`, "utf8")
        .trim()
        .split(/\s+/)
        .filter(Boolean);
    // Both workers up: two children, and the port answering.
    await expect.poll(() => children().length, { timeout: 30_000 }).toBe(2);
    await expect
      .poll(async () => (await fetch(`http://127.0.0.1:${port}/healthz`).catch(() => null))?.status ?? 0, {
        timeout: 30_000,
      })
      .toBe(200);
    return children().map((pid) => readFileSync(`/proc/${pid}/cmdline`, "utf8").split("\0"));
  } finally {
    child.kill("SIGTERM");
    await new Promise((r) => (child.exitCode !== null || child.signalCode ? r(null) : child.once("exit", r)));
  }
}

test.afterAll(() => {
  for (const s of ["", "-wal", "-shm", "-journal"]) rmSync(`${DB_FILE}${s}`, { force: true });
});

test("worker processes run with a capped JavaScript heap, and without one when asked", async () => {
  test.setTimeout(90_000);
  for (const args of await workerArgs({})) expect(args).toContain("--max-old-space-size=256");
  for (const args of await workerArgs({ WORKER_HEAP_MB: "512" }))
    expect(args).toContain("--max-old-space-size=512");
  for (const args of await workerArgs({ WORKER_HEAP_MB: "0" }))
    expect(args.some((a) => a.startsWith("--max-old-space-size"))).toBe(false);
});
