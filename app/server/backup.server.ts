import { createHash } from "node:crypto";
import {
  copyFileSync,
  existsSync,
  mkdirSync,
  readdirSync,
  readFileSync,
  statSync,
  writeFileSync,
} from "node:fs";
import path from "node:path";
import { createClient } from "@libsql/client";

// Online backup: `VACUUM INTO` writes a consistent copy while the server keeps serving (SQLite takes a read
// transaction for it), then the upload files are copied and every one is listed with its SHA-256, so a
// restore can prove it brought back exactly what was saved.

export type BackupManifest = {
  createdAt: string;
  database: string;
  tables: Record<string, number>;
  uploads: Array<{ path: string; bytes: number; sha256: string }>;
};

const sha256File = (file: string) => createHash("sha256").update(readFileSync(file)).digest("hex");

function listFiles(dir: string, base = dir): string[] {
  if (!existsSync(dir)) return [];
  return readdirSync(dir).flatMap((name) => {
    const full = path.join(dir, name);
    return statSync(full).isDirectory() ? listFiles(full, base) : [path.relative(base, full)];
  });
}

export async function tableCounts(url: string, authToken?: string) {
  const client = createClient({ url, authToken, timeout: 5000 });
  try {
    const tables = await client.execute(
      "select name from sqlite_master where type='table' and name not like 'sqlite_%' order by name",
    );
    const counts: Record<string, number> = {};
    for (const row of tables.rows) {
      const name = String(row.name);
      const r = await client.execute(`select count(*) as n from "${name.replaceAll('"', '""')}"`);
      counts[name] = Number(r.rows[0].n);
    }
    return counts;
  } finally {
    client.close();
  }
}

/** Writes `<dir>/railwise.db`, `<dir>/uploads/…` and `<dir>/manifest.json`. */
export async function backupTo(
  dir: string,
  opts: { databaseUrl: string; authToken?: string; uploadsDir: string },
) {
  if (!opts.databaseUrl.startsWith("file:")) {
    throw new Error(
      "Online backup here covers a local SQLite file; a libSQL server is backed up by its own service.",
    );
  }
  mkdirSync(dir, { recursive: true });
  const target = path.resolve(dir, "railwise.db");
  if (existsSync(target)) throw new Error(`${target} already exists; choose an empty folder.`);
  const client = createClient({ url: opts.databaseUrl, authToken: opts.authToken, timeout: 10_000 });
  try {
    await client.execute({ sql: "VACUUM INTO ?", args: [target] });
  } finally {
    client.close();
  }
  const uploads = listFiles(opts.uploadsDir).map((rel) => {
    const src = path.join(opts.uploadsDir, rel);
    const dest = path.join(dir, "uploads", rel);
    mkdirSync(path.dirname(dest), { recursive: true });
    copyFileSync(src, dest);
    return { path: rel, bytes: statSync(dest).size, sha256: sha256File(dest) };
  });
  const manifest: BackupManifest = {
    createdAt: new Date().toISOString(),
    database: "railwise.db",
    tables: await tableCounts(`file:${target}`),
    uploads,
  };
  writeFileSync(path.join(dir, "manifest.json"), JSON.stringify(manifest, null, 2));
  return manifest;
}

/**
 * Restores a backup into a database file and uploads folder (the server must be stopped), then checks the
 * result against the manifest: equal row counts in every table and equal SHA-256 for every upload.
 */
export async function restoreFrom(dir: string, opts: { databaseFile: string; uploadsDir: string }) {
  const manifest = JSON.parse(readFileSync(path.join(dir, "manifest.json"), "utf8")) as BackupManifest;
  mkdirSync(path.dirname(path.resolve(opts.databaseFile)), { recursive: true });
  for (const suffix of ["-wal", "-shm"]) {
    if (existsSync(opts.databaseFile + suffix))
      throw new Error(`Stop the server first: ${opts.databaseFile}${suffix} exists.`);
  }
  copyFileSync(path.join(dir, manifest.database), opts.databaseFile);
  for (const u of manifest.uploads) {
    const dest = path.join(opts.uploadsDir, u.path);
    mkdirSync(path.dirname(dest), { recursive: true });
    copyFileSync(path.join(dir, "uploads", u.path), dest);
  }
  const problems = await verifyRestore(manifest, opts);
  if (problems.length) throw new Error(`Restore does not match the backup:\n${problems.join("\n")}`);
  return manifest;
}

export async function verifyRestore(
  manifest: BackupManifest,
  opts: { databaseFile: string; uploadsDir: string },
) {
  const problems: string[] = [];
  const counts = await tableCounts(`file:${opts.databaseFile}`);
  for (const [table, n] of Object.entries(manifest.tables)) {
    if (counts[table] !== n)
      problems.push(`table ${table}: ${counts[table] ?? "missing"} rows, backup had ${n}`);
  }
  for (const u of manifest.uploads) {
    const file = path.join(opts.uploadsDir, u.path);
    if (!existsSync(file)) problems.push(`upload ${u.path} missing`);
    else if (sha256File(file) !== u.sha256) problems.push(`upload ${u.path} differs`);
  }
  return problems;
}
