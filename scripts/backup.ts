// npm run backup [-- <folder>]: online backup of the database and uploads while the server runs.
import path from "node:path";
import { backupTo } from "../app/server/backup.server";

const dir = process.argv[2] ?? path.join("backups", new Date().toISOString().replaceAll(":", "-"));
const manifest = await backupTo(dir, {
  databaseUrl: process.env.DATABASE_URL ?? "file:./data/railwise.db",
  authToken: process.env.DATABASE_AUTH_TOKEN,
  uploadsDir: process.env.UPLOADS_DIR ?? "data/uploads",
});
const rows = Object.values(manifest.tables).reduce((a, b) => a + b, 0);
console.log(
  `Backup written to ${dir}: ${Object.keys(manifest.tables).length} tables, ${rows} rows, ${manifest.uploads.length} uploads.`,
);
