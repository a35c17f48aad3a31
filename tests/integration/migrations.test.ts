import { randomUUID } from "node:crypto";
import { rmSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { createClient } from "@libsql/client";
import { getTableName, is } from "drizzle-orm";
import { drizzle } from "drizzle-orm/libsql";
import { migrate } from "drizzle-orm/libsql/migrator";
import { getTableConfig, SQLiteTable } from "drizzle-orm/sqlite-core";
import { afterAll, describe, expect, it } from "vitest";
import * as schema from "~/server/schema.server";

// Migrations are forward-only and start from nothing: an empty database gets every table and column the
// Drizzle schema declares, and running the migrator again changes nothing. (There is no earlier release yet,
// so "from the previous release's schema" is the same as "from empty" until the first release is tagged.)

const file = path.join(tmpdir(), `railwise-migrations-${randomUUID()}.db`);
const client = createClient({ url: `file:${file}` });
const db = drizzle(client);
const migrationsFolder = path.resolve(import.meta.dirname, "../../drizzle");

afterAll(() => {
  client.close();
  for (const s of ["", "-wal", "-shm", "-journal"]) rmSync(file + s, { force: true });
});

async function dump() {
  const rows = await client.execute(
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
