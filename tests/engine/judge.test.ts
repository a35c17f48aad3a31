import { describe, expect, it } from "vitest";
import { judge, type MeterProfile, meterUncertainty } from "~/lib/engine";

const v = (x: number | "OL") => ({ mode: "voltage" as const, value: x });
const ohm = (x: number | "OL") => ({ mode: "resistance" as const, value: x });
const verdict = (r: ReturnType<typeof judge>) => (r.ok ? r.value.verdict : r.error.message);

describe("judge", () => {
  // Linden's Handbook of Batteries, 4th ed. (2011), Li-ion chapter: 4.20 V per cell, so 3 cells full = 12.6 V.
  const cells = 3;
  const perCell = 4.2;
  const fullPack = cells * perCell;
  it("a full 3-cell pack reads 12.6 V", () => {
    expect(fullPack).toBeCloseTo(12.6, 12);
    expect(verdict(judge(v(fullPack), { min: 9.0, max: 12.7 }))).toBe("in range");
    // Same handbook: about 3.0 V per cell at cut-off → 9.0 V; below that the pack is low.
    expect(verdict(judge(v(8.5), { min: cells * 3.0, max: 12.7 }))).toBe("low");
  });

  // USB Power Delivery rev 3.1 (IEC 62680-1-2): fixed supply voltages 5, 9, 15, 20 V.
  it.each([5, 9, 15, 20])("a %d V PD contract is in range on a ±5 %% window", (pd) => {
    expect(verdict(judge(v(pd), { nominal: pd, tolerancePct: 5 }))).toBe("in range");
    expect(verdict(judge(v(pd * 1.08), { nominal: pd, tolerancePct: 5 }))).toBe("high");
  });

  // Common practice: a healthy 3-cell input rail sits near 12.6 V idle and dips to about 12.55 V under load.
  it("a main input rail dipping from 12.6 V to 12.55 V stays in range", () => {
    for (const x of [12.6, 12.55]) expect(verdict(judge(v(x), { min: 11.0, max: 13.2 }))).toBe("in range");
  });

  // Regulator datasheets: power-good windows of 90-110 % of nominal; 3.3 V → 2.97-3.63 V.
  it("power-good window edges", () => {
    const w = { nominal: 3.3, tolerancePct: 10 };
    expect(verdict(judge(v(2.97), w))).toBe("in range");
    expect(verdict(judge(v(3.63), w))).toBe("in range");
    expect(verdict(judge(v(2.96), w))).toBe("low");
    expect(verdict(judge(v(3.64), w))).toBe("high");
    const r = judge(v(3.0), w);
    expect(r.ok && r.value.margin).toBeCloseTo(0.03, 9);
  });

  it("missing, shorted, open and OL", () => {
    // Defaults: missing below max(0.1 V, 5 % of nominal); shorted below 1 Ω (PRODUCT.md defaults).
    expect(verdict(judge(v(0.09), { nominal: 1.0, tolerancePct: 5 }))).toBe("missing");
    expect(verdict(judge(v(0.6), { nominal: 20, tolerancePct: 5 }))).toBe("missing");
    expect(verdict(judge(v(1.1), { nominal: 20, tolerancePct: 5 }))).toBe("low");
    expect(verdict(judge(v(0.3), { nominal: 3.3, tolerancePct: 5 }, undefined, { missingV: 0.5 }))).toBe(
      "missing",
    );
    expect(verdict(judge(ohm(0.4), { min: 1.5, max: 50 }))).toBe("shorted");
    expect(verdict(judge(ohm(1.2), { min: 1.5, max: 50 }))).toBe("low");
    expect(verdict(judge(ohm(1.2), { min: 1.5, max: 50 }, undefined, { shortedOhm: 2 }))).toBe("shorted");
    expect(verdict(judge(ohm("OL"), { min: 1e3, max: 1e6 }))).toBe("open");
    expect(verdict(judge(v("OL"), { nominal: 3.3, tolerancePct: 5 }))).toBe("high");
    expect(verdict(judge({ mode: "diode", value: 0.005 }, { min: 0.3, max: 0.7 }))).toBe("shorted");
  });

  // Meter maker's application note (EURAMET cg-15 v3.0 defines a count): 120 V on the 600.0 V range with
  // ±(1 % + 3) → ±(1.2 + 0.3) = ±1.5 V, so 118.5-121.5 V.
  const meterA: MeterProfile = {
    voltage: [
      { fullScale: 60, resolution: 0.01, pctOfReading: 1, counts: 3 },
      { fullScale: 600, resolution: 0.1, pctOfReading: 1, counts: 3 },
    ],
  };
  it("worked example: 120 V, ±(1 % + 3) on 600.0 V → ±1.5 V", () => {
    expect(meterUncertainty(120, meterA.voltage)).toBeCloseTo(1.5, 12);
    // reading ± 1.5 V overlaps the window when the window reaches 118.5 V (or starts at 121.5 V).
    expect(verdict(judge(v(120), { min: 100, max: 118.5 }, meterA))).toBe("in range");
    expect(verdict(judge(v(120), { min: 100, max: 118.4 }, meterA))).toBe("high");
    expect(verdict(judge(v(120), { min: 121.5, max: 130 }, meterA))).toBe("in range");
    expect(verdict(judge(v(120), { min: 121.6, max: 130 }, meterA))).toBe("low");
    expect(verdict(judge(v(120), { min: 100, max: 118.4 }))).toBe("high");
  });

  // Second worked example: 2.000 V on the 5.000 V range with ±(0.08 % + 2) → ±0.0036 V.
  it("worked example: 2.000 V, ±(0.08 % + 2) on 5.000 V → ±0.0036 V", () => {
    const meterB: MeterProfile = {
      voltage: [{ fullScale: 5, resolution: 0.001, pctOfReading: 0.08, counts: 2 }],
    };
    expect(meterUncertainty(2.0, meterB.voltage)).toBeCloseTo(0.0036, 12);
    expect(verdict(judge(v(2.0), { min: 2.0036, max: 2.1 }, meterB))).toBe("in range");
    expect(verdict(judge(v(2.0), { min: 2.0037, max: 2.1 }, meterB))).toBe("low");
  });

  it("takes counts from the smallest range that holds the reading", () => {
    expect(meterUncertainty(50, meterA.voltage)).toBeCloseTo(0.5 + 0.03, 12);
    expect(meterUncertainty(61, meterA.voltage)).toBeCloseTo(0.61 + 0.3, 12);
  });

  it("a reading inside its window is in range even below the missing/shorted threshold", () => {
    // An active-low signal expected at 0..0.4 V: 0.05 V is healthy, although below the 0.1 V missing default.
    expect(verdict(judge(v(0.05), { min: 0, max: 0.4 }))).toBe("in range");
    // A core rail reading 0.5..5 Ω to ground when healthy: 0.8 Ω is in range, below the 1 Ω shorted default.
    expect(verdict(judge(ohm(0.8), { min: 0.5, max: 5 }))).toBe("in range");
    expect(verdict(judge(ohm(0.3), { min: 0.5, max: 5 }))).toBe("shorted");
    // Overlap through the meter's uncertainty counts as well: 0.45 Ω ± 0.1 Ω reaches 0.5 Ω.
    const meter: MeterProfile = {
      resistance: [{ fullScale: 600, resolution: 0.1, pctOfReading: 0, counts: 1 }],
    };
    expect(verdict(judge(ohm(0.45), { min: 0.5, max: 5 }, meter))).toBe("in range");
    expect(verdict(judge({ mode: "diode", value: 0.01 }, { min: 0, max: 0.7 }))).toBe("in range");
    // Outside the window the thresholds still apply.
    expect(verdict(judge(v(0.05), { min: 0.2, max: 0.4 }))).toBe("missing");
    // Above a near-zero window is high, not missing, even under the missing threshold.
    expect(verdict(judge(v(0.06), { min: 0, max: 0.04 }))).toBe("high");
  });

  it("ignores thresholds that are not finite non-negative numbers", () => {
    const w = { nominal: 3.3, tolerancePct: 5 };
    for (const bad of [Number.NaN, -1, Number.POSITIVE_INFINITY, "0.5" as unknown as number]) {
      const r = judge(v(0.3), w, undefined, { missingV: bad, shortedOhm: bad });
      // Default missing threshold max(0.1 V, 5 % × 3.3 V) = 0.165 V: 0.3 V is low, not missing.
      expect(r.ok && r.value.verdict, String(bad)).toBe("low");
      expect(r.ok && r.value.missingThresholdV, String(bad)).toBeCloseTo(0.165, 12);
      const o = judge(ohm(0.5), { min: 100, max: 1e5 }, undefined, { shortedOhm: bad });
      expect(o.ok && o.value.shortedThresholdOhm, String(bad)).toBe(1);
    }
    expect(verdict(judge(v(0.3), w, undefined, null as never))).toBe("low");
  });

  // The 600.0 V range of the worked example, ±(1 % + 3): 2.2 V ± 0.322 V → 1.878..2.522 V. In floating point
  // 2.2 − 0.322 is 1.8780000000000001, so the exact boundary needs a relative tolerance.
  it("exact meter boundaries are in range despite binary rounding", () => {
    const m: MeterProfile = { voltage: [{ fullScale: 600, resolution: 0.1, pctOfReading: 1, counts: 3 }] };
    expect(meterUncertainty(2.2, m.voltage)).toBeCloseTo(0.322, 12);
    expect(verdict(judge(v(2.2), { min: 1, max: 1.878 }, m))).toBe("in range");
    expect(verdict(judge(v(2.2), { min: 2.522, max: 3 }, m))).toBe("in range");
    expect(verdict(judge(v(2.2), { min: 1, max: 1.8779 }, m))).toBe("high");
    expect(verdict(judge(v(2.2), { min: 2.5221, max: 3 }, m))).toBe("low");
    // Without a meter, the window edges themselves: 3.3 V ± 10 % computes to 2.9699999999999998..3.6300000000000003.
    expect(verdict(judge(v(2.97), { nominal: 3.3, tolerancePct: 10 }))).toBe("in range");
  });

  it("refuses bad input without throwing", () => {
    expect(judge(v(Number.NaN), { min: 0, max: 1 }).ok).toBe(false);
    expect(judge(v(1), { min: 2, max: 1 }).ok).toBe(false);
    expect(judge(null as never, null as never).ok).toBe(false);
    expect(judge(v(1), { min: 0, max: 2 }, { voltage: [{ fullScale: -1 }] } as never).ok).toBe(false);
  });
});
