import { sql } from "drizzle-orm";
import { describe, expect, it } from "vitest";
import * as board from "~/routes/board";
import { db } from "~/server/db.server";
import { createSession, sessionCookie } from "~/server/session.server";
import { seedDemo } from "../../seed/demo.server";
import { call, getRequest } from "../support/requests";

describe("board page", () => {
  it("names each top finding by its own node, counted per node from the demo history", async () => {
    await seedDemo(db);
    const { token } = await createSession("demo-user-tech", "demo-harbor");
    const res = await call(board.loader, {
      request: getRequest("/boards/demo-board-om5150", sessionCookie(token).split(";")[0]),
      params: { boardId: "demo-board-om5150" },
    });
    expect(res.status).toBe(200);
    const { topFindings } = res.data as {
      topFindings: Array<{ nodeId: string; kind: string; n: number; label: string | null }>;
    };
    // The same counts straight from the findings, with each node's name from the version it was found on.
    const expected = await db.all<{ node_id: string; kind: string; n: number; label: string }>(sql`
      SELECT f.node_id, f.kind, COUNT(*) AS n,
             MAX(COALESCE(v.refdes || ' · ' || v.node_name, v.node_name)) AS label
      FROM findings f
      JOIN map_version_nodes v ON v.map_version_id = f.map_version_id AND v.node_id = f.node_id
      WHERE f.shop_id = 'demo-harbor' AND f.board_id = 'demo-board-om5150' AND f.node_id IS NOT NULL
      GROUP BY f.node_id, f.kind
      ORDER BY n DESC, f.node_id
      LIMIT 8
    `);
    expect(topFindings).toHaveLength(8);
    const byNode = new Map(expected.map((e) => [`${e.node_id}:${e.kind}`, e.label]));
    for (const f of topFindings) expect(f.label, f.nodeId).toBe(byNode.get(`${f.nodeId}:${f.kind}`));
    // Eight different nodes, so eight different names (a label borrowed from another node would repeat).
    expect(new Set(topFindings.map((f) => f.label)).size).toBe(8);
    expect(topFindings.map((f) => f.n)).toEqual(expected.map((e) => Number(e.n)));
  });
});
