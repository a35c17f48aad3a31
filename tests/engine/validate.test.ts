import { describe, expect, it } from "vitest";
import { type MapDocument, type MapNode, validateMap } from "~/lib/engine";
import { edge, partNode, railNode, smallMap } from "./support/fixtures";

const issues = (doc: unknown) => {
  const r = validateMap(doc);
  if (!r.ok) throw new Error(r.error.message);
  return r.value.issues;
};
const codes = (doc: unknown) => issues(doc).map((i) => i.code);
const withDoc = (f: (d: MapDocument) => void) => {
  const d = smallMap();
  f(d);
  return d;
};

describe("validateMap", () => {
  it("accepts a good map", () => {
    expect(issues(smallMap())).toEqual([]);
  });

  it("names a cycle with its path", () => {
    const d = withDoc((d) => {
      d.nodes.push(partNode("px", "U9"));
      d.edges.push(edge("feeds", "c", "px"), edge("drives", "px", "a"));
    });
    const cycle = issues(d).find((i) => i.code === "cycle")!;
    expect(cycle).toBeDefined();
    expect(cycle.nodeIds[0]).toBe(cycle.nodeIds[cycle.nodeIds.length - 1]);
    expect(cycle.nodeIds).toEqual(expect.arrayContaining(["a", "p1", "b", "p2", "c", "px"]));
    expect(cycle.message).toMatch(/→/);
  });

  it("net with no driver and no source, part with no output, dangling and wrong-kind edges", () => {
    const d = withDoc((d) => {
      d.nodes.push(railNode("lonely"), partNode("dead-end", "U8"));
      d.edges.push(edge("feeds", "c", "dead-end"), edge("feeds", "ghost", "p1"), edge("feeds", "a", "b"));
    });
    const list = issues(d);
    expect(list.find((i) => i.code === "net-no-driver")?.nodeIds).toEqual(["lonely"]);
    expect(list.find((i) => i.code === "part-no-output")?.nodeIds).toEqual(["dead-end"]);
    expect(list.find((i) => i.code === "dangling-edge")?.message).toMatch(/ghost/);
    expect(list.find((i) => i.code === "wrong-edge-kind")?.message).toMatch(
      /net cannot connect straight to another net/,
    );
    expect(list.find((i) => i.code === "unreachable")?.nodeIds).toEqual(["lonely"]);
  });

  it("treats a part fed by no net as always powered: a warning, and what it drives is reachable", () => {
    const d = withDoc((d) => {
      d.nodes.push(partNode("osc", "Y1"), railNode("clk"));
      d.edges.push(edge("drives", "osc", "clk"));
    });
    const list = issues(d);
    expect(list.find((i) => i.code === "part-no-input")).toMatchObject({
      severity: "warning",
      nodeIds: ["osc"],
    });
    expect(list.filter((i) => i.code === "unreachable")).toEqual([]);
  });

  it("net without an expected range, duplicate designators, several drivers", () => {
    const d = withDoc((d) => {
      (d.nodes[3] as { expected: object }).expected = {};
      (d.nodes[6] as { refdes: string }).refdes = "u1";
      d.edges.push(edge("drives", "p3", "b"));
    });
    const list = issues(d);
    expect(list.find((i) => i.code === "net-no-expected")?.nodeIds).toEqual(["b"]);
    expect(list.find((i) => i.code === "duplicate-refdes")?.nodeIds).toEqual(["p1", "p3"]);
    expect(list.find((i) => i.code === "multiple-drivers")?.nodeIds).toEqual(["b", "p1", "p3"]);
    // Marked as shared (an OR-ed supply), two drivers are fine.
    (d.nodes[3] as { sharedDrivers?: true }).sharedDrivers = true;
    expect(codes(d)).not.toContain("multiple-drivers");
  });

  it("reports a repeated edge once as duplicate-edge and does not count its driver twice", () => {
    const d = withDoc((d) => {
      d.edges.push({ id: "p1-b-again", from: "p1", to: "b", kind: "drives" });
    });
    const list = issues(d);
    expect(list.map((i) => i.code)).toEqual(["duplicate-edge"]);
    expect(list[0]).toMatchObject({
      severity: "warning",
      nodeIds: ["p1", "b"],
      edgeIds: ["p1-b", "p1-b-again"],
    });
    expect(list[0].message).not.toMatch(/driven by/);
  });

  it("warns when an expected window starts below the missing or shorted threshold", () => {
    const d = withDoc((d) => {
      // An active-low signal expected at 0..0.4 V; the default missing threshold is max(0.1 V, 5 % of 3.3 V).
      (d.nodes[3] as { expected: object }).expected = { voltage: { min: 0, max: 0.4 } };
      // A rail that reads 0.5..5 Ω to ground when healthy, below a 1 Ω shorted threshold set on the map.
      (d.nodes[5] as { expected: object }).expected = {
        voltage: { nominal: 3.3, tolerancePct: 5 },
        resistance: { min: 0.5, max: 5 },
      };
    });
    const w = issues(d).filter((i) => i.code === "window-below-threshold");
    expect(w.map((i) => [i.nodeIds[0], i.severity])).toEqual([
      ["b", "warning"],
      ["c", "warning"],
    ]);
    expect(w[0].message).toMatch(/a healthy reading could look missing/);
    expect(w[1].message).toMatch(/a healthy reading could look shorted/);
    // A map-level threshold below the window clears the warning.
    d.settings.shortedThresholdOhm = 0.2;
    d.settings.missingThresholdV = 0;
    expect(codes(d)).not.toContain("window-below-threshold");
  });

  it("stage tag contradicting the order: an S0 net feeding the part that makes an S5 net", () => {
    const d = withDoc((d) => {
      (d.nodes[1] as { stage?: string }).stage = "S0";
      (d.nodes[3] as { stage?: string }).stage = "S5";
    });
    const s = issues(d).find((i) => i.code === "stage-order")!;
    expect(s.nodeIds).toEqual(["a", "b"]);
    // Through an untagged net as well: a (S0) → b (untagged) → c (S5).
    const d2 = withDoc((d) => {
      (d.nodes[1] as { stage?: string }).stage = "S0";
      (d.nodes[5] as { stage?: string }).stage = "S5";
    });
    expect(issues(d2).find((i) => i.code === "stage-order")?.nodeIds).toEqual(["a", "c"]);
    const ok = withDoc((d) => {
      (d.nodes[1] as { stage?: string }).stage = "S5";
      (d.nodes[5] as { stage?: string }).stage = "S0";
    });
    expect(codes(ok)).toEqual([]);
  });

  it("refuses maps over 2,000 nodes with a clear message", () => {
    const nodes: MapNode[] = Array.from({ length: 2001 }, (_, i) => railNode(`n${i}`));
    const r = issues({ ...smallMap(), nodes });
    expect(r[0].code).toBe("too-large");
    expect(r[0].message).toMatch(/2000/);
  });

  it("reports schema problems instead of throwing", () => {
    for (const bad of [null, 1, "x", [], {}, { ...smallMap(), nodes: [{ id: "a" }] }]) {
      const r = validateMap(bad);
      expect(r.ok && r.value.ok).toBe(false);
    }
  });
});
