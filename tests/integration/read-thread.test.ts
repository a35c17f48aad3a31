import { eq, sql } from "drizzle-orm";
import { describe, expect, it } from "vitest";
import { db } from "~/server/db.server";
import {
  closeReportThreads,
  readThreadCount,
  readThreadHeapMb,
  reportsDb,
} from "~/server/read-thread.server";
import { shops } from "~/server/schema.server";
import { createShopWithRoles } from "../support/fixtures";

// Insights run on their own thread and read connection when the database is a local file (a remote libSQL
// server answers asynchronously already, so there the main connection serves them).
const local = !process.env.DATABASE_URL?.startsWith("http");

describe.runIf(local)("the read thread of a local database file", () => {
  it("is its own connection, and sees every write the main connection committed, at once", async () => {
    const reports = reportsDb();
    expect(reports).not.toBe(db);
    const shop = await createShopWithRoles("Read thread shop");
    const name = `Renamed ${Date.now()}`;
    await db.update(shops).set({ name }).where(eq(shops.id, shop.shopId));
    const seen = await reports
      .select({ name: shops.name })
      .from(shops)
      .where(eq(shops.id, shop.shopId))
      .get();
    expect(seen?.name).toBe(name);
    // Raw statements come back as objects by column name, as on the main connection.
    const [row] = await reports.all<{ n: number; label: string }>(sql`SELECT 41 + 1 AS n, 'x' AS label`);
    expect(row).toEqual({ n: 42, label: "x" });
    // It reads as the main connection does (db-settings.test.ts): memory-mapped up to 1 GiB, 16 MB page cache.
    const [mmap] = await reports.all<{ mmap_size: number }>(sql`PRAGMA mmap_size`);
    expect(Number(mmap.mmap_size)).toBe(1024 ** 3);
    const [cache] = await reports.all<{ cache_size: number }>(sql`PRAGMA cache_size`);
    expect(Number(cache.cache_size)).toBe(-16 * 1024);
  });

  it("answers rows in the main connection's shape: by name, by index, and as value lists", async () => {
    const reports = reportsDb();
    // One statement with plain column names (the fast path) and one with a repeated name (the one-by-one path).
    for (const query of [
      "SELECT 1 AS a, 'two' AS b, NULL AS c UNION ALL SELECT 3, 'four', 5.5",
      "SELECT 1 AS a, 2 AS a, 'x' AS b",
    ]) {
      const [mine, theirs] = await Promise.all([reports.$client.execute(query), db.$client.execute(query)]);
      expect(mine.columns).toEqual(theirs.columns);
      expect(mine.rows.length).toBe(theirs.rows.length);
      mine.rows.forEach((row, i) => {
        const other = theirs.rows[i];
        expect(Object.keys(row)).toEqual(Object.keys(other));
        expect({ ...row }).toEqual({ ...other });
        expect(row.length).toBe(other.length);
        // drizzle reads a select's values by index (Array.prototype.slice over the row).
        expect(Array.prototype.slice.call(row)).toEqual(Array.prototype.slice.call(other));
        expect(JSON.stringify(row)).toBe(JSON.stringify(other));
      });
    }
    // Drizzle's own selects through both connections give the same objects.
    const [a, b] = await Promise.all([
      reports.select({ id: shops.id, name: shops.name }).from(shops).limit(3).all(),
      db.select({ id: shops.id, name: shops.name }).from(shops).limit(3).all(),
    ]);
    expect(a).toEqual(b);
  });

  it("only reads: a write is refused and changes nothing", async () => {
    const shop = await createShopWithRoles("Read-only shop");
    const refused = await reportsDb()
      .run(sql`UPDATE shops SET name = 'changed' WHERE id = ${shop.shopId}`)
      .catch((e: Error) => e);
    // (drizzle wraps the driver's error, on either connection, with the failed statement; SQLite's is the cause.)
    expect(String((refused as Error).cause)).toMatch(/readonly|read-only|query_only/i);
    const after = await db.select({ name: shops.name }).from(shops).where(eq(shops.id, shop.shopId)).get();
    expect(after?.name).toBe("Read-only shop");
  });

  it("answers a failing query with SQLite's message, and keeps serving", async () => {
    const failed = await reportsDb()
      .all(sql`SELECT * FROM no_such_table`)
      .catch((e: Error) => e);
    expect(String((failed as Error).cause)).toMatch(/no such table/);
    const [row] = await reportsDb().all<{ one: number }>(sql`SELECT 1 AS one`);
    expect(row.one).toBe(1);
  });
});

describe.runIf(local)("shutting the read threads down", () => {
  it("waits for the statements in hand, and later reports use the main connection", async () => {
    const before = reportsDb();
    // (A drizzle query starts when awaited: start it, and let it reach its thread, before closing.)
    const inHand = before.all<{ n: number }>(sql`SELECT COUNT(*) AS n FROM shops`).then((rows) => rows);
    await new Promise((resolve) => setImmediate(resolve));
    await closeReportThreads();
    // The statement sent before the close was answered, not cut off.
    expect(Number((await inHand)[0].n)).toBeGreaterThan(0);
    // A report that still holds the threads' handle finishes on the main connection; new ones get that one.
    const [late] = await before.all<{ one: number }>(sql`SELECT 1 AS one`);
    expect(late.one).toBe(1);
    expect(reportsDb()).toBe(db);
  });
});

describe.runIf(!local)("a remote libSQL server", () => {
  it("serves reports on the main connection", () => {
    expect(reportsDb()).toBe(db);
  });
});

describe("how many read threads a worker process starts", () => {
  it("takes READ_THREADS when it is a whole number from 1, at most 8", () => {
    expect(readThreadCount("1")).toBe(1);
    expect(readThreadCount("3")).toBe(3);
    expect(readThreadCount("20")).toBe(8);
  });

  it("otherwise two, whatever else READ_THREADS holds", () => {
    for (const other of [undefined, "", " ", "0", "-2", "1.5", "two"]) expect(readThreadCount(other)).toBe(2);
  });
});

describe("the heap limit of a read thread", () => {
  it("takes READ_THREAD_HEAP_MB when it is a whole number of megabytes from 16, else 64", () => {
    expect(readThreadHeapMb("128")).toBe(128);
    expect(readThreadHeapMb("16")).toBe(16);
    for (const other of [undefined, "", "0", "8", "-64", "64.5", "lots"])
      expect(readThreadHeapMb(other)).toBe(64);
  });
});
