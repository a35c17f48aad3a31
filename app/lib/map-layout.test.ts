import { describe, expect, it } from "vitest";
import { type MapDocument, powerUpSequence } from "~/lib/engine";
import { OM_5150_MAP } from "../../seed/maps/om-5150";
import { DEFAULT_NODE_SIZE, layoutDocument, withPositions } from "./map-layout";

const { width: W, height: H } = DEFAULT_NODE_SIZE;

function stages(doc: MapDocument) {
  const seq = powerUpSequence(doc);
  if (!seq.ok) throw new Error(seq.error.message);
  return seq.value.level;
}

describe("auto-layout by power-up stage", () => {
  const pos = layoutDocument(OM_5150_MAP);
  const level = stages(OM_5150_MAP);

  it("places every node of the demo OM-5150 map", () => {
    expect([...pos.keys()].sort()).toEqual(OM_5150_MAP.nodes.map((n) => n.id).sort());
  });

  it("points every edge of the demo OM-5150 map left to right, clear of the node it leaves", () => {
    for (const e of OM_5150_MAP.edges) {
      const a = pos.get(e.from)!;
      const b = pos.get(e.to)!;
      expect(b.x, `${e.id}: ${e.from} at x=${a.x}, ${e.to} at x=${b.x}`).toBeGreaterThanOrEqual(a.x + W);
    }
  });

  it("puts each stage in its own column, in stage order", () => {
    const columnOf = new Map<number, number>();
    for (const n of OM_5150_MAP.nodes) {
      const x = pos.get(n.id)!.x;
      const s = level[n.id];
      if (!columnOf.has(s)) columnOf.set(s, x);
      expect(x, `${n.id} (stage ${s})`).toBe(columnOf.get(s));
    }
    const ordered = [...columnOf.entries()].sort((a, b) => a[0] - b[0]).map(([, x]) => x);
    for (let i = 1; i < ordered.length; i++) expect(ordered[i]).toBeGreaterThan(ordered[i - 1]);
    // The map runs from the charger (stage 0) to the core rail: many stages, not a handful of dagre ranks.
    expect(columnOf.size).toBe(Math.max(...Object.values(level)) + 1);
  });

  it("never stacks two nodes on each other", () => {
    const all = [...pos.entries()];
    for (let i = 0; i < all.length; i++)
      for (let j = i + 1; j < all.length; j++) {
        const [ia, a] = all[i];
        const [ib, b] = all[j];
        const apart = Math.abs(a.x - b.x) >= W || Math.abs(a.y - b.y) >= H;
        expect(apart, `${ia} and ${ib} overlap`).toBe(true);
      }
  });

  it("still lays out a map with a cycle (no stages), without throwing", () => {
    const cyclic: MapDocument = {
      ...OM_5150_MAP,
      edges: [...OM_5150_MAP.edges, { id: "back", from: "v1p0-core", to: "u-aon", kind: "feeds" }],
    };
    expect(powerUpSequence(cyclic).ok).toBe(false);
    const p = layoutDocument(cyclic);
    expect(p.size).toBe(OM_5150_MAP.nodes.length);
    for (const v of p.values()) expect(Number.isFinite(v.x) && Number.isFinite(v.y)).toBe(true);
  });

  it("keeps stored positions when asked to fill in only the missing ones", () => {
    const [first, ...rest] = OM_5150_MAP.nodes;
    const doc = { ...OM_5150_MAP, nodes: [{ ...first, position: { x: -999, y: 5 } }, ...rest] };
    const out = withPositions(doc, layoutDocument(doc), true);
    expect(out.nodes[0].position).toEqual({ x: -999, y: 5 });
    expect(out.nodes[1].position).toEqual(pos.get(rest[0].id));
  });
});
