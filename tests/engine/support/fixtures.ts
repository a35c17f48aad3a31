import type { MapDocument, MapEdge, MapNode } from "~/lib/engine";

export const probe = { text: "TP1", seconds: 20, needsDisassembly: false };

export const railNode = (id: string, extra: Partial<MapNode> = {}): MapNode =>
  ({
    id,
    kind: "rail",
    name: id.toUpperCase(),
    nominalV: 3.3,
    tolerancePct: 5,
    expected: { voltage: { nominal: 3.3, tolerancePct: 5 }, resistance: { min: 100, max: 1e5 } },
    probe,
    ...extra,
  }) as MapNode;

export const partNode = (id: string, refdes: string, extra: Partial<MapNode> = {}): MapNode =>
  ({ id, kind: "part", partType: "regulator", refdes, name: `Part ${id}`, fixes: [], ...extra }) as MapNode;

export const edge = (kind: MapEdge["kind"], from: string, to: string): MapEdge => ({
  id: `${from}-${to}`,
  from,
  to,
  kind,
});

/** src → a → P1 → b → P2 → c, and a second branch a → P3 → d. */
export function smallMap(): MapDocument {
  return {
    format: "railwise.map",
    version: 1,
    settings: { strategy: "best" },
    nodes: [
      { id: "src", kind: "source", name: "Charger" },
      railNode("a"),
      partNode("p1", "U1"),
      railNode("b"),
      partNode("p2", "U2"),
      railNode("c"),
      partNode("p3", "U3"),
      railNode("d"),
    ],
    edges: [
      edge("supplies", "src", "a"),
      edge("feeds", "a", "p1"),
      edge("drives", "p1", "b"),
      edge("feeds", "b", "p2"),
      edge("drives", "p2", "c"),
      edge("feeds", "a", "p3"),
      edge("drives", "p3", "d"),
    ],
  };
}
