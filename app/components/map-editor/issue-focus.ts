import type { MapDocument, ValidationIssue } from "~/lib/engine";

/**
 * What clicking a validation problem selects: the nodes it names, plus the edges it names. A problem that
 * names only edges (two edges sharing an id) selects those edges' endpoints, so the click still lands somewhere.
 */
export function issueFocus(
  issue: Pick<ValidationIssue, "nodeIds" | "edgeIds">,
  doc: Pick<MapDocument, "nodes" | "edges">,
): { nodeIds: string[]; edgeIds: string[] } {
  const present = new Set(doc.nodes.map((n) => n.id));
  const wanted = new Set(issue.edgeIds ?? []);
  const edges = doc.edges.filter((e) => wanted.has(e.id));
  const named = issue.nodeIds.filter((id) => present.has(id));
  const ends = named.length ? named : edges.flatMap((e) => [e.from, e.to]).filter((id) => present.has(id));
  return { nodeIds: [...new Set(ends)], edgeIds: [...new Set(edges.map((e) => e.id))] };
}
