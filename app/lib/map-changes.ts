import { z } from "zod";
import {
  MAP_FORMAT,
  MAP_VERSION,
  type MapDocument,
  type MapEdge,
  MapEdgeSchema,
  type MapNode,
  MapNodeSchema,
  MapSettingsSchema,
  NodeIdSchema,
} from "~/lib/engine";

// The editor saves change-sets, not whole graphs: one edit of a 500-node map should cost a few hundred
// bytes on the wire. Operations are keyed by id so a set applies to the draft it was made against.

export const MAX_CHANGES = 5000;

export const MapChangeSchema = z.discriminatedUnion("op", [
  z.object({ op: z.literal("put-node"), node: MapNodeSchema }).strict(),
  z.object({ op: z.literal("remove-node"), id: NodeIdSchema }).strict(),
  z.object({ op: z.literal("put-edge"), edge: MapEdgeSchema }).strict(),
  z.object({ op: z.literal("remove-edge"), id: NodeIdSchema }).strict(),
  z.object({ op: z.literal("settings"), settings: MapSettingsSchema }).strict(),
]);
export const MapChangesSchema = z.array(MapChangeSchema).min(1).max(MAX_CHANGES);

export type MapChange = z.infer<typeof MapChangeSchema>;

export function emptyMapDocument(): MapDocument {
  return { format: MAP_FORMAT, version: MAP_VERSION, settings: { strategy: "best" }, nodes: [], edges: [] };
}

/** Applies changes in order; put replaces an element with the same id in place, or appends it. */
export function applyChanges(doc: MapDocument, changes: readonly MapChange[]): MapDocument {
  const nodes = [...doc.nodes];
  const edges = [...doc.edges];
  let settings = doc.settings;
  const nodeAt = new Map(nodes.map((n, i) => [n.id, i]));
  const edgeAt = new Map(edges.map((e, i) => [e.id, i]));
  const removedNodes = new Set<string>();
  const removedEdges = new Set<string>();
  for (const c of changes) {
    if (c.op === "put-node") {
      const i = nodeAt.get(c.node.id);
      removedNodes.delete(c.node.id);
      if (i === undefined) {
        nodeAt.set(c.node.id, nodes.length);
        nodes.push(c.node);
      } else nodes[i] = c.node;
    } else if (c.op === "remove-node") {
      if (nodeAt.has(c.id)) removedNodes.add(c.id);
    } else if (c.op === "put-edge") {
      const i = edgeAt.get(c.edge.id);
      removedEdges.delete(c.edge.id);
      if (i === undefined) {
        edgeAt.set(c.edge.id, edges.length);
        edges.push(c.edge);
      } else edges[i] = c.edge;
    } else if (c.op === "remove-edge") {
      if (edgeAt.has(c.id)) removedEdges.add(c.id);
    } else settings = c.settings;
  }
  return {
    ...doc,
    settings,
    nodes: removedNodes.size ? nodes.filter((n) => !removedNodes.has(n.id)) : nodes,
    edges: removedEdges.size ? edges.filter((e) => !removedEdges.has(e.id)) : edges,
  };
}

const same = (a: unknown, b: unknown) => a === b || JSON.stringify(a) === JSON.stringify(b);

/** The change-set that turns `from` into `to` (node and edge objects compared by reference first). */
export function diffDocuments(from: MapDocument, to: MapDocument): MapChange[] {
  const out: MapChange[] = [];
  const oldNodes = new Map(from.nodes.map((n) => [n.id, n]));
  const newNodeIds = new Set(to.nodes.map((n) => n.id));
  for (const n of from.nodes) if (!newNodeIds.has(n.id)) out.push({ op: "remove-node", id: n.id });
  for (const n of to.nodes) {
    const o = oldNodes.get(n.id);
    if (!o || !same(o, n)) out.push({ op: "put-node", node: n });
  }
  const oldEdges = new Map(from.edges.map((e) => [e.id, e]));
  const newEdgeIds = new Set(to.edges.map((e) => e.id));
  for (const e of from.edges) if (!newEdgeIds.has(e.id)) out.push({ op: "remove-edge", id: e.id });
  for (const e of to.edges) {
    const o = oldEdges.get(e.id);
    if (!o || !same(o, e)) out.push({ op: "put-edge", edge: e });
  }
  if (!same(from.settings, to.settings)) out.push({ op: "settings", settings: to.settings });
  return out;
}

export type VersionDiff = {
  added: MapNode[];
  removed: MapNode[];
  changed: Array<{ before: MapNode; after: MapNode; fields: string[] }>;
  edgesAdded: MapEdge[];
  edgesRemoved: MapEdge[];
  settingsChanged: boolean;
};

/** Node-level comparison of two versions; moving a node on the canvas is not counted as a change. */
export function compareDocuments(a: MapDocument, b: MapDocument): VersionDiff {
  const before = new Map(a.nodes.map((n) => [n.id, n]));
  const after = new Map(b.nodes.map((n) => [n.id, n]));
  const changed: VersionDiff["changed"] = [];
  for (const n of b.nodes) {
    const o = before.get(n.id);
    if (!o) continue;
    const keys = new Set([...Object.keys(o), ...Object.keys(n)]);
    keys.delete("position");
    const fields = [...keys].filter(
      (k) => !same((o as Record<string, unknown>)[k], (n as Record<string, unknown>)[k]),
    );
    if (fields.length) changed.push({ before: o, after: n, fields });
  }
  const edgeKey = (e: MapEdge) => `${e.from}>${e.to}:${e.kind}`;
  const aEdges = new Set(a.edges.map(edgeKey));
  const bEdges = new Set(b.edges.map(edgeKey));
  return {
    added: b.nodes.filter((n) => !before.has(n.id)),
    removed: a.nodes.filter((n) => !after.has(n.id)),
    changed,
    edgesAdded: b.edges.filter((e) => !aEdges.has(edgeKey(e))),
    edgesRemoved: a.edges.filter((e) => !bEdges.has(edgeKey(e))),
    settingsChanged: !same(a.settings, b.settings),
  };
}

/** The edge kind a connection from → to must have, or null when the two kinds may not be connected. */
export function edgeKindFor(fromKind: MapNode["kind"], toKind: MapNode["kind"]): MapEdge["kind"] | null {
  const toNet = toKind === "rail" || toKind === "signal";
  const fromNet = fromKind === "rail" || fromKind === "signal";
  if (fromKind === "source" && toNet) return "supplies";
  if (fromNet && toKind === "part") return "feeds";
  if (fromKind === "part" && toNet) return "drives";
  return null;
}
