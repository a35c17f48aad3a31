import { describe, expect, it } from "vitest";
import {
  analyse,
  type MapDocument,
  nextReading,
  type Reading,
  startRun,
  type RunSetup,
  type Strategy,
} from "~/lib/engine";
import { optimalAlphabeticCost, optimalAlphabeticCostCubic } from "../../bench/lib/exact";
import { chainMap, randomPowerMap } from "../../bench/lib/maps";
import { expectedReadings, optimalReadings } from "../../bench/lib/policy";
import { mulberry32 } from "../../bench/lib/rng";

const chainSetup = (n: number): RunSetup => ({
  condition: { sourcesAttached: ["src"] },
  symptom: { missingNetIds: [`n${n}`] },
});

/** Runs a strategy to its finding and counts voltage and resistance readings. */
function diagnose(doc: MapDocument, setup: RunSetup, stage: number, short: boolean, strategy: Strategy) {
  const fault = short ? `short:n${stage}` : `p${stage}`;
  const readings: Parameters<typeof analyse>[2] = [];
  for (let step = 0; step < 600; step++) {
    const a = analyse(doc, setup, readings, { strategy, costs: "uniform" });
    if (!a.ok) throw new Error(a.error.message);
    if (a.value.isolated || !a.value.next) {
      const f = a.value.finding;
      const found = f?.kind === "part" ? f.nodeId : f?.kind === "short" ? `short:${f.nodeId}` : null;
      return {
        found,
        correct: found === fault,
        voltage: readings.filter((r) => r.mode === "voltage").length,
        resistance: readings.filter((r) => r.mode !== "voltage").length,
      };
    }
    const { netId, mode } = a.value.next;
    const k = Number(netId.slice(1));
    const value = mode === "voltage" ? (k >= stage ? 0 : 3.3) : short && k === stage ? 0.2 : 5000;
    readings.push({ id: `r${step}`, netId, mode, value });
  }
  throw new Error("did not finish");
}

describe("split", () => {
  // US Army subcourse IT0338, half-split: at most ⌈log₂ n⌉ checks on n serial stages, plus one resistance reading
  // to tell a short from a failed driver.
  /**
   * Walks split's whole decision tree on an n-stage chain: every reading branches on the value each possible
   * fault (every stage, failed driver or short) would give, so each fault follows exactly the walk a separate
   * run would take, at a fraction of the cost. Returns the faults checked.
   */
  function walkSplitTree(n: number, stages: number[]) {
    const doc = chainMap(n, { shorts: true });
    const setup = chainSetup(n);
    const valueFor = (f: { stage: number; short: boolean }, netId: string, mode: string) => {
      const k = Number(netId.slice(1));
      return mode === "voltage" ? (k >= f.stage ? 0 : 3.3) : f.short && k === f.stage ? 0.2 : 5000;
    };
    let checked = 0;
    const visit = (readings: Reading[], faults: { stage: number; short: boolean }[]) => {
      const a = analyse(doc, setup, readings, { strategy: "split", costs: "uniform" });
      if (!a.ok) throw new Error(a.error.message);
      if (a.value.isolated || !a.value.next) {
        const f = a.value.finding;
        const found = f?.kind === "part" ? f.nodeId : f?.kind === "short" ? `short:${f.nodeId}` : null;
        const voltage = readings.filter((r) => r.mode === "voltage").length;
        const resistance = readings.length - voltage;
        for (const x of faults) {
          const label = `n=${n} stage=${x.stage} short=${x.short} found ${found}`;
          expect(found, label).toBe(x.short ? `short:n${x.stage}` : `p${x.stage}`);
          expect(voltage, label).toBeLessThanOrEqual(Math.ceil(Math.log2(n)));
          expect(resistance, label).toBeLessThanOrEqual(1);
          checked++;
        }
        return;
      }
      const { netId, mode } = a.value.next;
      const groups = new Map<number | "OL", { stage: number; short: boolean }[]>();
      for (const x of faults) {
        const v = valueFor(x, netId, mode);
        groups.set(v, [...(groups.get(v) ?? []), x]);
      }
      for (const [value, group] of groups)
        visit([...readings, { id: `r${readings.length}`, netId, mode, value }], group);
    };
    visit(
      [],
      stages.flatMap((stage) => [
        { stage, short: false },
        { stage, short: true },
      ]),
    );
    return checked;
  }

  // US Army subcourse IT0338, half-split: at most ⌈log₂ n⌉ checks on n serial stages, plus one resistance reading
  // to tell a short from a failed driver. Every stage of every n up to 64 and every stage of a spread of larger
  // chains (powers of two and their neighbours, where ⌈log₂ n⌉ steps up); for the other n up to 256, 8 stages
  // including both ends. Walking every stage of all 256 chains takes several minutes.
  it("finds the failing stage in ≤ ⌈log₂ n⌉ voltage readings + ≤ 1 resistance reading, n = 1..256", () => {
    const rng = mulberry32(3);
    const full = new Set([65, 96, 127, 128, 129, 200, 255, 256]);
    let faults = 0;
    for (let n = 1; n <= 256; n++) {
      const all = n <= 64 || full.has(n);
      const stages = all
        ? Array.from({ length: n }, (_, i) => i + 1)
        : [...new Set([1, 2, n - 1, n, ...Array.from({ length: 4 }, () => 1 + Math.floor(rng() * n))])];
      expect(walkSplitTree(n, stages)).toBe(2 * stages.length);
      faults += 2 * stages.length;
    }
    expect(faults).toBeGreaterThan(5000);
  }, 120_000);

  // IT0338 worst case ⌈log₂ n⌉ for n = 2,3,4,5,8,9,16,17 → 1,2,2,3,3,4,4,5; mean with equal priors n=3 → 1.667,
  // 5 → 2.4, 6 → 2.667, 8 → 3.0, 10 → 3.4.
  it("matches the published half-split worst cases and means", () => {
    const worst: Record<number, number> = { 2: 1, 3: 2, 4: 2, 5: 3, 8: 3, 9: 4, 16: 4, 17: 5 };
    const means: Record<number, number> = { 3: 1.667, 5: 2.4, 6: 2.667, 8: 3.0, 10: 3.4 };
    for (const n of new Set([...Object.keys(worst), ...Object.keys(means)].map(Number))) {
      const doc = chainMap(n);
      const counts = Array.from(
        { length: n },
        (_, i) => diagnose(doc, chainSetup(n), i + 1, false, "split").voltage,
      );
      if (worst[n] !== undefined) expect(Math.max(...counts)).toBe(worst[n]);
      if (means[n] !== undefined) expect(counts.reduce((a, b) => a + b, 0) / n).toBeCloseTo(means[n], 3);
    }
  });
});

describe("order", () => {
  it("reads nets in power-up order", () => {
    const doc = chainMap(6);
    const r = diagnose(doc, chainSetup(6), 5, false, "order");
    expect(r.correct).toBe(true);
    expect(r.voltage).toBe(5);
  });
});

describe("best", () => {
  // Knuth, "Optimum binary search trees", Acta Informatica 1:14-25 (1971): on a chain the exact optimum is an
  // optimal alphabetic search tree over the stages.
  it("Knuth's speed-up agrees with the plain recurrence", () => {
    const rng = mulberry32(5);
    for (let t = 0; t < 200; t++) {
      const w = Array.from({ length: 1 + Math.floor(rng() * 12) }, () => rng());
      expect(optimalAlphabeticCost(w)).toBeCloseTo(optimalAlphabeticCostCubic(w), 10);
    }
    // Hand check: equal weights on 3 leaves → depths 1, 2, 2 → 5 × w.
    expect(optimalAlphabeticCost([1, 1, 1])).toBe(5);
  });

  it.each([
    ["without the small-set rollout", false],
    ["with the rollout", true],
  ])(
    "over 1,000 random chains (≤ 12 nets) averages ≤ 1.05 × the optimal alphabetic tree, worst ≤ 1.30 (%s)",
    (_label, rollout) => {
      const rng = mulberry32(2024);
      const ratios: number[] = [];
      for (let t = 0; t < 1000; t++) {
        const n = 2 + Math.floor(rng() * 11);
        const doc = chainMap(n);
        const setup = chainSetup(n);
        const priors: Record<string, number> = {};
        for (let k = 1; k <= n; k++) priors[`p${k}`] = Math.floor(rng() ** 2 * 60);
        const a = analyse(doc, setup, [], { priors });
        if (!a.ok) throw new Error(a.error.message);
        const p = new Map(a.value.suspects.map((s) => [s.id, s.probability]));
        const w = Array.from({ length: n }, (_, i) => p.get(`p${i + 1}`)!);
        const opt = optimalAlphabeticCost(w);
        const best = expectedReadings(doc, setup, "best", priors, { noRollout: !rollout });
        expect(best.allCorrect).toBe(true);
        ratios.push(best.mean / opt);
      }
      const mean = ratios.reduce((a, b) => a + b, 0) / ratios.length;
      expect(mean).toBeLessThanOrEqual(1.05);
      expect(Math.max(...ratios)).toBeLessThanOrEqual(1.3);
      expect(Math.min(...ratios)).toBeGreaterThanOrEqual(1 - 1e-9);
    },
    120_000,
  );

  it.each([
    ["without the small-set rollout", false],
    ["with the rollout", true],
  ])(
    "on 100 small random maps (≤ 14 candidate faults) averages ≤ 1.10 × the exhaustive optimum (%s)",
    (_l, rollout) => {
      const rng = mulberry32(99);
      const ratios: number[] = [];
      while (ratios.length < 100) {
        const doc = randomPowerMap(rng, 10 + Math.floor(rng() * 12));
        const setup: RunSetup = { condition: { sourcesAttached: ["chg", "btn"] } };
        const a = analyse(doc, setup, []);
        if (!a.ok) throw new Error(a.error.message);
        const n = a.value.suspects.length;
        if (n < 3 || n > 14) continue;
        const priors: Record<string, number> = {};
        for (const s of a.value.suspects) priors[s.id] = Math.floor(rng() ** 3 * 40);
        const best = expectedReadings(doc, setup, "best", priors, { noRollout: !rollout });
        const opt = optimalReadings(doc, setup, priors);
        expect(best.allCorrect).toBe(true);
        ratios.push(best.mean / opt);
      }
      expect(ratios.reduce((a, b) => a + b, 0) / ratios.length).toBeLessThanOrEqual(1.1);
      expect(Math.min(...ratios)).toBeGreaterThanOrEqual(1 - 1e-9);
    },
    120_000,
  );

  // The rollout option changes behaviour: on this 4-stage chain the bare greedy rule reads RAIL_2 first, the
  // rollout sees that reading RAIL_1 first costs fewer readings on average (1.902 vs 2.000, exact).
  it("rollout: false really turns the small-set rollout off", () => {
    const doc = chainMap(4);
    const setup = chainSetup(4);
    const priors = { p1: 38, p2: 1, p3: 26, p4: 33 };
    const withIt = analyse(doc, setup, [], { priors, costs: "uniform" });
    const without = analyse(doc, setup, [], { priors, costs: "uniform", rollout: false });
    if (!withIt.ok || !without.ok) throw new Error("analyse failed");
    expect(withIt.value.next?.netId).toBe("n1");
    expect(without.value.next?.netId).toBe("n2");
    // nextReading keeps the analysis' choice; startRun passes the option through as well.
    const again = nextReading(without.value, "best", priors, "uniform");
    expect(again.ok && again.value?.netId).toBe("n2");
    const run = startRun(doc, setup, { priors, costs: "uniform", rollout: false });
    expect(run.ok && run.value.analysis.next?.netId).toBe("n2");
    const on = expectedReadings(doc, setup, "best", priors);
    const off = expectedReadings(doc, setup, "best", priors, { noRollout: true });
    expect(on.mean).toBeCloseTo(97 / 51, 9);
    expect(off.mean).toBeCloseTo(2, 9);
  });

  it("explains why in plain words and weighs probe cost (disassembly)", () => {
    const doc = chainMap(2);
    (doc.nodes[2 + 1] as { probe: object }).probe = {
      text: "TP9 under the shield",
      seconds: 20,
      needsDisassembly: true,
    };
    const a = analyse(doc, chainSetup(2), [], { strategy: "best" });
    expect(a.ok).toBe(true);
    if (!a.ok || !a.value.next) return;
    expect(a.value.next.why).toMatch(
      /If RAIL_1 is present, the fault is after it; if missing, it is at or before it\. Separates 50% of the remaining likelihood\./,
    );
    expect(a.value.next.probe.needsDisassembly).toBe(true);
    expect(a.value.next.cost).toBeGreaterThan(300);
  });
});
