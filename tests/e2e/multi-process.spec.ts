import { type ChildProcess, spawn } from "node:child_process";
import { existsSync } from "node:fs";
import { expect, test } from "@playwright/test";
import { freePort, SQLD_BINARY, startSqld } from "../support/libsql-server";
import { productionServerEnv } from "./support";

// Two app processes against one real libSQL server: the app keeps no state of its own between requests,
// so a sign-up on one process is a session on the other, and a write on either is seen by both.

async function startApp(databaseUrl: string) {
  const port = await freePort();
  const child: ChildProcess = spawn("node", ["server.mjs"], {
    env: productionServerEnv(port, databaseUrl, { SEED_DEMO: "0" }),
    stdio: "ignore",
  });
  const base = `http://127.0.0.1:${port}`;
  await expect
    .poll(async () => (await fetch(`${base}/healthz`).catch(() => null))?.status ?? 0, { timeout: 20_000 })
    .toBe(200);
  return { base, stop: () => child.kill("SIGTERM") };
}

const form = (fields: Record<string, string>) => ({
  method: "POST",
  body: new URLSearchParams(fields),
  headers: { "Content-Type": "application/x-www-form-urlencoded" },
  redirect: "manual" as const,
});

test("two app processes share one libSQL server", async () => {
  test.skip(!existsSync(SQLD_BINARY), "the sqld package installs on Linux x64 only");
  test.setTimeout(90_000);
  const sqld = await startSqld();
  // Migrations are applied by the first process; the second finds them done.
  const a = await startApp(sqld.url);
  const b = await startApp(sqld.url);
  try {
    const email = `twin-${Date.now()}@e2e.example`;
    const signup = await fetch(
      `${a.base}/signup`,
      form({ name: "Twin", shopName: "Two Process Bench", email, password: "two processes one db" }),
    );
    expect(signup.status).toBe(302);
    const cookie = signup.headers
      .getSetCookie()
      .find((c) => c.startsWith("rw_session="))!
      .split(";")[0];

    const onB = await fetch(`${b.base}/settings`, { headers: { Cookie: cookie } });
    expect(onB.status).toBe(200);
    expect(await onB.text()).toContain("Two Process Bench");

    const rename = await fetch(`${b.base}/settings`, {
      ...form({ intent: "shop", name: "Renamed On B" }),
      headers: { ...form({}).headers, Cookie: cookie },
    });
    expect(rename.status).toBe(302);
    const onA = await fetch(`${a.base}/settings`, { headers: { Cookie: cookie } });
    expect(await onA.text()).toContain("Renamed On B");
  } finally {
    a.stop();
    b.stop();
    sqld.stop();
  }
});
