import { eq, sql } from "drizzle-orm";
import type { Db } from "./db.server";
import { mapVersionNodes } from "./schema.server";

type Tx = Parameters<Parameters<Db["transaction"]>[0]>[0];
export type DbOrTx = Db | Tx;

export type VersionNodeRow = typeof mapVersionNodes.$inferInsert;

const KINDS = new Set(["source", "rail", "signal", "part"]);

/**
 * The node rows of one published version. Lenient on purpose: a published document was validated when it was
 * published, and an odd node is skipped rather than failing the publish.
 */
export function versionNodeRows(versionId: string, document: unknown): VersionNodeRow[] {
  const nodes = (document as { nodes?: unknown } | null)?.nodes;
  if (!Array.isArray(nodes)) return [];
  const seen = new Set<string>();
  const rows: VersionNodeRow[] = [];
  for (const n of nodes as Array<Record<string, unknown>>) {
    if (!n || typeof n.id !== "string" || !KINDS.has(String(n.kind)) || seen.has(n.id)) continue;
    seen.add(n.id);
    rows.push({
      mapVersionId: versionId,
      nodeId: n.id,
      nodeName: typeof n.name === "string" && n.name ? n.name : n.id,
      kind: n.kind as VersionNodeRow["kind"],
      refdes: typeof n.refdes === "string" && n.refdes ? n.refdes : null,
    });
  }
  return rows;
}

/**
 * Writes which nodes a published version contains. Call it inside the transaction (or batch) that inserts the
 * map_versions row, so the insights never see a version without its nodes. Safe to call again (replaces).
 */
export async function indexMapVersionNodes(tx: DbOrTx, versionId: string, document: unknown) {
  const rows = versionNodeRows(versionId, document);
  await tx.delete(mapVersionNodes).where(eq(mapVersionNodes.mapVersionId, versionId));
  // SQLite allows 32766 bound parameters; 5 per row → chunks of 500 rows stay far below.
  for (let i = 0; i < rows.length; i += 500) await tx.insert(mapVersionNodes).values(rows.slice(i, i + 500));
  return rows.length;
}

/** The same rows as statements for `db.batch([...])` (the seed publishes that way). */
export function mapVersionNodeStatements(db: Db, versionId: string, document: unknown) {
  const rows = versionNodeRows(versionId, document);
  return rows.length ? [db.insert(mapVersionNodes).values(rows).onConflictDoNothing()] : [];
}

/**
 * Indexes any of the shop's published versions that have no node rows yet (versions published before the
 * index existed, or by a path that skipped it). Cheap when nothing is missing: one NOT EXISTS query.
 */
export async function indexMissingVersionNodes(db: Db, shopId: string) {
  const missing = await db.all<{ id: string; document: string }>(sql`
    SELECT v.id, v.document FROM map_versions v
    WHERE v.shop_id = ${shopId}
      AND NOT EXISTS (SELECT 1 FROM map_version_nodes n WHERE n.map_version_id = v.id)
  `);
  for (const v of missing) {
    let doc: unknown = null;
    try {
      doc = typeof v.document === "string" ? JSON.parse(v.document) : v.document;
    } catch {
      continue;
    }
    const statements = mapVersionNodeStatements(db, v.id, doc);
    if (statements.length) await db.batch(statements as [(typeof statements)[number]]);
  }
  return missing.length;
}
