import { randomUUID } from "node:crypto";
import { tmpdir } from "node:os";
import path from "node:path";

// Every test file gets its own fresh database (vitest re-imports modules per file), migrated on first import:
// a temporary SQLite file by default, or with TEST_LIBSQL=1 a real libSQL server (sqld) started for the file.
process.env.NODE_ENV = "test";
process.env.MAIL_CAPTURE ??= "1";
process.env.SESSION_SECRET = "test-session-secret-0123456789";
delete process.env.SEED_DEMO;

if (process.env.TEST_LIBSQL === "1") {
  const { startSqld } = await import("./libsql-server");
  process.env.DATABASE_URL = (await startSqld()).url;
} else {
  process.env.DATABASE_URL = `file:${path.join(tmpdir(), `railwise-test-${randomUUID()}.db`)}`;
}
