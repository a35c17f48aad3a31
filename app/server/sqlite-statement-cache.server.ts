// A local database file is reached through @libsql/client, which compiles every statement afresh on every call
// and asks the compiled statement for its columns twice. On the walker's hot path that was a fifth of the
// server's CPU (profile in docs/scaling.md). This keeps each connection's compiled statements by their SQL, as
// SQLite's own prepared statements are meant to be reused: SQLite recompiles a kept statement by itself when
// the schema changes, and the columns we remember are dropped with every connection's kept statements when any
// connection of this process runs DDL (migrations), so a changed table is never read with its old column list.
import { createRequire } from "node:module";

type Statement = { columns(): unknown[] };
type Database = { prepare(sql: string): Statement };
type DatabaseClass = { prototype: Database };

const KEEP = 500;
const DDL = /^\s*(create|alter|drop)\b/i;

let installed = false;
/** Bumped by every DDL statement: a connection whose kept statements are older drops them. */
let schemaGeneration = 0;

/** Makes every libsql connection of this process keep its compiled statements (idempotent). */
export function installStatementCache() {
  if (installed) return;
  installed = true;
  // The `libsql` class @libsql/client itself loads, whatever the package manager hoisted.
  const fromHere = createRequire(import.meta.url);
  const Database = createRequire(fromHere.resolve("@libsql/client"))("libsql") as DatabaseClass;
  const compile = Database.prototype.prepare;
  const kept = new WeakMap<Database, { generation: number; bySql: Map<string, Statement> }>();
  Database.prototype.prepare = function prepare(this: Database, sql: string) {
    if (DDL.test(sql)) {
      schemaGeneration++;
      return compile.call(this, sql);
    }
    let cache = kept.get(this);
    if (!cache || cache.generation !== schemaGeneration) {
      cache = { generation: schemaGeneration, bySql: new Map() };
      kept.set(this, cache);
    }
    const mine = cache.bySql;
    const hit = mine.get(sql);
    if (hit) {
      // Most recently used last, so the first key is the one to drop.
      mine.delete(sql);
      mine.set(sql, hit);
      return hit;
    }
    const stmt = compile.call(this, sql);
    const columns = stmt.columns;
    let known: unknown[] | undefined;
    stmt.columns = function (this: Statement) {
      known ??= columns.call(this);
      return known;
    };
    if (mine.size >= KEEP) mine.delete(mine.keys().next().value as string);
    mine.set(sql, stmt);
    return stmt;
  };
}
