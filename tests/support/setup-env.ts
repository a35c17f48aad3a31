import { randomUUID } from "node:crypto";
import { appendFileSync, rmSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { afterAll, inject } from "vitest";

// Every test file gets its own fresh database (vitest re-imports modules per file), migrated on first import:
// a temporary SQLite file by default, or with TEST_LIBSQL=1 a real libSQL server (sqld) started for the file.
// Both are removed when the file's tests are done (a worker process may be ended without an exit event).
process.env.NODE_ENV = "test";
process.env.MAIL_CAPTURE ??= "1";
process.env.SESSION_SECRET = "test-session-secret-0123456789";
delete process.env.SEED_DEMO;

if (process.env.TEST_LIBSQL === "1") {
  const { startSqld } = await import("./libsql-server");
  const sqld = await startSqld();
  process.env.DATABASE_URL = sqld.url;
  appendFileSync(inject("sqldPidsFile"), `${sqld.process.pid}\n`);
  afterAll(() => sqld.stop());
} else {
  const file = path.join(tmpdir(), `railwise-test-${randomUUID()}.db`);
  process.env.DATABASE_URL = `file:${file}`;
  afterAll(async () => {
    // The insights read threads hold their own connections to the file: close them first, if a test started
    // them (read-thread.server.ts leaves its closer here, so files that never touched it do not load it).
    const close = (globalThis as Record<symbol, unknown>)[Symbol.for("railwise.closeReportThreads")];
    if (typeof close === "function") await close();
    for (const suffix of ["", "-wal", "-shm"]) rmSync(`${file}${suffix}`, { force: true });
  });
}
