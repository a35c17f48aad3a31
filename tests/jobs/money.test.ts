import { describe, expect, it } from "vitest";
import {
  formatMoney,
  formatRate,
  lineTotal,
  minorDigits,
  minorToInput,
  parseMoney,
  taxOn,
  totalsOf,
} from "~/lib/money";

describe("minor units", () => {
  it("knows each currency's minor unit", () => {
    // ISO 4217, minor unit column: USD 2, EUR 2, GBP 2, JPY 0, KWD 3.
    expect(minorDigits("USD")).toBe(2);
    expect(minorDigits("EUR")).toBe(2);
    expect(minorDigits("JPY")).toBe(0);
    expect(minorDigits("KWD")).toBe(3);
  });

  it("parses typed amounts exactly, without floating-point drift", () => {
    expect(parseMoney("12")).toEqual({ ok: true, minor: 1200 });
    expect(parseMoney("12.5")).toEqual({ ok: true, minor: 1250 });
    expect(parseMoney("0.07")).toEqual({ ok: true, minor: 7 });
    // 0.1 + 0.2 in binary floating point is 0.30000000000000004; parsing digits avoids it.
    expect(parseMoney("0.30")).toEqual({ ok: true, minor: 30 });
    expect(parseMoney("1,234.56")).toEqual({ ok: true, minor: 123456 });
    expect(parseMoney("1500", "JPY")).toEqual({ ok: true, minor: 1500 });
  });

  it("refuses what is not an amount with a message", () => {
    expect(parseMoney("")).toMatchObject({ ok: false, message: "Enter an amount." });
    expect(parseMoney("12.345")).toMatchObject({
      ok: false,
      message: "USD amounts have at most 2 decimal places.",
    });
    expect(parseMoney("12.5", "JPY")).toMatchObject({ ok: false });
    expect(parseMoney("-3")).toMatchObject({ ok: false });
    expect(parseMoney("3e2")).toMatchObject({ ok: false });
    expect(parseMoney("abc")).toMatchObject({ ok: false });
  });

  it("writes minor units back for forms and display", () => {
    expect(minorToInput(1250)).toBe("12.50");
    expect(minorToInput(7)).toBe("0.07");
    expect(minorToInput(1500, "JPY")).toBe("1500");
    expect(formatMoney(123456)).toBe("$1,234.56");
    expect(formatRate(825)).toBe("8.25 %");
    expect(formatRate(2000)).toBe("20 %");
  });
});

describe("tax on the tax-exclusive subtotal, half-up to whole minor units", () => {
  // Rule: tax = round_half_up(subtotal × rate_bp / 10 000); 1 bp = 0.01 % (common practice for rates).
  it("computes exact cases by hand", () => {
    // $100.00 at 8.25 % = $8.25 exactly.
    expect(taxOn(10000, 825)).toBe(825);
    // $10.00 at 8.25 % = 82.5 cents → half rounds up to 83.
    expect(taxOn(1000, 825)).toBe(83);
    // $0.10 at 5 % = 0.5 cents → 1 cent; $0.09 at 5 % = 0.45 cents → 0.
    expect(taxOn(10, 500)).toBe(1);
    expect(taxOn(9, 500)).toBe(0);
    // $19.99 at 20 % = 399.8 cents → 400.
    expect(taxOn(1999, 2000)).toBe(400);
    // $12.34 at 8.25 % = 101.805 cents → 102.
    expect(taxOn(1234, 825)).toBe(102);
    // $12.12 at 8.25 % = 99.99 cents → 100; $12.11 at 8.25 % = 99.9075 → 100; $12.05 → 99.4125 → 99.
    expect(taxOn(1212, 825)).toBe(100);
    expect(taxOn(1205, 825)).toBe(99);
    expect(taxOn(5000, 0)).toBe(0);
  });

  it("stays exact past 2^53 intermediate products", () => {
    // 9 007 199 254 740 991 × 825 overflows doubles; BigInt keeps it: ×825/10 000 = 743 093 938 516 131.7 → …132.
    expect(taxOn(Number.MAX_SAFE_INTEGER, 825)).toBe(743093938516132);
  });

  it("rejects fractional minor units and negative rates", () => {
    expect(() => taxOn(10.5, 825)).toThrow(RangeError);
    expect(() => taxOn(100, -1)).toThrow(RangeError);
  });

  it("taxes the subtotal once, not each line", () => {
    // Three lines of $0.10 at 5 %: per line 0.5 → 1 cent each would give 3 cents; on the $0.30 subtotal it is 1.5 → 2.
    const totals = totalsOf(
      [
        { quantity: 1, unitMinor: 10 },
        { quantity: 1, unitMinor: 10 },
        { quantity: 1, unitMinor: 10 },
      ],
      500,
    );
    expect(totals).toEqual({ subtotalMinor: 30, taxMinor: 2, totalMinor: 32 });
  });

  it("adds a worked repair quote", () => {
    // Two regulators at $4.80, labour 1 × $85.00, diagnostic fee $45.00 at 8.25 %:
    // subtotal 960 + 8500 + 4500 = 13 960; tax 1151.7 → 1152; total 15 112.
    const totals = totalsOf(
      [
        { quantity: 2, unitMinor: 480 },
        { quantity: 1, unitMinor: 8500 },
        { quantity: 1, unitMinor: 4500 },
      ],
      825,
    );
    expect(totals).toEqual({ subtotalMinor: 13960, taxMinor: 1152, totalMinor: 15112 });
  });

  it("refuses lines that are not whole quantities or are negative", () => {
    expect(() => lineTotal({ quantity: 0, unitMinor: 100 })).toThrow();
    expect(() => lineTotal({ quantity: 1.5, unitMinor: 100 })).toThrow();
    expect(() => lineTotal({ quantity: 1, unitMinor: -1 })).toThrow();
  });
});
