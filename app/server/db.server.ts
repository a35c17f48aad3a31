import { mkdirSync } from "node:fs";
import path from "node:path";
import { createClient } from "@libsql/client";
import { drizzle } from "drizzle-orm/libsql";
import { migrate } from "drizzle-orm/libsql/migrator";
import { env } from "./env.server";
import * as schema from "./schema.server";
import { ROLLUP_BACKFILL, ROLLUP_TRIGGERS } from "./schema.server";
import { installStatementCache } from "./sqlite-statement-cache.server";

installStatementCache();

function migrationsFolder() {
  // The server build runs from the repository root; tests too. MIGRATIONS_DIR lets a packaged build point elsewhere.
  return process.env.MIGRATIONS_DIR ?? path.resolve(process.cwd(), "drizzle");
}

export function openDatabase(url = env.DATABASE_URL, authToken = env.DATABASE_AUTH_TOKEN) {
  if (url.startsWith("file:")) {
    const file = url.slice("file:".length);
    if (file && file !== ":memory:") mkdirSync(path.dirname(path.resolve(file)), { recursive: true });
  }
  // `timeout` is the busy timeout of every pooled connection (a PRAGMA would reach only one).
  const client = createClient({ url, authToken, timeout: env.DATABASE_TIMEOUT_MS });
  const db = drizzle(client, { schema });
  return { client, db };
}

export type Db = ReturnType<typeof openDatabase>["db"];

/** How every connection to a local file reads (the comment in `prepare` says why); the read threads too. */
export const READ_PRAGMAS = ["PRAGMA cache_size=-16384", "PRAGMA mmap_size=1073741824"];

async function prepare(client: ReturnType<typeof createClient>, db: Db) {
  if (env.DATABASE_URL.startsWith("file:")) {
    await client.execute("PRAGMA journal_mode=WAL");
    await client.execute("PRAGMA foreign_keys=ON");
    // In WAL mode `normal` syncs the log at checkpoints instead of at every commit: a commit survives the
    // process being killed, and a power cut can undo only the last moments (docs/decisions/008-…).
    await client.execute(`PRAGMA synchronous=${env.DATABASE_SYNCHRONOUS === "full" ? "FULL" : "NORMAL"}`);
    // Insights read 10-30 MB of index per page at 100,000 runs: memory-mapped reads up to 1 GiB (no read()
    // copy per page, and the pages stay the kernel's file cache, shared and droppable, instead of growing the
    // process's own memory) and a 16 MB page cache for the rest (pages of the write-ahead log, pages being
    // written). Per connection: this reaches the pool's first connection, the one every call reuses while no
    // transaction holds it (extra connections open only beside an open transaction); the insights read thread
    // sets the same on its own connection (read-thread.server.ts).
    for (const pragma of READ_PRAGMAS) await client.execute(pragma);
  }
  // (Counted only when the table exists: SQLite compiles a query on a missing table as an error.)
  const applied = async () => {
    const made = await client.execute("SELECT 1 FROM sqlite_master WHERE name = '__drizzle_migrations'");
    if (!made.rows.length) return 0;
    return Number((await client.execute("SELECT COUNT(*) AS n FROM __drizzle_migrations")).rows[0].n);
  };
  const before = await applied();
  await migrate(db, { migrationsFolder: migrationsFolder() });
  await installRollupTriggers(client, (await applied()) !== before);
}

/**
 * Creates the insights rollup triggers that are missing or changed, and then recomputes the rollups; also
 * recomputes them after a migration, which may have added or rebuilt a rollup table the triggers fill.
 */
export async function installRollupTriggers(client: ReturnType<typeof createClient>, migrated: boolean) {
  const have = await client.execute("SELECT name, sql FROM sqlite_master WHERE type = 'trigger'");
  const current = new Map(have.rows.map((r) => [String(r.name), String(r.sql)]));
  const stale = Object.entries(ROLLUP_TRIGGERS).filter(([name, ddl]) => current.get(name) !== ddl);
  if (!stale.length && !migrated) return;
  await client.batch(
    [...stale.flatMap(([name, ddl]) => [`DROP TRIGGER IF EXISTS ${name}`, ddl]), ...ROLLUP_BACKFILL],
    "write",
  );
}

const opened = openDatabase();
export const client = opened.client;
export const db = opened.db;

// Migrations are applied before the first request is served: every module that reads the database imports this one.
await prepare(client, db);

if (env.SEED_DEMO === "1") {
  const { seedDemo } = await import("../../seed/demo.server");
  await seedDemo(db);
}
