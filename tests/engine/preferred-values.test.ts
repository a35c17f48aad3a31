import { describe, expect, it } from "vitest";
import { checkPreferred, E12, E24, E96 } from "~/lib/engine";

describe("IEC 60063 preferred values", () => {
  // IEC 60063 E12 and E24 series (REFERENCES.md lists them as literals).
  const e12 = "1.0 1.2 1.5 1.8 2.2 2.7 3.3 3.9 4.7 5.6 6.8 8.2".split(" ").map(Number);
  const e24 =
    "1.0 1.1 1.2 1.3 1.5 1.6 1.8 2.0 2.2 2.4 2.7 3.0 3.3 3.6 3.9 4.3 4.7 5.1 5.6 6.2 6.8 7.5 8.2 9.1"
      .split(" ")
      .map(Number);

  it("stores the series exactly", () => {
    expect([...E12]).toEqual(e12);
    expect([...E24]).toEqual(e24);
    // The rounded formula 10^(i/24) gives 2.6 at i = 10 where IEC 60063 says 2.7 (and others differ too),
    // which is why the series are literals.
    expect(e24[10]).toBe(2.7);
    expect(Math.round(10 ** (10 / 24) * 10) / 10).toBe(2.6);
    expect(E24[10]).toBe(2.7);
    const formula = Array.from({ length: 24 }, (_, i) => Math.round(10 ** (i / 24) * 10) / 10);
    const wrong = formula.flatMap((x, i) => (x === e24[i] ? [] : [i]));
    expect(wrong).toEqual([10, 11, 12, 13, 14, 15, 16, 22]);
    // IEC 60063 E96: round(100·10^(i/96))/100 gives all 96 values (e.g. 1.00, 1.02, 4.75, 9.76).
    expect(E96).toHaveLength(96);
    expect([E96[0], E96[1], E96[65], E96[95]]).toEqual([1.0, 1.02, 4.75, 9.76]);
  });

  it("says whether a value is preferred and its nearest", () => {
    for (const m of e24)
      for (const decade of [1, 1e3, 1e6])
        expect(checkPreferred(m * decade, "E24")).toMatchObject({ ok: true, value: { preferred: true } });
    const r = checkPreferred(4600, "E12");
    expect(r).toMatchObject({ ok: true, value: { preferred: false, nearest: 4700 } });
    expect(checkPreferred(9.6, "E12")).toMatchObject({ ok: true, value: { nearest: 10 } });
    expect(checkPreferred(2.7e3, "E6")).toMatchObject({ ok: true, value: { preferred: false } });
    expect(checkPreferred(-1).ok).toBe(false);
    expect(checkPreferred(Number.NaN).ok).toBe(false);
  });
});
