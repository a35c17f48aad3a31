import { describe, expect, it } from "vitest";
import { analyse, type MapDocument, type Reading, startRun, validateMap } from "~/lib/engine";
import { simulateRun } from "../../bench/lib/simulate";
import { OM_5130_MAP } from "../../seed/maps/om-5130";
import { OM_5150_MAP } from "../../seed/maps/om-5150";

const condition = { sourcesAttached: ["src-charger", "src-button"] };

describe("demo maps", () => {
  it.each([
    ["OM-5150", OM_5150_MAP, 35, 45],
    ["OM-5130", OM_5130_MAP, 15, 20],
  ] as const)("%s validates with zero errors and has a plausible size", (_n, doc, lo, hi) => {
    const r = validateMap(doc);
    expect(r.ok && r.value.issues.filter((i) => i.severity === "error")).toEqual([]);
    expect(doc.nodes.length).toBeGreaterThanOrEqual(lo);
    expect(doc.nodes.length).toBeLessThanOrEqual(hi);
  });

  // Demo data must not borrow real makers' signal names or package trademarks.
  it.each([
    ["OM-5150", OM_5150_MAP],
    ["OM-5130", OM_5130_MAP],
  ] as const)("%s uses only invented, neutral names", (_n, doc: MapDocument) => {
    const borrowed =
      /PWROK|PowerPAK|DirectFET|LFPAK|SuperSO|TDSON|PCH_|SLP_|SLEEP_S\d|RSMRST|VCCIN|SUS[BC]|DPWROK|NVDC/i;
    for (const n of doc.nodes)
      for (const text of [n.name, "package" in n ? n.package : "", "value" in n ? n.value : ""])
        expect(text ?? "", n.id).not.toMatch(borrowed);
  });

  it("OM-5150: an open series resistor on the 3.3 V standby enable is isolated", () => {
    const r362 = OM_5150_MAP.nodes.find((n) => n.id === "r-en3");
    expect(r362).toMatchObject({ kind: "part", partType: "resistor", refdes: "R362" });
    const start = startRun(OM_5150_MAP, { condition });
    expect(start.ok).toBe(true);
    if (!start.ok) return;
    for (const strategy of ["order", "split", "best"] as const) {
      const out = simulateRun(
        () => 0.5,
        OM_5150_MAP,
        start.value.setup,
        { kind: "part", id: "r-en3" },
        strategy,
        {
          noisy: false,
        },
      );
      expect(out.correct, strategy).toBe(true);
    }
    // By hand: 5V_STBY and PG_5V_STBY present, EN_3V3_STBY missing and not shorted → R362.
    const readings: Reading[] = [
      { id: "a", netId: "pg-5v-stby", mode: "voltage", value: 3.3 },
      { id: "b", netId: "en-3v3-stby", mode: "voltage", value: 0.01 },
      { id: "c", netId: "en-3v3-stby", mode: "resistance", value: 100e3 },
    ];
    const a = analyse(OM_5150_MAP, start.value.setup, readings);
    expect(a.ok && a.value.finding).toMatchObject({ kind: "part", nodeId: "r-en3", netId: "en-3v3-stby" });
    expect(a.ok && a.value.finding?.fixes[0].label).toMatch(/R362/);
  });

  it.each([
    ["OM-5150", OM_5150_MAP],
    ["OM-5130", OM_5130_MAP],
  ] as const)("%s: every injected fault is isolated by every strategy", (_n, doc: MapDocument) => {
    const start = startRun(doc, { condition });
    expect(start.ok).toBe(true);
    if (!start.ok) return;
    expect(start.value.analysis.suspects.length).toBeGreaterThan(5);
    for (const s of start.value.analysis.suspects)
      for (const strategy of ["order", "split", "best"] as const) {
        const fault =
          s.kind === "part"
            ? { kind: "part" as const, id: s.nodeId }
            : { kind: "short" as const, net: s.netId };
        const out = simulateRun(() => 0.37, doc, start.value.setup, fault, strategy, { noisy: false });
        expect(out.correct, `${s.id} ${strategy} → ${out.findingId}`).toBe(true);
      }
  });

  it("OM-5150 with the battery attached: SYS_IN is OR-ed, so the charger alone is not a suspect", () => {
    const r = startRun(OM_5150_MAP, {
      condition: { sourcesAttached: ["src-charger", "src-battery", "src-button"] },
    });
    expect(r.ok).toBe(true);
    if (!r.ok) return;
    const ids = r.value.analysis.suspects.map((s) => s.id);
    expect(ids).not.toContain("u-chg");
    expect(ids).not.toContain("q-batfet");
    expect(ids).toContain("u-vcore");
  });
});
