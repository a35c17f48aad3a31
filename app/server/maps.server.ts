import { and, desc, eq, max, sql } from "drizzle-orm";
import { type MapDocument, parseMapDocument, validateMap, type ValidationIssue } from "~/lib/engine";
import { applyChanges, emptyMapDocument, type MapChange } from "~/lib/map-changes";
import { audit } from "./audit.server";
import { notFound } from "./auth.server";
import { db } from "./db.server";
import { newId } from "./ids.server";
import { mapVersionNodeStatements } from "./map-version-nodes.server";
import { boards, maps, mapVersions } from "./schema.server";

export type DraftWrite =
  | { ok: true; revision: number }
  | { ok: false; status: 400 | 409 | 422; message: string; issues?: ValidationIssue[]; revision?: number };

export async function getMapForShop(shopId: string, mapId: string) {
  const row = await db
    .select()
    .from(maps)
    .where(and(eq(maps.id, mapId), eq(maps.shopId, shopId)))
    .get();
  if (!row) notFound("That map");
  return row;
}

/** The stored draft as a document; a map created empty (or never saved) starts from an empty document. */
export function draftDocument(draft: unknown): MapDocument {
  if (draft == null) return emptyMapDocument();
  const parsed = parseMapDocument(draft);
  return parsed.ok ? parsed.value : emptyMapDocument();
}

export function staleMessage(current: number) {
  return `Another lead changed this map (it is now at revision ${current}). Your change was not saved; reload to see their version.`;
}

/**
 * Writes a new draft only if nobody saved since `baseRevision`: the revision check and the bump happen in one
 * UPDATE, so two leads saving at once can never both succeed against the same revision.
 */
async function writeDraft(
  shopId: string,
  mapId: string,
  baseRevision: number,
  doc: MapDocument,
  userId: string,
): Promise<DraftWrite> {
  const updated = await db
    .update(maps)
    .set({
      draft: doc,
      draftRevision: sql`${maps.draftRevision} + 1`,
      draftUpdatedBy: userId,
      draftUpdatedAt: new Date(),
    })
    .where(and(eq(maps.id, mapId), eq(maps.shopId, shopId), eq(maps.draftRevision, baseRevision)))
    .returning({ revision: maps.draftRevision });
  if (updated.length === 1) return { ok: true, revision: updated[0].revision };
  const now = await getMapForShop(shopId, mapId);
  return { ok: false, status: 409, message: staleMessage(now.draftRevision), revision: now.draftRevision };
}

export async function saveDraftChanges(opts: {
  shopId: string;
  mapId: string;
  userId: string;
  baseRevision: number;
  changes: MapChange[];
}): Promise<DraftWrite> {
  const map = await getMapForShop(opts.shopId, opts.mapId);
  if (map.draftRevision !== opts.baseRevision)
    return { ok: false, status: 409, message: staleMessage(map.draftRevision), revision: map.draftRevision };
  const next = applyChanges(draftDocument(map.draft), opts.changes);
  const shape = parseMapDocument(next);
  if (!shape.ok) return { ok: false, status: 400, message: shape.error.message };
  return writeDraft(opts.shopId, opts.mapId, opts.baseRevision, shape.value, opts.userId);
}

/** Replaces the whole draft (import, or a new draft started from a published version). */
export async function replaceDraft(opts: {
  shopId: string;
  mapId: string;
  userId: string;
  baseRevision: number;
  doc: MapDocument;
}): Promise<DraftWrite> {
  const map = await getMapForShop(opts.shopId, opts.mapId);
  if (map.draftRevision !== opts.baseRevision)
    return { ok: false, status: 409, message: staleMessage(map.draftRevision), revision: map.draftRevision };
  return writeDraft(opts.shopId, opts.mapId, opts.baseRevision, opts.doc, opts.userId);
}

export async function publishDraft(opts: {
  shopId: string;
  mapId: string;
  userId: string;
  baseRevision: number;
  note: string;
}): Promise<DraftWrite & { number?: number }> {
  const map = await getMapForShop(opts.shopId, opts.mapId);
  if (map.draftRevision !== opts.baseRevision)
    return { ok: false, status: 409, message: staleMessage(map.draftRevision), revision: map.draftRevision };
  const report = validateMap(map.draft ?? emptyMapDocument());
  if (!report.ok) return { ok: false, status: 400, message: report.error.message };
  const errors = report.value.issues.filter((i) => i.severity === "error");
  if (!report.value.ok || !report.value.doc)
    return {
      ok: false,
      status: 422,
      message: `The map has ${errors.length} error${errors.length === 1 ? "" : "s"}; fix ${errors.length === 1 ? "it" : "them"} before publishing.`,
      issues: errors,
    };
  if (report.value.doc.nodes.length === 0)
    return { ok: false, status: 422, message: "An empty map cannot be published." };
  const last = await db
    .select({ n: max(mapVersions.number) })
    .from(mapVersions)
    .where(eq(mapVersions.mapId, map.id))
    .get();
  const number = (last?.n ?? 0) + 1;
  // The unique (map_id, number) index refuses a second publish racing for the same number. The version's
  // node index (read by insights) goes in the same batch, so no version is ever seen without it.
  const versionId = newId();
  await db.batch([
    db.insert(mapVersions).values({
      id: versionId,
      shopId: opts.shopId,
      mapId: map.id,
      number,
      document: report.value.doc,
      note: opts.note,
      publishedBy: opts.userId,
    }),
    ...mapVersionNodeStatements(db, versionId, report.value.doc),
  ]);
  await audit({
    shopId: opts.shopId,
    actorId: opts.userId,
    action: "map.published",
    subject: map.id,
    data: { number },
  });
  return { ok: true, revision: map.draftRevision, number };
}

export function listVersions(shopId: string, mapId: string) {
  return db
    .select({
      id: mapVersions.id,
      number: mapVersions.number,
      note: mapVersions.note,
      publishedAt: mapVersions.publishedAt,
      publishedBy: mapVersions.publishedBy,
    })
    .from(mapVersions)
    .where(and(eq(mapVersions.shopId, shopId), eq(mapVersions.mapId, mapId)))
    .orderBy(desc(mapVersions.number))
    .all();
}

export async function getVersion(shopId: string, mapId: string, number: number) {
  const row = await db
    .select()
    .from(mapVersions)
    .where(and(eq(mapVersions.shopId, shopId), eq(mapVersions.mapId, mapId), eq(mapVersions.number, number)))
    .get();
  if (!row) notFound("That map version");
  return { ...row, document: draftDocument(row.document) };
}

export async function createMap(opts: { shopId: string; boardId: string; name: string; userId: string }) {
  const board = await db
    .select({ id: boards.id, maker: boards.maker, model: boards.model, boardNumber: boards.boardNumber })
    .from(boards)
    .where(and(eq(boards.id, opts.boardId), eq(boards.shopId, opts.shopId)))
    .get();
  if (!board) notFound("That board");
  const id = newId();
  await db.insert(maps).values({
    id,
    shopId: opts.shopId,
    boardId: board.id,
    name: opts.name,
    draft: emptyMapDocument(),
    draftRevision: 0,
    draftUpdatedBy: opts.userId,
    draftUpdatedAt: new Date(),
  });
  await audit({ shopId: opts.shopId, actorId: opts.userId, action: "map.created", subject: id });
  return id;
}
