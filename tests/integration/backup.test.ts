import { execFileSync } from "node:child_process";
import { createHash } from "node:crypto";
import { mkdirSync, mkdtempSync, readFileSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { describe, expect, it } from "vitest";
import { backupTo, restoreFrom, tableCounts } from "~/server/backup.server";
import { client } from "~/server/db.server";
import { createShopWithRoles } from "../support/fixtures";

const sha = (file: string) => createHash("sha256").update(readFileSync(file)).digest("hex");

// A libSQL server is backed up by its own service; this online backup covers the SQLite-file deployment.
describe.skipIf(process.env.TEST_LIBSQL === "1")("backup and restore", () => {
  it("restores equal rows in every table and byte-identical uploads", async () => {
    await createShopWithRoles("Backup Shop");
    const work = mkdtempSync(path.join(tmpdir(), "railwise-backup-"));
    const uploadsDir = path.join(work, "uploads");
    mkdirSync(path.join(uploadsDir, "shop-a"), { recursive: true });
    writeFileSync(
      path.join(uploadsDir, "shop-a", "board.jpg"),
      Buffer.from([0xff, 0xd8, 0xff, 0xe0, 1, 2, 3, 4]),
    );
    writeFileSync(path.join(uploadsDir, "note.png"), Buffer.from("\x89PNG\r\n\x1a\n-test"));
    const url = process.env.DATABASE_URL!;

    const manifest = await backupTo(path.join(work, "b1"), { databaseUrl: url, uploadsDir });
    expect(manifest.tables.users).toBe(4);
    expect(manifest.uploads).toHaveLength(2);

    // Restore into a fresh place and compare with the live database and files.
    const restoredDb = path.join(work, "restored", "railwise.db");
    const restoredUploads = path.join(work, "restored", "uploads");
    await restoreFrom(path.join(work, "b1"), { databaseFile: restoredDb, uploadsDir: restoredUploads });
    expect(await tableCounts(`file:${restoredDb}`)).toEqual(await tableCounts(url));
    for (const rel of ["shop-a/board.jpg", "note.png"]) {
      expect(sha(path.join(restoredUploads, rel))).toBe(sha(path.join(uploadsDir, rel)));
    }
    const users = await client.execute("select id, email, password_hash from users order by id");
    const { createClient } = await import("@libsql/client");
    const restored = createClient({ url: `file:${restoredDb}` });
    const restoredUsers = await restored.execute("select id, email, password_hash from users order by id");
    restored.close();
    expect(restoredUsers.rows.map((r) => ({ ...r }))).toEqual(users.rows.map((r) => ({ ...r })));
  });

  it("refuses a restore whose upload was tampered with", async () => {
    const work = mkdtempSync(path.join(tmpdir(), "railwise-backup-"));
    const uploadsDir = path.join(work, "uploads");
    mkdirSync(uploadsDir, { recursive: true });
    writeFileSync(path.join(uploadsDir, "a.webp"), "RIFF0000WEBP");
    await backupTo(path.join(work, "b"), { databaseUrl: process.env.DATABASE_URL!, uploadsDir });
    writeFileSync(path.join(work, "b", "uploads", "a.webp"), "RIFF0000WEBX");
    await expect(
      restoreFrom(path.join(work, "b"), {
        databaseFile: path.join(work, "r.db"),
        uploadsDir: path.join(work, "r-up"),
      }),
    ).rejects.toThrow(/upload a\.webp differs/);
  });

  it("runs as `npm run backup` against a live database", () => {
    const work = mkdtempSync(path.join(tmpdir(), "railwise-backup-cli-"));
    const out = execFileSync("npx", ["tsx", "scripts/backup.ts", path.join(work, "cli")], {
      env: { ...process.env, UPLOADS_DIR: path.join(work, "none") },
      encoding: "utf8",
    });
    expect(out).toMatch(/Backup written to .*cli: \d+ tables, \d+ rows, 0 uploads\./);
  });
});
