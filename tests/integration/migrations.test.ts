import { randomUUID } from "node:crypto";
import { readdirSync, readFileSync, rmSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { createClient } from "@libsql/client";
import { getTableName, is } from "drizzle-orm";
import { drizzle } from "drizzle-orm/libsql";
import { migrate } from "drizzle-orm/libsql/migrator";
import { getTableConfig, SQLiteTable } from "drizzle-orm/sqlite-core";
import { afterAll, describe, expect, it } from "vitest";
import * as schema from "~/server/schema.server";

// Migrations are forward-only. From nothing, an empty database gets every table and column the Drizzle
// schema declares, and running the migrator again changes nothing. From the previous release (its migrations
// kept as shipped under tests/fixtures/release-1), a filled database upgrades to the same schema as a new one
// and keeps every row it had.

const file = path.join(tmpdir(), `railwise-migrations-${randomUUID()}.db`);
const client = createClient({ url: `file:${file}` });
const db = drizzle(client);
const migrationsFolder = path.resolve(import.meta.dirname, "../../drizzle");
const releasedFolder = path.resolve(import.meta.dirname, "../fixtures/release-1");

const upgradeFile = path.join(tmpdir(), `railwise-upgrade-${randomUUID()}.db`);
const upgradeClient = createClient({ url: `file:${upgradeFile}` });
const upgradeDb = drizzle(upgradeClient);

afterAll(() => {
  client.close();
  upgradeClient.close();
  for (const f of [file, upgradeFile])
    for (const s of ["", "-wal", "-shm", "-journal"]) rmSync(f + s, { force: true });
});

async function dump(c = client) {
  const rows = await c.execute(
    "select type, name, tbl_name, sql from sqlite_master where name not like 'sqlite_%' order by type, name",
  );
  return rows.rows.map((r) => ({ ...r }));
}

const declared = Object.values(schema as Record<string, unknown>).filter((t): t is SQLiteTable =>
  is(t, SQLiteTable),
);

describe("migrations", () => {
  it("bring an empty database to the schema, then are a no-op", async () => {
    expect((await dump()).length).toBe(0);
    await migrate(db, { migrationsFolder });
    const first = await dump();

    const tables = new Set(first.filter((r) => r.type === "table").map((r) => String(r.name)));
    expect(declared.length).toBeGreaterThan(10);
    for (const table of declared) {
      const name = getTableName(table);
      expect(tables.has(name), `table ${name} is in the schema but not created by the migrations`).toBe(true);
      const columns = (await client.execute(`pragma table_info("${name}")`)).rows.map((r) => String(r.name));
      const wanted = getTableConfig(table).columns.map((c) => c.name);
      expect(columns.sort(), `columns of ${name}`).toEqual([...wanted].sort());
    }
    // No table the schema has forgotten (besides the migrator's own journal).
    const extra = [...tables].filter(
      (t) => !t.startsWith("__drizzle") && !declared.some((d) => getTableName(d) === t),
    );
    expect(extra).toEqual([]);

    const journal = (await client.execute("select count(*) as n from __drizzle_migrations")).rows[0].n;
    await migrate(db, { migrationsFolder });
    expect(await dump()).toEqual(first);
    expect((await client.execute("select count(*) as n from __drizzle_migrations")).rows[0].n).toBe(journal);
  });
});

type Journal = { entries: Array<{ idx: number; when: number; tag: string }> };
const journalOf = (folder: string) =>
  JSON.parse(readFileSync(path.join(folder, "meta/_journal.json"), "utf8")) as Journal;

/** One row per table with a value for every column, in the types SQLite declared for them. */
async function fillEveryTable(c: typeof upgradeClient) {
  const tables = (
    await c.execute(
      "select name from sqlite_master where type = 'table' and name not like 'sqlite_%' and name not like '__drizzle%'",
    )
  ).rows.map((r) => String(r.name));
  // Foreign keys off while filling: the rows are independent samples, not a coherent shop.
  await c.execute("PRAGMA foreign_keys=OFF");
  const before = new Map<string, Record<string, unknown>>();
  for (const table of tables) {
    const cols = (await c.execute(`pragma table_info("${table}")`)).rows;
    const values = cols.map((col) => {
      const type = String(col.type).toLowerCase();
      if (type.includes("int")) return 1_700_000_000_000;
      if (type.includes("real")) return 12.5;
      if (type.includes("blob")) return new Uint8Array([1, 2, 3]);
      // JSON text columns must hold JSON; a quoted string is valid JSON for them all.
      return JSON.stringify(`${table}.${String(col.name)}`);
    });
    await c.execute({
      sql: `insert into "${table}" (${cols.map((col) => `"${String(col.name)}"`).join(", ")}) values (${cols.map(() => "?").join(", ")})`,
      args: values,
    });
    const row = (await c.execute(`select * from "${table}"`)).rows[0];
    before.set(table, { ...row });
  }
  return before;
}

describe("upgrading from the previous release", () => {
  it("keeps the released migrations exactly as they shipped", () => {
    const released = journalOf(releasedFolder).entries;
    const current = journalOf(migrationsFolder).entries;
    expect(released.length).toBeGreaterThan(0);
    for (const entry of released) {
      // Forward-only: a shipped migration is never edited, renamed or re-dated (databases in the field ran it).
      expect(current[entry.idx], `migration ${entry.tag}`).toMatchObject({
        tag: entry.tag,
        when: entry.when,
      });
      expect(readFileSync(path.join(migrationsFolder, `${entry.tag}.sql`), "utf8"), `${entry.tag}.sql`).toBe(
        readFileSync(path.join(releasedFolder, `${entry.tag}.sql`), "utf8"),
      );
    }
    const sqlFiles = readdirSync(migrationsFolder).filter((f) => f.endsWith(".sql"));
    expect(sqlFiles.length, "every migration file is in the journal").toBe(current.length);
  });

  it("brings a filled database of the released schema to the current one and loses no row", async () => {
    await migrate(upgradeDb, { migrationsFolder: releasedFolder });
    const before = await fillEveryTable(upgradeClient);
    await upgradeClient.execute("PRAGMA foreign_keys=ON");

    await migrate(upgradeDb, { migrationsFolder });

    // The same tables, columns, indexes and triggers as a database built from empty with today's migrations.
    const fresh = createClient({ url: `file:${upgradeFile}.fresh` });
    try {
      await migrate(drizzle(fresh), { migrationsFolder });
      expect(await dump(upgradeClient)).toEqual(await dump(fresh));
    } finally {
      fresh.close();
      for (const s of ["", "-wal", "-shm", "-journal"]) rmSync(`${upgradeFile}.fresh${s}`, { force: true });
    }
    // Every row is still there with every value it had; columns added since read as their default.
    for (const [table, row] of before) {
      const after = (await upgradeClient.execute(`select * from "${table}"`)).rows;
      expect(after.length, `rows in ${table}`).toBe(1);
      expect({ ...after[0] }, `row of ${table}`).toMatchObject(row);
    }
    const note = (await upgradeClient.execute("select upload_id from run_notes")).rows[0];
    expect(note.upload_id).toBeNull();
    const applied = (await upgradeClient.execute("select count(*) as n from __drizzle_migrations")).rows[0].n;
    expect(Number(applied)).toBe(journalOf(migrationsFolder).entries.length);
  });
});
