import { z } from "zod";
import { type Mode, type Range, RangeSchema } from "./map-document";
import { fail, guard, ok, type Result } from "./result";

export type Verdict = "in range" | "low" | "high" | "missing" | "shorted" | "open";

/** One meter range: accuracy ±(pctOfReading % + counts × resolution). */
export const MeterRangeSchema = z
  .object({
    fullScale: z.number().positive().finite(),
    resolution: z.number().positive().finite(),
    pctOfReading: z.number().min(0).max(100),
    counts: z.number().min(0).max(10_000),
  })
  .strict();
export const MeterProfileSchema = z
  .object({
    name: z.string().max(120).optional(),
    voltage: z.array(MeterRangeSchema).max(20).optional(),
    resistance: z.array(MeterRangeSchema).max(20).optional(),
    diode: z.array(MeterRangeSchema).max(20).optional(),
  })
  .strict();
export type MeterRange = z.infer<typeof MeterRangeSchema>;
export type MeterProfile = z.infer<typeof MeterProfileSchema>;

export const DEFAULT_MISSING_V = 0.1;
export const DEFAULT_MISSING_FRACTION = 0.05;
export const DEFAULT_SHORTED_OHM = 1;
/** A diode-mode drop this close to zero is a dead short (common practice). */
export const DIODE_SHORTED_V = 0.02;

export type Thresholds = { missingV?: number; shortedOhm?: number };

/** Relative tolerance applied at window edges (meter boundary values). */
export const BOUNDARY_EPSILON = 1e-9;

const usable = (x: unknown): number | undefined =>
  typeof x === "number" && Number.isFinite(x) && x >= 0 ? x : undefined;

/** Thresholds that are not finite non-negative numbers are ignored (the defaults apply). */
export function cleanThresholds(t: unknown): Thresholds {
  if (!t || typeof t !== "object") return {};
  const o = t as Record<string, unknown>;
  return { missingV: usable(o.missingV), shortedOhm: usable(o.shortedOhm) };
}

export type Judgement = {
  verdict: Verdict;
  /** Distance to the nearest window edge in SI units (positive inside, negative outside); 0 for OL. */
  margin: number;
  window: { min: number; max: number };
  /** Meter uncertainty applied to the reading (0 without a meter profile). */
  uncertainty: number;
  missingThresholdV?: number;
  shortedThresholdOhm?: number;
};

export function windowOf(range: Range): { min: number; max: number } {
  if (!range || typeof range !== "object") return { min: Number.NaN, max: Number.NaN };
  if ("nominal" in range) {
    const a = range.nominal * (1 - range.tolerancePct / 100);
    const b = range.nominal * (1 + range.tolerancePct / 100);
    return { min: Math.min(a, b), max: Math.max(a, b) };
  }
  return { min: range.min, max: range.max };
}

export const nominalOf = (range: Range): number =>
  "nominal" in range ? range.nominal : (range.min + range.max) / 2;

/** Uncertainty of one reading: counts are taken on the smallest range that holds the reading. */
export function meterUncertainty(value: number, ranges: readonly MeterRange[] | undefined): number {
  if (!Array.isArray(ranges) || ranges.length === 0 || typeof value !== "number" || !Number.isFinite(value))
    return 0;
  if (!ranges.every((r) => r && Number.isFinite(r.fullScale) && Number.isFinite(r.resolution))) return 0;
  const abs = Math.abs(value);
  const sorted = [...ranges].sort((a, b) => a.fullScale - b.fullScale);
  const range = sorted.find((r) => abs <= r.fullScale) ?? sorted[sorted.length - 1];
  return (abs * range.pctOfReading) / 100 + range.counts * range.resolution;
}

const isFiniteNumber = (x: unknown): x is number => typeof x === "number" && Number.isFinite(x);
const isObject = (x: unknown): x is Record<string, unknown> =>
  typeof x === "object" && x !== null && !Array.isArray(x);
const onlyKeys = (o: Record<string, unknown>, allowed: readonly string[]) =>
  Object.keys(o).every((k) => allowed.includes(k));

export const isMode = (x: unknown): x is Mode => x === "voltage" || x === "resistance" || x === "diode";
export const isReadingValue = (x: unknown): x is number | "OL" => x === "OL" || isFiniteNumber(x);

/** Plain-code twin of `RangeSchema` (no zod on the hot path). */
export function isRange(x: unknown): x is Range {
  if (!isObject(x)) return false;
  if ("nominal" in x)
    return (
      onlyKeys(x, ["nominal", "tolerancePct"]) &&
      isFiniteNumber(x.nominal) &&
      isFiniteNumber(x.tolerancePct) &&
      x.tolerancePct >= 0 &&
      x.tolerancePct <= 100
    );
  return onlyKeys(x, ["min", "max"]) && isFiniteNumber(x.min) && isFiniteNumber(x.max) && x.min <= x.max;
}

const isMeterRange = (x: unknown): boolean =>
  isObject(x) &&
  onlyKeys(x, ["fullScale", "resolution", "pctOfReading", "counts"]) &&
  isFiniteNumber(x.fullScale) &&
  x.fullScale > 0 &&
  isFiniteNumber(x.resolution) &&
  x.resolution > 0 &&
  isFiniteNumber(x.pctOfReading) &&
  x.pctOfReading >= 0 &&
  x.pctOfReading <= 100 &&
  isFiniteNumber(x.counts) &&
  x.counts >= 0 &&
  x.counts <= 10_000;

const isMeterRanges = (x: unknown): boolean => {
  if (x === undefined) return true;
  if (!Array.isArray(x) || x.length > 20) return false;
  for (let i = 0; i < x.length; i++) if (!isMeterRange(x[i])) return false;
  return true;
};

/** Plain-code twin of `MeterProfileSchema` (no zod on the hot path). */
export function isMeterProfile(x: unknown): x is MeterProfile {
  return (
    isObject(x) &&
    onlyKeys(x, ["name", "voltage", "resistance", "diode"]) &&
    (x.name === undefined || (typeof x.name === "string" && x.name.length <= 120)) &&
    isMeterRanges(x.voltage) &&
    isMeterRanges(x.resistance) &&
    isMeterRanges(x.diode)
  );
}

/**
 * Judges one reading against its expected window. The window is widened by the meter's stated
 * accuracy: in range when reading ± uncertainty overlaps [min, max].
 */
export const judge = guard(
  (
    reading: { mode: Mode; value: number | "OL" },
    expected: Range,
    meter?: MeterProfile,
    thresholds?: Thresholds,
  ): Result<Judgement> => {
    // Plain checks (the zod schemas stay the reference: a value they accept is never refused here).
    if (!isObject(reading) || !isMode(reading.mode) || !isReadingValue(reading.value))
      return fail("invalid-input", "A reading needs a mode and a finite number or 'OL'.");
    if (!isRange(expected) && !RangeSchema.safeParse(expected).success)
      return fail("invalid-input", "The expected range is not valid.");
    if (meter !== undefined && !isMeterProfile(meter) && !MeterProfileSchema.safeParse(meter).success)
      return fail("invalid-input", "The meter profile is not valid.");
    return ok(judgeValid(reading.mode, reading.value, expected, meter, thresholds));
  },
);

/**
 * `judge` without input checks, for callers that validated at their own boundary (analyse, judgeReading):
 * the mode, value, range and meter must already be valid.
 */
export function judgeValid(
  mode: Mode,
  value: number | "OL",
  range: Range,
  meter?: MeterProfile,
  thresholds?: Thresholds,
): Judgement {
  const window = windowOf(range);
  const nominal = nominalOf(range);
  const t = cleanThresholds(thresholds);
  const missingV = t.missingV ?? Math.max(DEFAULT_MISSING_V, DEFAULT_MISSING_FRACTION * Math.abs(nominal));
  const shortedOhm = t.shortedOhm ?? DEFAULT_SHORTED_OHM;
  const base = { window, missingThresholdV: mode === "voltage" ? missingV : undefined };
  const withShort = mode === "resistance" ? { shortedThresholdOhm: shortedOhm } : {};
  if (value === "OL") {
    return {
      ...base,
      ...withShort,
      verdict: mode === "voltage" ? "high" : "open",
      margin: 0,
      uncertainty: 0,
    };
  }
  const u = meterUncertainty(value, meter?.[mode]);
  const margin = Math.min(value - window.min, window.max - value);
  // A tiny relative slack so exact boundary values (e.g. 2.000 V ± 0.0036 V against 2.0036 V) are not
  // lost to binary rounding of the window or of the uncertainty.
  const slack = BOUNDARY_EPSILON * Math.max(Math.abs(value), Math.abs(window.min), Math.abs(window.max));
  let verdict: Verdict;
  // A reading whose uncertainty interval overlaps the window is in range, whatever the thresholds say;
  // the missing/shorted thresholds only apply to readings outside the window.
  if (value + u < window.min - slack) {
    if (mode === "voltage" && Math.abs(value) < missingV) verdict = "missing";
    else if (mode === "resistance" && value < shortedOhm) verdict = "shorted";
    else if (mode === "diode" && value < DIODE_SHORTED_V) verdict = "shorted";
    else verdict = "low";
  } else if (value - u > window.max + slack) {
    // Above the window is high even under the missing threshold (a signal expected near 0 V that reads
    // a little more is not absent).
    verdict = "high";
  } else verdict = "in range";
  return { ...base, ...withShort, verdict, margin, uncertainty: u };
}
