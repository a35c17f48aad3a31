import dagre from "@dagrejs/dagre";
import type { MapDocument, MapNode } from "~/lib/engine";

export const DEFAULT_NODE_SIZE = { width: 200, height: 76 };

type Size = { width: number; height: number };

/**
 * Left-to-right layout in power-up order: dagre ranks along edge direction (source → net → part → net), so
 * earlier stages land to the left. Dagre returns centres; xyflow positions are top-left corners.
 */
export function layoutDocument(
  doc: MapDocument,
  sizeOf: (id: string) => Size | undefined = () => undefined,
): Map<string, { x: number; y: number }> {
  const g = new dagre.graphlib.Graph();
  g.setGraph({ rankdir: "LR", nodesep: 24, ranksep: 70, marginx: 20, marginy: 20 });
  g.setDefaultEdgeLabel(() => ({}));
  const ids = new Set<string>();
  for (const n of doc.nodes) {
    const s = sizeOf(n.id) ?? DEFAULT_NODE_SIZE;
    g.setNode(n.id, { width: s.width, height: s.height });
    ids.add(n.id);
  }
  for (const e of doc.edges) if (ids.has(e.from) && ids.has(e.to)) g.setEdge(e.from, e.to);
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
