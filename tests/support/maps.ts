import type { MapDocument, MapEdge, MapNode } from "~/lib/engine";
import type { MapChange } from "~/lib/map-changes";
import * as editor from "~/routes/map-editor";
import { createMap } from "~/server/maps.server";
import { call, formRequest, getRequest } from "./requests";

// Small builders for map tests: a valid three-step map (charger → input rail → regulator → 3.3 V rail).

const probe = { text: "test pad", seconds: 20, needsDisassembly: false };
export const src = (id: string): MapNode => ({
  id,
  kind: "source",
  name: `Source ${id}`,
  sourceKind: "charger",
});
export const rail = (id: string, nominalV = 3.3, extra: Partial<MapNode> = {}): MapNode =>
  ({
    id,
    kind: "rail",
    name: id.toUpperCase(),
    nominalV,
    tolerancePct: 5,
    expected: { voltage: { nominal: nominalV, tolerancePct: 5 } },
    probe,
    ...extra,
  }) as MapNode;
export const part = (id: string, refdes: string, extra: Partial<MapNode> = {}): MapNode =>
  ({
    id,
    kind: "part",
    name: `Part ${id}`,
    partType: "regulator",
    refdes,
    fixes: [{ id: "replace", kind: "replace", label: `Replace ${refdes}` }],
    ...extra,
  }) as MapNode;
export const edge = (kind: MapEdge["kind"], from: string, to: string, id = `${from}--${to}`): MapEdge => ({
  id,
  from,
  to,
  kind,
});

export function validBase(): { nodes: MapNode[]; edges: MapEdge[] } {
  return {
    nodes: [src("chg"), rail("vin", 19), part("u1", "U1"), rail("v3", 3.3)],
    edges: [edge("supplies", "chg", "vin"), edge("feeds", "vin", "u1"), edge("drives", "u1", "v3")],
  };
}

export const puts = (g: { nodes: MapNode[]; edges: MapEdge[] }): MapChange[] => [
  ...g.nodes.map((node) => ({ op: "put-node" as const, node })),
  ...g.edges.map((e) => ({ op: "put-edge" as const, edge: e })),
];

export async function newMap(shopId: string, boardId: string, userId: string, name = "Test map") {
  return createMap({ shopId, boardId, name, userId });
}

export async function save(mapId: string, cookie: string, revision: number, changes: unknown) {
  return call(editor.action, {
    request: formRequest(
      `/maps/${mapId}`,
      { intent: "save", revision: String(revision), changes: JSON.stringify(changes) },
      cookie,
    ),
    params: { mapId },
  });
}

export async function post(mapId: string, cookie: string, fields: Record<string, string>) {
  return call(editor.action, { request: formRequest(`/maps/${mapId}`, fields, cookie), params: { mapId } });
}

export async function load(mapId: string, cookie: string) {
  const r = await call(editor.loader, { request: getRequest(`/maps/${mapId}`, cookie), params: { mapId } });
  return r as {
    status: number;
    data?: { doc: MapDocument; map: { revision: number }; versions: Array<{ number: number }> };
  };
}
