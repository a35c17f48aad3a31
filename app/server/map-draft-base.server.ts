import { and, desc, eq } from "drizzle-orm";
import type { MapDocument } from "~/lib/engine";
import { compareDocuments, diffDocuments } from "~/lib/map-changes";
import { db } from "./db.server";
import { draftDocument } from "./maps.server";
import { mapVersions } from "./schema.server";

/** How far back a draft is matched against published versions; older ones are rarely a draft's base. */
const VERSIONS_SCANNED = 25;

export type UnpublishedChanges = { base: number | null; summary: string };

const plural = (n: number, one: string, many = `${one}s`) => `${n} ${n === 1 ? one : many}`;

/**
 * What the draft holds that no published version has: null when the draft is exactly one of the recent
 * versions (just published, or just started from one), or empty before anything was published. Otherwise
 * the changes are told against the latest version, moves on the canvas included.
 */
export async function unpublishedChanges(
  shopId: string,
  mapId: string,
  draft: MapDocument,
): Promise<UnpublishedChanges | null> {
  const rows = await db
    .select({ number: mapVersions.number, document: mapVersions.document })
    .from(mapVersions)
    .where(and(eq(mapVersions.shopId, shopId), eq(mapVersions.mapId, mapId)))
    .orderBy(desc(mapVersions.number))
    .limit(VERSIONS_SCANNED)
    .all();
  if (!rows.length)
    return draft.nodes.length || draft.edges.length
      ? { base: null, summary: `${plural(draft.nodes.length, "node")}, never published` }
      : null;
  const latest = draftDocument(rows[0].document);
  for (const [i, row] of rows.entries()) {
    const doc = i === 0 ? latest : draftDocument(row.document);
    if (diffDocuments(doc, draft).length === 0) return null;
  }
  const d = compareDocuments(latest, draft);
  const before = new Map(latest.nodes.map((n) => [n.id, n.position]));
  const moved = draft.nodes.filter((n) => {
    const p = before.get(n.id);
    return before.has(n.id) && (p?.x !== n.position?.x || p?.y !== n.position?.y);
  }).length;
  const parts = [
    d.added.length ? `${plural(d.added.length, "node")} added` : "",
    d.removed.length ? `${plural(d.removed.length, "node")} removed` : "",
    d.changed.length ? `${plural(d.changed.length, "node")} changed` : "",
    d.edgesAdded.length || d.edgesRemoved.length
      ? `${plural(d.edgesAdded.length + d.edgesRemoved.length, "link")} added or removed`
      : "",
    d.settingsChanged ? "map settings changed" : "",
    moved ? `${plural(moved, "node")} moved` : "",
  ].filter(Boolean);
  return { base: rows[0].number, summary: parts.join(", ") || "edits since then" };
}
