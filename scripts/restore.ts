// npm run restore -- <backup folder>: stop the server first. Verifies rows and upload hashes after copying.
import { restoreFrom } from "../app/server/backup.server";

const dir = process.argv[2];
if (!dir) {
  console.error("Usage: npm run restore -- <backup folder>");
  process.exit(2);
}
const url = process.env.DATABASE_URL ?? "file:./data/railwise.db";
if (!url.startsWith("file:")) {
  console.error("Restore writes a local SQLite file; DATABASE_URL must be a file: URL.");
  process.exit(2);
}
const manifest = await restoreFrom(dir, {
  databaseFile: url.slice(5),
  uploadsDir: process.env.UPLOADS_DIR ?? "data/uploads",
});
console.log(
  `Restored ${Object.keys(manifest.tables).length} tables and ${manifest.uploads.length} uploads; rows and hashes verified.`,
);
