// Cost of one SQLite commit in WAL mode with synchronous=FULL vs NORMAL, through @libsql/client as the server
// uses it (docs/decisions/008-sqlite-commit-durability.md). Prints its figures; not a test.
//
//   node bench/fsync.mjs
import { rmSync } from "node:fs";
import { createClient } from "@libsql/client";

const FILE = "./data/bench-fsync.db";
const N = 500;
const out = {};
for (const sync of ["FULL", "NORMAL"]) {
  for (const s of ["", "-wal", "-shm"]) rmSync(FILE + s, { force: true });
  const c = createClient({ url: `file:${FILE}`, timeout: 5000 });
  await c.execute("PRAGMA journal_mode=WAL");
  await c.execute(`PRAGMA synchronous=${sync}`);
  await c.execute("create table t (id integer primary key, v text)");
  const t0 = performance.now();
  for (let i = 0; i < N; i++) await c.execute({ sql: "insert into t (v) values (?)", args: [`x${i}`] });
  out[sync] = (performance.now() - t0) / N;
  console.log(`synchronous=${sync}: ${out[sync].toFixed(3)} ms per single-row insert commit (${N} commits)`);
  c.close();
}
for (const s of ["", "-wal", "-shm"]) rmSync(FILE + s, { force: true });
console.log(
  `RESULT full_ms=${out.FULL.toFixed(3)} normal_ms=${out.NORMAL.toFixed(3)} ratio=${(out.FULL / out.NORMAL).toFixed(1)}`,
);
