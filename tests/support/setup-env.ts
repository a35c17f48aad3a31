import { randomUUID } from "node:crypto";
import { tmpdir } from "node:os";
import path from "node:path";

// Every test file gets its own fresh SQLite file (vitest re-imports modules per file), migrated on first import.
process.env.NODE_ENV = "test";
process.env.DATABASE_URL =
  process.env.TEST_DATABASE_URL ?? `file:${path.join(tmpdir(), `railwise-test-${randomUUID()}.db`)}`;
process.env.MAIL_CAPTURE ??= "1";
process.env.SESSION_SECRET = "test-session-secret-0123456789";
delete process.env.SEED_DEMO;
