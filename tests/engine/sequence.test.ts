import { Graph, alg } from "@dagrejs/graphlib";
import { describe, expect, it } from "vitest";
import { powerUpSequence, STAGE_RANK, STAGES, validateMap } from "~/lib/engine";
import { randomPowerMap } from "../../bench/lib/maps";
import { mulberry32 } from "../../bench/lib/rng";
import { OM_5150_MAP } from "../../seed/maps/om-5150";

describe("power-up sequence", () => {
  // ACPI Specification 6.5 §2.2 (global states), §2.4 (sleeping states), §16.1 (sleeping states): depth order
  // S0 < S1 < S2 < S3 < S4 < S5, and G3 mechanical off is deeper still; cold power-up runs G3 → S5 → S0.
  it("ranks stage tags in power-up order G3 < S5 < S4 < S3 < S0", () => {
    const acpiDepth = ["S0", "S3", "S4", "S5", "G3"]; // shallowest to deepest
    const powerUp = [...acpiDepth].reverse();
    expect([...STAGES].sort((a, b) => STAGE_RANK[a] - STAGE_RANK[b])).toEqual(powerUp);
    expect(STAGE_RANK.G3).toBeLessThan(STAGE_RANK.S5);
    expect(STAGE_RANK.S3).toBeLessThan(STAGE_RANK.S0);
  });

  it("orders every edge forward, like graphlib's topsort, deterministically", () => {
    const rng = mulberry32(11);
    for (let t = 0; t < 20; t++) {
      const doc = randomPowerMap(rng, 40 + Math.floor(rng() * 160));
      const seq = powerUpSequence(doc);
      expect(seq.ok).toBe(true);
      if (!seq.ok) continue;
      const pos = new Map(seq.value.order.map((id, i) => [id, i]));
      for (const e of doc.edges) expect(pos.get(e.from)!).toBeLessThan(pos.get(e.to)!);
      const g = new Graph();
      for (const n of doc.nodes) g.setNode(n.id);
      for (const e of doc.edges) g.setEdge(e.from, e.to);
      expect(alg.isAcyclic(g)).toBe(true);
      expect(alg.topsort(g)).toHaveLength(seq.value.order.length);
      // Same order whatever the array order of nodes and edges.
      const shuffled = { ...doc, nodes: [...doc.nodes].reverse(), edges: [...doc.edges].reverse() };
      expect(powerUpSequence(shuffled)).toEqual(seq);
    }
  });

  it("agrees with graphlib about cycles", () => {
    const doc = structuredClone(OM_5150_MAP);
    doc.edges.push({ id: "loop", from: "v1p0-core", to: "u-chg", kind: "feeds" });
    const g = new Graph();
    for (const e of doc.edges) g.setEdge(e.from, e.to);
    expect(alg.isAcyclic(g)).toBe(false);
    expect(powerUpSequence(doc).ok).toBe(false);
    const v = validateMap(doc);
    const cycle = v.ok ? v.value.issues.find((i) => i.code === "cycle") : undefined;
    expect(cycle).toBeDefined();
    const found = alg.findCycles(g).flat();
    for (const id of cycle!.nodeIds) expect(found).toContain(id);
  });

  it("puts the demo map's core regulator late in the power-up", () => {
    const seq = powerUpSequence(OM_5150_MAP);
    expect(seq.ok).toBe(true);
    if (!seq.ok) return;
    const nets = seq.value.nets;
    expect(nets.indexOf("v1p0-core")).toBeGreaterThan(nets.indexOf("v3p3-stby"));
    expect(nets.indexOf("v1p0-core")).toBeGreaterThan(nets.length * 0.8);
    // Source-supplied nets come first.
    expect(["vbat", "vbus-in", "pwr-req"]).toContain(nets[0]);
  });
});
