import { describe, expect, it } from "vitest";

// What the server sets on a local database file when it opens it (docs/decisions/001 and 008). SQLite's pragma
// values: journal_mode answers "wal"; synchronous answers 1 for NORMAL and 2 for FULL (sqlite.org/pragma.html).
const local = !process.env.DATABASE_URL?.startsWith("http");

describe.runIf(local)("a local database file", () => {
  it("is in WAL mode with NORMAL commits and a busy timeout on the connection", async () => {
    const { client } = await import("~/server/db.server");
    const mode = await client.execute("PRAGMA journal_mode");
    expect(String(mode.rows[0]?.[0])).toBe("wal");
    const sync = await client.execute("PRAGMA synchronous");
    expect(Number(sync.rows[0]?.[0])).toBe(1);
    // The client's `timeout` option is the connection's busy timeout (STACK.md); 5000 ms unless set.
    const busy = await client.execute("PRAGMA busy_timeout");
    expect(Number(busy.rows[0]?.[0])).toBe(5000);
    // Reads memory-mapped up to 1 GiB; a 16 MB page cache (a negative cache_size is in KiB).
    const mmap = await client.execute("PRAGMA mmap_size");
    expect(Number(mmap.rows[0]?.[0])).toBe(1024 ** 3);
    const cache = await client.execute("PRAGMA cache_size");
    expect(Number(cache.rows[0]?.[0])).toBe(-16 * 1024);
  });

  it("kept statements see a column added after they were first used", async () => {
    const { client } = await import("~/server/db.server");
    await client.execute("CREATE TABLE kept_probe (a INTEGER)");
    await client.execute("INSERT INTO kept_probe (a) VALUES (1)");
    const before = await client.execute("SELECT * FROM kept_probe");
    expect(before.columns).toEqual(["a"]);
    await client.execute("ALTER TABLE kept_probe ADD COLUMN b TEXT DEFAULT 'x'");
    const after = await client.execute("SELECT * FROM kept_probe");
    expect(after.columns).toEqual(["a", "b"]);
    expect(after.rows[0]?.b).toBe("x");
    await client.execute("DROP TABLE kept_probe");
  });
});
