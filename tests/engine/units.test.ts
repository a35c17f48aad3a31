import fc from "fast-check";
import { unit as mathUnit } from "mathjs";
import { describe, expect, it } from "vitest";
import { parseQuantity, parseRange, type Unit } from "~/lib/engine";

const val = (text: string, u: Unit) => {
  const r = parseQuantity(text, u);
  if (!r.ok) throw new Error(r.error.message);
  return r.value.value;
};
const close = (a: number | "OL", b: number) => {
  expect(typeof a).toBe("number");
  expect(Math.abs((a as number) - b)).toBeLessThanOrEqual(Math.abs(b) * 1e-12);
};

describe("IEC 60062 letter-and-digit code", () => {
  // IEC 60062:2016 (+A1:2019) clause 4 examples.
  it.each([
    ["R47", 0.47],
    ["4R7", 4.7],
    ["100R", 100],
    ["4K7", 4700],
    ["47K3", 47300],
    ["2M2", 2.2e6],
    ["4M7", 4.7e6],
    ["0R", 0],
    ["1G5", 1.5e9],
    ["1L5", 1.5e-3],
  ])("%s = %d Ω", (text, ohms) => close(val(text, "ohm"), ohms));

  // IEC 60062 clause 4 capacitor code: 1n5 = 1.5 nF.
  it.each([
    ["1n5", 1.5e-9],
    ["4u7", 4.7e-6],
    ["2p2", 2.2e-12],
    ["4µ7", 4.7e-6],
  ])("%s = %d F", (text, f) => close(val(text, "F"), f));

  it("reads 3V3 as 3.3 V (common practice on schematics)", () => close(val("3V3", "V"), 3.3));
});

describe("SI prefixes and units", () => {
  // BIPM SI Brochure, 9th ed. (2019), §3, table of SI prefixes: p 1e-12, n 1e-9, µ 1e-6, m 1e-3, k 1e3, M 1e6, G 1e9.
  it.each([
    ["1 pF", "F", 1e-12],
    ["1nF", "F", 1e-9],
    ["1uF", "F", 1e-6],
    ["1\u00b5F", "F", 1e-6],
    ["1\u03bcF", "F", 1e-6],
    ["1mV", "V", 1e-3],
    ["1kΩ", "ohm", 1e3],
    ["1MΩ", "ohm", 1e6],
    ["1GΩ", "ohm", 1e9],
  ] as const)("%s", (text, u, v) => close(val(text, u), v));

  it("treats m and M differently", () => {
    close(val("2m", "ohm"), 2e-3);
    close(val("2M", "ohm"), 2e6);
  });

  it.each([
    ["3.3", "V", 3.3],
    ["  3.3 V ", "V", 3.3],
    ["450mV", "V", 0.45],
    ["3,3", "V", 3.3],
    ["250mA", "A", 0.25],
    ["1.5A", "A", 1.5],
    ["4.7k", "ohm", 4700],
    ["12 ohm", "ohm", 12],
    ["12 Ohms", "ohm", 12],
    ["12\u2126", "ohm", 12],
    ["-0.2", "V", -0.2],
  ] as const)("%s", (text, u, v) => close(val(text, u), v));

  it("reads meter words", () => {
    expect(val("OL", "ohm")).toBe("OL");
    expect(val(" open ", "ohm")).toBe("OL");
    expect(val("O.L", "V")).toBe("OL");
  });

  it("rejects other units and junk with a message saying what was expected", () => {
    const r = parseQuantity("3.3V", "ohm");
    expect(r.ok).toBe(false);
    if (!r.ok) expect(r.error.message).toMatch(/voltage.*expected a resistance/);
    for (const bad of [
      "",
      "abc",
      "3.3.3",
      "1,2.3",
      "4K7K",
      "--3",
      "-5",
      "1e999",
      "3.3 Hz",
      "x".repeat(200),
    ]) {
      const q = parseQuantity(bad, "ohm");
      expect(q.ok, bad).toBe(false);
      if (!q.ok) expect(q.error.message.length).toBeGreaterThan(10);
    }
  });

  // Cross-check 1,000 generated values against mathjs over the forms it parses (relative difference ≤ 1e-12).
  it("agrees with mathjs on 1,000 generated values", () => {
    const units: [Unit, string][] = [
      ["V", "V"],
      ["A", "A"],
      ["ohm", "ohm"],
      ["F", "F"],
    ];
    const prefixes = ["p", "n", "u", "m", "", "k", "M", "G"];
    fc.assert(
      fc.property(
        fc.integer({ min: 0, max: 999999 }),
        fc.integer({ min: 0, max: 4 }),
        fc.constantFrom(...prefixes),
        fc.constantFrom(...units),
        (digits, decimals, prefix, [u, mj]) => {
          const num = (digits / 10 ** decimals).toFixed(decimals);
          const ours = val(`${num} ${prefix}${u === "ohm" ? "ohm" : u}`, u) as number;
          const ref = mathUnit(`${num} ${prefix}${mj}`).toNumber(mj);
          const diff = ref === 0 ? Math.abs(ours) : Math.abs(ours - ref) / Math.abs(ref);
          expect(diff).toBeLessThanOrEqual(1e-12);
        },
      ),
      { numRuns: 1000, seed: 42 },
    );
  });

  it("never throws on arbitrary strings", () => {
    fc.assert(
      fc.property(
        fc.string({ unit: "binary", maxLength: 300 }),
        fc.constantFrom<Unit>("V", "A", "ohm", "F"),
        (s, u) => {
          // guard() turns an exception into { ok: false, code: "internal" }: that must never happen.
          const r = parseQuantity(s, u);
          expect(typeof r.ok).toBe("boolean");
          expect(!r.ok && r.error.code, s).not.toBe("internal");
          if (r.ok && r.value.value !== "OL") expect(Number.isFinite(r.value.value)).toBe(true);
          const range = parseRange(s, u);
          expect(typeof range.ok).toBe("boolean");
          expect(!range.ok && range.error.code, s).not.toBe("internal");
        },
      ),
      { numRuns: 3000 },
    );
    expect(parseQuantity(null as unknown as string, "V").ok).toBe(false);
    expect(parseQuantity("3", "W" as Unit).ok).toBe(false);
    expect(parseRange("1..2", { __proto__: null } as unknown as Unit)).toMatchObject({
      ok: false,
      error: { code: "invalid-input" },
    });
  });
});

describe("expected-range text", () => {
  // Power-good windows of 90-110 % are common in regulator datasheets: 3.3 V → 2.97-3.63 V.
  it("reads nominal ± tolerance and min..max", () => {
    expect(parseRange("3.3V ±10%", "V")).toEqual({ ok: true, value: { nominal: 3.3, tolerancePct: 10 } });
    expect(parseRange("3.3 +/- 10 %", "V")).toEqual({ ok: true, value: { nominal: 3.3, tolerancePct: 10 } });
    expect(parseRange("2.97..3.63 V", "V")).toEqual({ ok: true, value: { min: 2.97, max: 3.63 } });
    expect(parseRange("10k to 1M", "ohm")).toEqual({ ok: true, value: { min: 10e3, max: 1e6 } });
    expect(parseRange("3.63..2.97", "V").ok).toBe(false);
    expect(parseRange("3.3", "V").ok).toBe(false);
  });
});

describe("ambiguous and alternative spellings", () => {
  it('refuses "4R7R" (the code already carries its unit) and repeated unit letters', () => {
    for (const [bad, u] of [
      ["4R7R", "ohm"],
      ["4K7R", "ohm"],
      ["100RR", "ohm"],
      ["3V3V", "V"],
    ] as const) {
      const r = parseQuantity(bad, u);
      expect(r.ok, bad).toBe(false);
      if (!r.ok) expect(r.error.message, bad).toMatch(/ambiguous/);
    }
  });

  it('refuses "1,000": a thousands separator or a decimal comma?', () => {
    const r = parseQuantity("1,000", "V");
    expect(r).toMatchObject({ ok: false, error: { code: "parse" } });
    if (!r.ok) expect(r.error.message).toBe('"1,000" is ambiguous: write 1000 or 1.0.');
    for (const bad of ["4,700 ohm", "2,500 mV", "-1,000", "1,000k"])
      expect(parseQuantity(bad, bad.includes("ohm") || bad.endsWith("k") ? "ohm" : "V").ok, bad).toBe(false);
    // One or two decimals after the comma, or a leading 0, cannot be a thousands group.
    close(val("3,3", "V"), 3.3);
    close(val("1,5k", "ohm"), 1500);
    close(val("0,100", "V"), 0.1);
    close(val("12,34", "V"), 12.34);
  });

  it("accepts a Unicode minus and a spelled-out or symbol unit after the code", () => {
    close(val("\u22120.2", "V"), -0.2);
    close(val("\u22120,2 V", "V"), -0.2);
    close(val("4K7 ohm", "ohm"), 4700);
    close(val("4k7Ω", "ohm"), 4700);
    close(val("4R7 ohm", "ohm"), 4.7);
    close(val("4u7F", "F"), 4.7e-6);
    expect(parseRange("\u22120.5..0.5 V", "V")).toEqual({ ok: true, value: { min: -0.5, max: 0.5 } });
  });
});
