import type { MapDocument, MapEdge, Stage } from "./map-document";
import { fail, guard, ok, type Result } from "./result";

/**
 * ACPI global/sleeping states ranked in power-up order (ACPI Spec. §2.2, §2.4, §16.1): G3 mechanical off,
 * then S5 soft off, S4, S3, up to S0 working. A net's tag is the deepest state in which it stays powered.
 */
export const STAGE_RANK: Record<Stage, number> = { G3: 0, S5: 1, S4: 2, S3: 3, S0: 4 };

export const compareStages = (a: Stage, b: Stage): number =>
  (STAGE_RANK[a] ?? Number.NaN) - (STAGE_RANK[b] ?? Number.NaN);

/** Adjacency built tolerantly (dangling edges are skipped) so validation can still reason about the rest. */
export type Graph = {
  ids: string[];
  index: Map<string, number>;
  out: number[][];
  inn: number[][];
  edgesOut: MapEdge[][];
};

export function buildGraph(doc: Pick<MapDocument, "nodes" | "edges">): Graph {
  const ids = doc.nodes.map((n) => n.id);
  const index = new Map<string, number>();
  ids.forEach((id, i) => {
    if (!index.has(id)) index.set(id, i);
  });
  const out: number[][] = ids.map(() => []);
  const inn: number[][] = ids.map(() => []);
  const edgesOut: MapEdge[][] = ids.map(() => []);
  // A repeated from → to link is kept once (validation reports it as duplicate-edge), so a part is never
  // counted twice as a net's driver.
  const seen = new Set<number>();
  const n = ids.length;
  for (const e of doc.edges) {
    const a = index.get(e.from);
    const b = index.get(e.to);
    if (a === undefined || b === undefined) continue;
    const key = a * n + b;
    if (seen.has(key)) continue;
    seen.add(key);
    out[a].push(b);
    inn[b].push(a);
    edgesOut[a].push(e);
  }
  return { ids, index, out, inn, edgesOut };
}

/**
 * Topological levels (longest path from a root) with Kahn's algorithm; order ties broken by level,
 * then by id, so the order never depends on array order. `cyclic` lists nodes left on a cycle.
 */
export function levelsOf(g: Graph): { level: number[]; order: number[]; cyclic: number[] } {
  const n = g.ids.length;
  const indeg = g.inn.map((a) => a.length);
  const level = new Array<number>(n).fill(0);
  const queue: number[] = [];
  for (let i = 0; i < n; i++) if (indeg[i] === 0) queue.push(i);
  const seen: number[] = [];
  for (let h = 0; h < queue.length; h++) {
    const v = queue[h];
    seen.push(v);
    for (const w of g.out[v]) {
      if (level[v] + 1 > level[w]) level[w] = level[v] + 1;
      if (--indeg[w] === 0) queue.push(w);
    }
  }
  const cyclic: number[] = [];
  for (let i = 0; i < n; i++) if (indeg[i] > 0) cyclic.push(i);
  const order = seen.sort(
    (a, b) => level[a] - level[b] || (g.ids[a] < g.ids[b] ? -1 : g.ids[a] > g.ids[b] ? 1 : 0),
  );
  return { level, order, cyclic };
}

/** One cycle as a node path (first node repeated at the end), found iteratively among `within`. */
export function findCyclePath(g: Graph, within: number[]): number[] | null {
  const allowed = new Uint8Array(g.ids.length);
  for (const v of within) allowed[v] = 1;
  const state = new Uint8Array(g.ids.length); // 0 new, 1 on stack, 2 done
  const parent = new Int32Array(g.ids.length).fill(-1);
  for (const start of within) {
    if (state[start]) continue;
    const stack: [number, number][] = [[start, 0]];
    state[start] = 1;
    while (stack.length) {
      const top = stack[stack.length - 1];
      const [v, k] = top;
      if (k < g.out[v].length) {
        top[1]++;
        const w = g.out[v][k];
        if (!allowed[w]) continue;
        if (state[w] === 1) {
          const path = [w];
          for (let x = v; x !== w && x !== -1; x = parent[x]) path.push(x);
          path.push(w);
          return path.reverse();
        }
        if (state[w] === 0) {
          state[w] = 1;
          parent[w] = v;
          stack.push([w, 0]);
        }
      } else {
        state[v] = 2;
        stack.pop();
      }
    }
  }
  return null;
}

export type PowerUpSequence = {
  /** Every node id in power-up order. */
  order: string[];
  /** Net ids only, in power-up order. */
  nets: string[];
  level: Record<string, number>;
};

/** Power-up order of a map. Fails on a cycle (validateMap names it). */
export const powerUpSequence = guard((doc: MapDocument): Result<PowerUpSequence> => {
  if (!doc || !Array.isArray(doc.nodes) || !Array.isArray(doc.edges))
    return fail("invalid-input", "Expected a map document.");
  const g = buildGraph(doc);
  const { level, order, cyclic } = levelsOf(g);
  if (cyclic.length) return fail("invalid-map", "The map has a cycle, so it has no power-up order.");
  const lv: Record<string, number> = {};
  order.forEach((i) => {
    lv[g.ids[i]] = level[i];
  });
  const isNetKind = (i: number) => doc.nodes[i].kind === "rail" || doc.nodes[i].kind === "signal";
  return ok({
    order: order.map((i) => g.ids[i]),
    nets: order.filter(isNetKind).map((i) => g.ids[i]),
    level: lv,
  });
});
