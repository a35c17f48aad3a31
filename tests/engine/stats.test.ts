import jStat from "jstat";
import { describe, expect, it } from "vitest";
import { failureRate, rankByFailureRate, Z_95 } from "~/lib/engine";

const interval = (k: number, n: number, z?: number) => {
  const r = failureRate(k, n, z);
  if (!r.ok) throw new Error(r.error.message);
  return r.value;
};

describe("failureRate (Wilson score interval)", () => {
  // Newcombe, Statistics in Medicine 17:857-872 (1998), recomputed; formula per NIST/SEMATECH e-Handbook §7.2.4.1.
  it.each([
    [81, 263, 0.2553, 0.3662],
    [15, 148, 0.0624, 0.1605],
    [0, 20, 0, 0.1611],
    [1, 29, 0.0061, 0.1718],
  ])("%d/%d → %d–%d", (k, n, lo, hi) => {
    const r = interval(k, n);
    expect(r.rate).toBeCloseTo(k / n, 12);
    expect(r.low).toBeCloseTo(lo, 4);
    expect(r.high).toBeCloseTo(hi, 4);
  });

  // REFERENCES.md: with z = 1.96, 25/100 → 0.17545094–0.34304646.
  it("25/100 with z = 1.96", () => {
    const r = interval(25, 100, 1.96);
    expect(r.low).toBeCloseTo(0.17545094, 8);
    expect(r.high).toBeCloseTo(0.34304646, 8);
  });

  it("z matches the normal quantile of jstat", () => {
    expect(jStat.normal.inv(0.975, 0, 1)).toBeCloseTo(Z_95, 5);
  });

  // Cross-check with jstat: the Wilson bounds are where the two-sided score test has p = 0.05.
  it("bounds invert the score test (jstat normal cdf)", () => {
    for (const [k, n] of [
      [3, 10],
      [40, 100],
      [7, 250],
      [99, 100],
    ]) {
      const r = interval(k, n);
      for (const p0 of [r.low, r.high]) {
        const zScore = (k / n - p0) / Math.sqrt((p0 * (1 - p0)) / n);
        const pValue = 2 * (1 - jStat.normal.cdf(Math.abs(zScore), 0, 1));
        expect(pValue).toBeCloseTo(0.05, 5);
      }
    }
  });

  it("2 in 3 does not outrank 40 in 100", () => {
    const ranked = rankByFailureRate([
      { id: "rare-but-high", failures: 2, runs: 3 },
      { id: "well-known", failures: 40, runs: 100 },
    ]);
    expect(ranked.ok && ranked.value.map((r) => r.id)).toEqual(["well-known", "rare-but-high"]);
  });

  it("refuses bad counts", () => {
    for (const [k, n] of [
      [3, 2],
      [-1, 5],
      [1.5, 4],
      [Number.NaN, 3],
    ])
      expect(failureRate(k, n).ok).toBe(false);
    expect(interval(0, 0)).toEqual({ rate: 0, low: 0, high: 1 });
  });
});
