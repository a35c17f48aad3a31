import { sql } from "drizzle-orm";
import type { Priors } from "~/lib/engine";
import { type Db, db as appDb } from "./db.server";

/** Below this many ended runs, the next wider source of history is added. */
export const PRIOR_MIN_RUNS = 20;

export type FindingPriors = {
  /** Finding counts per engine candidate id: a part's node id, or `short:<netId>` for a shorted net. */
  counts: Priors;
  /** Ended runs the counts were learned from ("learned from N runs"). */
  runs: number;
  /** Which history was used, most specific first. */
  sources: Array<"version" | "board" | "model">;
};

type CountRow = { node_id: string; kind: "part" | "short"; n: number };

const candidateId = (r: CountRow) => (r.kind === "short" ? `short:${r.node_id}` : r.node_id);

/**
 * Priors for the walker's `best` strategy, from this shop's findings: first the runs on this exact map version;
 * with fewer than PRIOR_MIN_RUNS, also the board's other versions (node ids are stable across versions); then
 * boards of the same maker and model (other revisions), matched by node name since their ids may differ.
 * Counts are raw; the engine applies Laplace smoothing (count + 1).
 */
export async function getFindingPriors(
  shopId: string,
  boardId: string,
  mapVersionId: string,
  database: Db = appDb,
): Promise<FindingPriors> {
  const empty: FindingPriors = { counts: {}, runs: 0, sources: [] };
  // The version must belong to this board and shop: a foreign id learns nothing.
  const [owner] = await database.all<{ ok: number }>(sql`
    SELECT 1 AS ok FROM map_versions v JOIN maps m ON m.id = v.map_id
    WHERE v.id = ${mapVersionId} AND v.shop_id = ${shopId} AND m.board_id = ${boardId}
  `);
  if (!owner) return empty;

  const counts: Priors = {};
  const add = (rows: CountRow[]) => {
    for (const r of rows) {
      const id = candidateId(r);
      counts[id] = (counts[id] ?? 0) + Number(r.n);
    }
  };
  const ended = sql`r.shop_id = ${shopId} AND r.status <> 'open'`;
  // A finding whose fix left the board still dead was not the fault: it teaches nothing.
  const usable = sql`(f.outcome IS NULL OR f.outcome <> 'still-dead')`;
  const result: FindingPriors = { counts, runs: 0, sources: [] };

  const [v] = await database.all<{ n: number }>(
    sql`SELECT COUNT(*) AS n FROM runs r WHERE ${ended} AND r.map_version_id = ${mapVersionId}`,
  );
  add(
    await database.all<CountRow>(sql`
      SELECT f.node_id, f.kind, COUNT(DISTINCT f.run_id) AS n
      FROM runs r JOIN findings f ON f.run_id = r.id
      WHERE ${ended} AND r.map_version_id = ${mapVersionId} AND f.kind IN ('part', 'short') AND ${usable} AND f.node_id IS NOT NULL
      GROUP BY f.node_id, f.kind
    `),
  );
  result.runs = Number(v?.n ?? 0);
  result.sources.push("version");
  if (result.runs >= PRIOR_MIN_RUNS) return result;

  // Other versions of this board's maps, counted only for nodes this version still has.
  const [b] = await database.all<{ n: number }>(sql`
    SELECT COUNT(*) AS n FROM runs r
    WHERE ${ended} AND r.board_id = ${boardId} AND r.map_version_id <> ${mapVersionId}
  `);
  if (Number(b?.n ?? 0) > 0) {
    add(
      await database.all<CountRow>(sql`
        SELECT f.node_id, f.kind, COUNT(DISTINCT f.run_id) AS n
        FROM runs r JOIN findings f ON f.run_id = r.id
        JOIN map_version_nodes here ON here.map_version_id = ${mapVersionId} AND here.node_id = f.node_id
        WHERE ${ended} AND r.board_id = ${boardId} AND r.map_version_id <> ${mapVersionId}
          AND f.kind IN ('part', 'short') AND ${usable}
        GROUP BY f.node_id, f.kind
      `),
    );
    result.runs += Number(b?.n ?? 0);
    result.sources.push("board");
  }
  if (result.runs >= PRIOR_MIN_RUNS) return result;

  // Other revisions of the same model: a node counts where its name matches a node of this version.
  const sameModel = sql`
    SELECT o.id FROM boards o JOIN boards me ON me.id = ${boardId} AND me.shop_id = ${shopId}
    WHERE o.shop_id = ${shopId} AND o.id <> me.id AND o.maker = me.maker AND o.model = me.model`;
  const [m] = await database.all<{ n: number }>(
    sql`SELECT COUNT(*) AS n FROM runs r WHERE ${ended} AND r.board_id IN (${sameModel})`,
  );
  if (Number(m?.n ?? 0) > 0) {
    add(
      await database.all<CountRow>(sql`
        SELECT here.node_id, f.kind, COUNT(DISTINCT f.run_id) AS n
        FROM runs r JOIN findings f ON f.run_id = r.id
        JOIN map_version_nodes there ON there.map_version_id = r.map_version_id AND there.node_id = f.node_id
        JOIN map_version_nodes here ON here.map_version_id = ${mapVersionId} AND here.node_name = there.node_name
          AND (here.kind = 'part') = (there.kind = 'part')
        WHERE ${ended} AND r.board_id IN (${sameModel}) AND f.kind IN ('part', 'short') AND ${usable}
        GROUP BY here.node_id, f.kind
      `),
    );
    result.runs += Number(m?.n ?? 0);
    result.sources.push("model");
  }
  return result;
}
