import type { Mode, Range } from "./map-document";
import { fail, guard, ok, type Result } from "./result";

export type Unit = "V" | "A" | "ohm" | "F";
export type Quantity = { value: number | "OL"; unit: Unit };

export const MAX_READING_TEXT = 64;
const UNITS: readonly unknown[] = ["V", "A", "ohm", "F"];
export const MAX_RANGE_TEXT = 120;

export const unitForMode = (mode: Mode): Unit => (mode === "resistance" ? "ohm" : "V");

const UNIT_WORDS: Record<Unit, string> = {
  V: "a voltage (e.g. 3.3, 3.3V, 450mV, 3V3)",
  A: "a current (e.g. 1.5A, 250mA)",
  ohm: "a resistance (e.g. 4.7k, 4K7, 100R, 0R, 2M2, 12 ohm)",
  F: "a capacitance (e.g. 1n5, 10uF, 100nF)",
};

const UNIT_NAMES: Record<Unit, string> = { V: "volt", A: "amp", ohm: "ohm", F: "farad" };

/** SI prefixes (BIPM SI Brochure); `K` is accepted for kilo as resistor markings use it. */
const PREFIX_EXP: Record<string, number> = { p: -12, n: -9, u: -6, m: -3, k: 3, K: 3, M: 6, G: 9 };

const UNIT_TOKENS: Record<Unit, string[]> = {
  V: ["V", "v", "volt", "volts"],
  A: ["A", "amp", "amps"],
  ohm: ["Ω", "ohm", "ohms", "Ohm", "Ohms", "OHM", "R", "r"],
  F: ["F", "farad", "farads"],
};

const NUMBER = String.raw`(\d+(?:\.\d*)?|\.\d+)(?:[eE]([+-]?\d{1,3}))?`;

function unitPattern(unit: Unit): string {
  return UNIT_TOKENS[unit].map((t) => t.replace(/[.*+?^${}()|[\]\\]/g, "\\$&")).join("|");
}

const SI_RE: Record<Unit, RegExp> = {
  V: new RegExp(`^([+-]?)${NUMBER}\\s*([pnumkKMG])?(${unitPattern("V")})?$`),
  A: new RegExp(`^([+-]?)${NUMBER}\\s*([pnumkKMG])?(${unitPattern("A")})?$`),
  ohm: new RegExp(`^([+-]?)${NUMBER}\\s*([pnumkKMG])?(${unitPattern("ohm")})?$`),
  F: new RegExp(`^([+-]?)${NUMBER}\\s*([pnumkKMG])?(${unitPattern("F")})?$`),
};

/** IEC 60062 letter-and-digit code: the letter stands where the decimal point would be. */
const CODE_LETTERS: Record<Unit, Record<string, number>> = {
  ohm: { L: -3, R: 0, r: 0, k: 3, K: 3, M: 6, G: 9 },
  F: { p: -12, n: -9, u: -6, m: -3, F: 0 },
  // 3V3 for 3.3 V is common practice on schematics.
  V: { m: -3, V: 0, v: 0, k: 3 },
  A: { m: -3, u: -6, A: 0 },
};

function normalise(raw: string): string {
  return raw
    .replace(/[\u00b5\u03bc]/g, "u")
    .replace(/[\u2126\u03a9]/g, "Ω")
    .replace(/[\u00a0\u2009\u202f]/g, " ")
    .replace(/\u2212/g, "-")
    .trim();
}

function otherUnitHint(s: string, expected: Unit): Unit | null {
  const tail = s.replace(/^[+-]?[\d.,eE]+\s*[pnumkKMG]?/, "");
  for (const u of ["V", "A", "ohm", "F"] as Unit[]) {
    if (u === expected || !tail) continue;
    if (UNIT_TOKENS[u].includes(tail)) return u;
  }
  return null;
}

function toNumber(sign: string, mantissa: string, exp: number): number {
  return Number(`${sign}${mantissa}e${exp}`);
}

/**
 * Parses a bench reading or a component value: SI prefixes, units, the IEC 60062 code (4K7, R47, 1n5),
 * comma or dot decimals and the meter words OL/open. Never throws.
 */
export const parseQuantity = guard((text: string, expectedUnit: Unit): Result<Quantity> => {
  if (!UNITS.includes(expectedUnit))
    return fail("invalid-input", "The expected unit must be one of V, A, ohm, F.");
  if (typeof text !== "string") return fail("invalid-input", "Expected the reading as text.");
  if (text.length > MAX_READING_TEXT)
    return fail(
      "invalid-input",
      `A reading is at most ${MAX_READING_TEXT} characters; expected ${UNIT_WORDS[expectedUnit]}.`,
    );
  let s = normalise(text);
  if (!s) return fail("parse", `Empty reading; expected ${UNIT_WORDS[expectedUnit]} or OL.`);
  if (/^[+-]?\s*(o\.?\s*l\.?|open|overload)$/i.test(s)) return ok({ value: "OL", unit: expectedUnit });
  if (s.includes(",")) {
    if (s.includes(".") || s.split(",").length > 2)
      return fail("parse", `"${s}" mixes ',' and '.'; write one decimal mark, e.g. 3.3 or 3,3.`);
    // "1,000" could be a thousands separator or a decimal comma: refuse rather than guess.
    const grouped = /^[+-]?([1-9]\d{0,2}),(\d{3})(?!\d)/.exec(s);
    if (grouped) {
      const frac = grouped[2].replace(/0+$/, "") || "0";
      const shown = s.slice(0, grouped.index + grouped[0].length);
      return fail(
        "parse",
        `"${shown}" is ambiguous: write ${grouped[1]}${grouped[2]} or ${grouped[1]}.${frac}.`,
      );
    }
    s = s.replace(",", ".");
  }
  const expectedMsg = `expected ${UNIT_WORDS[expectedUnit]}, or OL/open`;
  let value: number | null = null;
  const si = SI_RE[expectedUnit].exec(s);
  if (si) {
    const [, sign, mantissa, e, prefix] = si;
    value = toNumber(sign, mantissa, (e ? Number(e) : 0) + (prefix ? PREFIX_EXP[prefix] : 0));
  } else {
    const letters = Object.keys(CODE_LETTERS[expectedUnit]).join("");
    const code = new RegExp(`^(\\d*)([${letters}])(\\d*)\\s*(${unitPattern(expectedUnit)})?$`).exec(s);
    if (code && code[1].length + code[3].length > 0) {
      const [, whole, letter, frac, unitWord] = code;
      // In "4R7R" or "3V3V" the unit letter repeats a code letter: 4.7 Ω, or 4R7 followed by a stray R?
      const letterExp = CODE_LETTERS[expectedUnit];
      if (unitWord && letterExp[unitWord] === 0 && (letterExp[letter] === 0 || expectedUnit === "ohm"))
        return fail(
          "parse",
          `"${s}" is ambiguous: the code ${whole}${letter}${frac} already carries its unit; write ${whole}${letter}${frac} alone, or spell the unit out (${whole}${letter}${frac} ${UNIT_NAMES[expectedUnit]}).`,
        );
      value = toNumber("", `${whole || "0"}.${frac || "0"}`, CODE_LETTERS[expectedUnit][letter]);
    }
  }
  if (value === null) {
    const other = otherUnitHint(s, expectedUnit);
    if (other) return fail("parse", `"${s}" is ${UNIT_WORDS[other].split(" (")[0]}; ${expectedMsg}.`);
    return fail("parse", `Could not read "${s}": ${expectedMsg}.`);
  }
  if (!Number.isFinite(value)) return fail("parse", `"${s}" is out of range; ${expectedMsg}.`);
  if (value < 0 && (expectedUnit === "ohm" || expectedUnit === "F"))
    return fail("parse", `"${s}" is negative; ${expectedMsg}.`);
  return ok({ value: value === 0 ? 0 : value, unit: expectedUnit });
});

/**
 * Parses an expected-range text: "3.3V ±5%", "3.3 +/- 5 %", "2.97..3.63 V", "10k to 1M".
 * A unit written once at the end applies to both ends.
 */
export const parseRange = guard((text: string, unit: Unit): Result<Range> => {
  if (!UNITS.includes(unit)) return fail("invalid-input", "The unit must be one of V, A, ohm, F.");
  if (typeof text !== "string") return fail("invalid-input", "Expected the range as text.");
  if (text.length > MAX_RANGE_TEXT)
    return fail("invalid-input", `A range is at most ${MAX_RANGE_TEXT} characters.`);
  const s = normalise(text);
  const tol = /^(.+?)\s*(?:±|\+\/-|\+-)\s*(\d+(?:[.,]\d+)?)\s*%$/.exec(s);
  if (tol) {
    const nominal = parseQuantity(tol[1], unit);
    if (!nominal.ok) return nominal;
    if (nominal.value.value === "OL") return fail("parse", "A nominal value cannot be OL.");
    const pct = Number(tol[2].replace(",", "."));
    if (!(pct >= 0 && pct <= 100)) return fail("parse", "The tolerance must be 0-100 %.");
    return ok({ nominal: nominal.value.value, tolerancePct: pct });
  }
  const parts = s.split(/\s*(?:\.\.|…|\bto\b|–|—|\s-\s)\s*/);
  if (parts.length !== 2 || !parts[0] || !parts[1])
    return fail("parse", `Could not read the range "${s}": write "3.3V ±5%" or "2.97..3.63 V".`);
  let [lo, hi] = parts;
  const unitTail = new RegExp(`(${unitPattern(unit)})$`);
  const tail = unitTail.exec(hi)?.[1];
  if (tail && !unitTail.test(lo) && /\d$/.test(lo.replace(/[pnumkKMG]$/, ""))) lo = `${lo}${tail}`;
  const a = parseQuantity(lo, unit);
  if (!a.ok) return a;
  const b = parseQuantity(hi, unit);
  if (!b.ok) return b;
  if (a.value.value === "OL" || b.value.value === "OL") return fail("parse", "Range ends must be numbers.");
  if (a.value.value > b.value.value)
    return fail("parse", "The lower end of the range is above the upper end.");
  return ok({ min: a.value.value, max: b.value.value });
});

/** Formats a value with an SI prefix for messages: 0.45 V → "450 mV". */
export function formatQuantity(value: number | "OL", unit: Unit): string {
  if (value === "OL") return "OL";
  if (typeof value !== "number" || !Number.isFinite(value)) return String(value);
  const sym = unit === "ohm" ? "Ω" : unit;
  if (value === 0) return `0 ${sym}`;
  const steps: [number, string][] = [
    [1e9, "G"],
    [1e6, "M"],
    [1e3, "k"],
    [1, ""],
    [1e-3, "m"],
    [1e-6, "µ"],
    [1e-9, "n"],
    [1e-12, "p"],
  ];
  const abs = Math.abs(value);
  const [f, p] = steps.find(([f]) => abs >= f * 0.9995) ?? steps[steps.length - 1];
  const v = value / f;
  return `${Number(v.toPrecision(4))} ${p}${sym}`;
}
