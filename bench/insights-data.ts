// Makes sure the insights bench file holds its full data set with every index (seeding it when needed), so
// other benches can start from it: `tsx bench/insights-data.ts` prints the file's path on its last line.
import { existsSync, readFileSync, rmSync } from "node:fs";
import { benchFile, prepareBenchFile, seedInsightsBench } from "./insights-seed";

const file = await prepareBenchFile();
process.env.DATABASE_URL = `file:${file}`;
delete process.env.SEED_DEMO;
const { client } = await import("~/server/db.server");
// Indexes dropped by an interrupted bench:insights are put back first (their definitions are in the sidecar).
const sidecar = `${file}.indexes.json`;
if (existsSync(sidecar)) {
  for (const s of JSON.parse(readFileSync(sidecar, "utf8")) as Array<{ sql: string }>)
    await client.execute(s.sql.replace(/^CREATE (UNIQUE )?INDEX /, "CREATE $1INDEX IF NOT EXISTS "));
  rmSync(sidecar);
}
await seedInsightsBench(client);
await client.execute("PRAGMA wal_checkpoint(TRUNCATE)");
client.close();
console.log(benchFile());
