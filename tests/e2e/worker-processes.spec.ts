import { type ChildProcess, spawn } from "node:child_process";
import { readFileSync, rmSync } from "node:fs";
import { expect, test } from "@playwright/test";
import { freePort } from "../support/libsql-server";

// server.mjs with WEB_CONCURRENCY=2: the workers it forks run with the JavaScript heap limit WORKER_HEAP_MB sets
// (256 MB by default; none when it is 0) and glibc's MALLOC_ARENA_MAX at 2 unless the environment sets it
// (docs/benchmarks.md on why both). Node-side only.

const DB_FILE = `./data/h8-workers-${process.pid}.db`;

type Worker = { args: string[]; env: string[] };

async function workers(env: Record<string, string>): Promise<Worker[]> {
  const port = await freePort();
  // This machine's own settings of the two must not stand in for server.mjs's defaults.
  const { MALLOC_ARENA_MAX: _arenas, WORKER_HEAP_MB: _heap, ...inherited } = process.env;
  const child: ChildProcess = spawn(process.execPath, ["server.mjs"], {
    env: {
      ...inherited,
      NODE_ENV: "production",
      PORT: String(port),
      HOST: "127.0.0.1",
      RAILWISE_BUILD_DIR: process.env.RAILWISE_BUILD_DIR ?? "build",
      DATABASE_URL: `file:${DB_FILE}`,
      MAIL_CAPTURE: "1",
      SECURE_COOKIES: "0",
      SESSION_SECRET: "workers-session-secret-0123456789",
      WEB_CONCURRENCY: "2",
      NODE_OPTIONS: "",
      ...env,
    },
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
    return children().map((pid) => ({
      args: readFileSync(`/proc/${pid}/cmdline`, "utf8").split("\0"),
      env: readFileSync(`/proc/${pid}/environ`, "utf8").split("\0"),
    }));
  } finally {
    child.kill("SIGTERM");
    await new Promise((r) => (child.exitCode !== null || child.signalCode ? r(null) : child.once("exit", r)));
  }
}

test.afterAll(() => {
  for (const s of ["", "-wal", "-shm", "-journal"]) rmSync(`${DB_FILE}${s}`, { force: true });
});

test("worker processes run with a capped JavaScript heap and two malloc arenas, unless told otherwise", async () => {
  test.setTimeout(90_000);
  for (const w of await workers({})) {
    expect(w.args).toContain("--max-old-space-size=256");
    expect(w.env).toContain("MALLOC_ARENA_MAX=2");
  }
  for (const w of await workers({ WORKER_HEAP_MB: "512", MALLOC_ARENA_MAX: "4" })) {
    expect(w.args).toContain("--max-old-space-size=512");
    expect(w.env).toContain("MALLOC_ARENA_MAX=4");
  }
  for (const w of await workers({ WORKER_HEAP_MB: "0" }))
    expect(w.args.some((a) => a.startsWith("--max-old-space-size"))).toBe(false);
});
