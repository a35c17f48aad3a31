// Long read-only reports (insights over a year of runs) on their own thread and their own SQLite connection.
//
// A local database file is read through libsql's synchronous native calls, so a 100 ms insights query holds
// the worker's event loop for 100 ms, and every walker reading that arrives meanwhile waits behind it. Here
// those queries go to worker threads, each with its own read connection (WAL: readers see every committed write
// and never block the writer), so the event loop keeps answering readings while a report is computed.
//
// The thread speaks @libsql/client's `execute` over postMessage; on this side a small client answers with the
// same row objects libsql builds, so drizzle (and every query written for the main connection) runs unchanged.
// A remote database (libSQL server over HTTP) already answers asynchronously: there the main client is used.
import { createRequire } from "node:module";
import { Worker } from "node:worker_threads";
import type { Client, InStatement, ResultSet, Row } from "@libsql/client";
import { drizzle } from "drizzle-orm/libsql";
import { type Db, client as mainClient, db as mainDb, READ_PRAGMAS } from "./db.server";
import { env } from "./env.server";
import * as schema from "./schema.server";

// Plain CommonJS run by the thread (an eval worker), so the server bundle needs no second entry point.
// `query_only` makes the connection refuse any write: this thread only ever reads.
const THREAD_SOURCE = `
const { parentPort, workerData } = require("node:worker_threads");
const { createClient } = require(workerData.clientPath);
const client = createClient({ url: workerData.url, timeout: workerData.timeout });
const ready = (async () => {
  for (const p of ["PRAGMA query_only=ON", ...workerData.pragmas]) await client.execute(p);
})();
parentPort.on("message", async ({ id, stmt, close }) => {
  if (close) {
    // Shutting down: the statement in hand has finished (one message at a time); close the connection and let
    // the thread end by itself. (Terminating it mid-statement can abort the process in the native driver.)
    await ready.catch(() => {});
    client.close();
    parentPort.close();
    return;
  }
  try {
    await ready;
    const rs = await client.execute(stmt);
    parentPort.postMessage({ id, columns: rs.columns, rows: rs.rows.map((r) => Array.from(r)) });
  } catch (e) {
    parentPort.postMessage({ id, error: { message: String(e && e.message), code: e && e.code } });
  }
});
`;

type Answer =
  | { id: number; columns: string[]; rows: unknown[][] }
  | { id: number; error: { message: string; code?: string } };

/** The row shape @libsql/client returns: values by index (not enumerable) and by column name. */
function rowOf(values: unknown[], columns: string[]): Row {
  const row: Record<string | number, unknown> = {};
  Object.defineProperty(row, "length", { value: values.length });
  for (let i = 0; i < values.length; i++) {
    Object.defineProperty(row, i, { value: values[i] });
    const column = columns[i];
    if (!Object.hasOwn(row, column))
      Object.defineProperty(row, column, {
        value: values[i],
        enumerable: true,
        configurable: true,
        writable: true,
      });
  }
  return row as unknown as Row;
}

/**
 * Rows of one answer in the same shape, built faster: an insights answer has thousands of rows, and defining
 * every property one by one cost more than the query's own transfer. The column names are the rows' own
 * enumerable properties (as above); `length` and the indexes live on a prototype shared by the answer's rows and
 * read the named property. Columns with repeated, numeric or special names take the one-by-one path.
 */
function rowsOf(valueRows: unknown[][], columns: string[]): Row[] {
  const plain =
    new Set(columns).size === columns.length &&
    columns.every((c) => c !== "__proto__" && c !== "length" && !/^\d+$/.test(c));
  if (!plain) return valueRows.map((values) => rowOf(values, columns));
  const proto = Object.create(Object.prototype) as Record<string | number, unknown>;
  Object.defineProperty(proto, "length", { value: columns.length });
  columns.forEach((column, i) => {
    Object.defineProperty(proto, i, {
      get(this: Record<string, unknown>) {
        return this[column];
      },
    });
  });
  return valueRows.map((values) => {
    const row = Object.create(proto) as Record<string, unknown>;
    for (let i = 0; i < columns.length; i++) row[columns[i]] = values[i];
    return row as unknown as Row;
  });
}

/** One thread and its connection; the statements it was asked and not yet answered. */
class ReadThread {
  private worker: Worker | null = null;
  private nextId = 1;
  readonly pending = new Map<number, { resolve: (r: ResultSet) => void; reject: (e: Error) => void }>();

  constructor(private readonly url: string) {}

  private start() {
    const worker = new Worker(THREAD_SOURCE, {
      eval: true,
      resourceLimits: { maxOldGenerationSizeMb: readThreadHeapMb(process.env.READ_THREAD_HEAP_MB) },
      workerData: {
        url: this.url,
        // The same busy timeout as the main connection (a WAL reader waits on recovery and some checkpoints).
        timeout: env.DATABASE_TIMEOUT_MS,
        pragmas: READ_PRAGMAS,
        clientPath: createRequire(import.meta.url).resolve("@libsql/client"),
      },
    });
    // The thread must never keep the process alive on its own (shutdown, tests).
    worker.unref();
    worker.on("message", (a: Answer) => {
      const p = this.pending.get(a.id);
      if (!p) return;
      this.pending.delete(a.id);
      if ("error" in a) p.reject(Object.assign(new Error(a.error.message), { code: a.error.code }));
      else
        p.resolve({
          columns: a.columns,
          columnTypes: [],
          rows: rowsOf(a.rows, a.columns),
          rowsAffected: 0,
          lastInsertRowid: undefined,
          toJSON: () => ({ columns: a.columns, rows: a.rows }),
        });
      if (!this.pending.size) worker.unref();
    });
    // A thread that dies fails what it was asked, and the next query starts a new one.
    const fail = (e: Error) => {
      if (this.worker === worker) this.worker = null;
      for (const p of this.pending.values()) p.reject(e);
      this.pending.clear();
    };
    worker.on("error", fail);
    worker.on("exit", (code) => fail(new Error(`the read thread stopped (exit code ${code})`)));
    return worker;
  }

  execute(stmt: InStatement): Promise<ResultSet> {
    this.worker ??= this.start();
    const worker = this.worker;
    const id = this.nextId++;
    return new Promise<ResultSet>((resolve, reject) => {
      this.pending.set(id, { resolve, reject });
      // Waiting for an answer keeps the process alive; an idle thread does not.
      worker.ref();
      try {
        worker.postMessage({ id, stmt: typeof stmt === "string" ? { sql: stmt, args: [] } : stmt });
      } catch (e) {
        // An argument that cannot be copied to the thread: nothing was sent, nothing is awaited.
        this.pending.delete(id);
        if (!this.pending.size) worker.unref();
        reject(e);
      }
    });
  }

  /** Ends the thread after the statement it is on, closing its connection (2 s at most, then it is stopped). */
  close(): Promise<void> {
    const worker = this.worker;
    this.worker = null;
    if (!worker) return Promise.resolve();
    return new Promise<void>((resolve) => {
      const timer = setTimeout(() => {
        void worker.terminate();
        resolve();
      }, 2000);
      worker.once("exit", () => {
        clearTimeout(timer);
        resolve();
      });
      worker.postMessage({ close: true });
    });
  }
}

/**
 * The part of @libsql/client's Client that drizzle's reads use, over a few read threads: an insights page asks
 * its statistics at once, and two threads compute two of them side by side on a machine with two cores.
 */
class ThreadPoolClient {
  private readonly threads: ReadThread[];
  readonly protocol = "file";
  closed = false;

  constructor(url: string, size: number) {
    this.threads = Array.from({ length: size }, () => new ReadThread(url));
  }

  execute(stmt: InStatement): Promise<ResultSet> {
    // Shutting down: a report already under way finishes on the main connection.
    if (this.closed) return mainClient.execute(stmt);
    // The least busy thread (the first, when all are idle).
    let pick = this.threads[0];
    for (const t of this.threads) if (t.pending.size < pick.pending.size) pick = t;
    return pick.execute(stmt);
  }

  batch(): Promise<ResultSet[]> {
    return Promise.reject(new Error("the read thread only reads: batches go to the main connection"));
  }

  transaction(): never {
    throw new Error("the read thread only reads: transactions go to the main connection");
  }

  async close() {
    this.closed = true;
    await Promise.all(this.threads.map((t) => t.close()));
  }
}

let readDb: Db | null = null;
let pool: ThreadPoolClient | null = null;

let shutDown = false;

/**
 * Ends the read threads cleanly (the server calls it on SIGTERM, before the process exits). Reports asked
 * after that use the main connection: a new thread would only be cut off by the exit.
 */
export async function closeReportThreads() {
  shutDown = true;
  await pool?.close();
}

/**
 * Read threads per worker process: READ_THREADS when it is a whole number from 1 (at most 8), else 2, so one
 * insights page computes two statistics side by side. Measured in the mixed load bench on two cores with two
 * workers (docs/benchmarks.md): with the daily rollups, two threads a worker gave insights p95 162–173 ms and
 * one 199–212 ms, readings no worse; before the rollups, when insights took twice the CPU, one thread had
 * kept the readings' p95 lower (47 against 74 ms): READ_THREADS=1 is the setting for a machine that insights
 * saturate.
 */
export function readThreadCount(configured: string | undefined): number {
  return Math.min(8, wholeNumberFrom(configured, 1, 2));
}

/** A setting that must be a whole number of at least `min`; anything else (unset, blank, text) is `fallback`. */
function wholeNumberFrom(configured: string | undefined, min: number, fallback: number): number {
  const given = Number(configured);
  return configured?.trim() && Number.isInteger(given) && given >= min ? given : fallback;
}

/**
 * The JavaScript heap limit of each read thread, in MB: READ_THREAD_HEAP_MB when it is a whole number from 16,
 * else 64. The thread only passes rows on (aggregated answers of hundreds to a few thousand rows); without a
 * limit of its own it would inherit the worker's (WORKER_HEAP_MB, 256), and V8 lets garbage build up towards
 * the limit before it collects: three such heaps per process, where one holds the live objects.
 */
export function readThreadHeapMb(configured: string | undefined): number {
  return wholeNumberFrom(configured, 16, 64);
}

/**
 * The database handle for long read-only reports: a thread of its own for a local file, the main handle for a
 * remote server (READ_THREAD=off also keeps everything on the main connection).
 */
export function reportsDb(): Db {
  const url = env.DATABASE_URL;
  // (An in-memory database exists only on its own connection: a second one would be another, empty one.)
  if (shutDown || !url.startsWith("file:") || url.includes(":memory:") || process.env.READ_THREAD === "off")
    return mainDb;
  if (!readDb) {
    pool = new ThreadPoolClient(url, readThreadCount(process.env.READ_THREADS));
    readDb = drizzle(pool as unknown as Client, { schema });
    // For whoever ends this process without importing this module (the test setup, per test file).
    (globalThis as Record<symbol, unknown>)[Symbol.for("railwise.closeReportThreads")] = closeReportThreads;
  }
  return readDb;
}
