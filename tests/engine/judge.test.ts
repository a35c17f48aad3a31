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

  it("refuses bad input without throwing", () => {
    expect(judge(v(Number.NaN), { min: 0, max: 1 }).ok).toBe(false);
    expect(judge(v(1), { min: 2, max: 1 }).ok).toBe(false);
    expect(judge(null as never, null as never).ok).toBe(false);
    expect(judge(v(1), { min: 0, max: 2 }, { voltage: [{ fullScale: -1 }] } as never).ok).toBe(false);
  });
});
