import dagre from "@dagrejs/dagre";
import { type MapDocument, type MapNode, powerUpSequence } from "~/lib/engine";

export const DEFAULT_NODE_SIZE = { width: 200, height: 76 };

type Size = { width: number; height: number };

/**
 * Left-to-right layout in power-up order: each node's column is its stage (the engine's topological level),
 * and dagre only orders the nodes within a column and routes long edges. Dagre returns centres; xyflow
 * positions are top-left corners. A map with a cycle has no stages, so dagre ranks it on its own.
 */
export function layoutDocument(
  doc: MapDocument,
  sizeOf: (id: string) => Size | undefined = () => undefined,
): Map<string, { x: number; y: number }> {
  const seq = powerUpSequence(doc);
  const level = seq.ok ? seq.value.level : null;
  const g = new dagre.graphlib.Graph();
  g.setGraph({
    rankdir: "LR",
    nodesep: 24,
    ranksep: 70,
    marginx: 20,
    marginy: 20,
    ...(level ? { ranker: "none" } : {}),
  });
  g.setDefaultEdgeLabel(() => ({}));
  const ids = new Set<string>();
  for (const n of doc.nodes) {
    const s = sizeOf(n.id) ?? DEFAULT_NODE_SIZE;
    // Dagre halves the rank gap to leave room for edge labels, so preset ranks are doubled to match.
    g.setNode(n.id, { width: s.width, height: s.height, ...(level ? { rank: 2 * (level[n.id] ?? 0) } : {}) });
    ids.add(n.id);
  }
  for (const e of doc.edges) if (ids.has(e.from) && ids.has(e.to) && e.from !== e.to) g.setEdge(e.from, e.to);
  dagre.layout(g);
  const out = new Map<string, { x: number; y: number }>();
  for (const n of doc.nodes) {
    const p = g.node(n.id) as { x: number; y: number; width: number; height: number };
    out.set(n.id, { x: Math.round(p.x - p.width / 2), y: Math.round(p.y - p.height / 2) });
  }
  return out;
}

export function withPositions(
  doc: MapDocument,
  pos: Map<string, { x: number; y: number }>,
  onlyMissing = false,
): MapDocument {
  return {
    ...doc,
    nodes: doc.nodes.map((n): MapNode => {
      if (onlyMissing && n.position) return n;
      const p = pos.get(n.id);
      if (!p || (n.position && n.position.x === p.x && n.position.y === p.y)) return n;
      return { ...n, position: p };
    }),
  };
}
