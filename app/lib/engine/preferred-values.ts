import { fail, guard, ok, type Result } from "./result";

/** IEC 60063 preferred numbers. Stored as literals: 10^(i/N) rounded is wrong for several E12/E24 values. */
export const E6 = [1.0, 1.5, 2.2, 3.3, 4.7, 6.8] as const;
export const E12 = [1.0, 1.2, 1.5, 1.8, 2.2, 2.7, 3.3, 3.9, 4.7, 5.6, 6.8, 8.2] as const;
export const E24 = [
  1.0, 1.1, 1.2, 1.3, 1.5, 1.6, 1.8, 2.0, 2.2, 2.4, 2.7, 3.0, 3.3, 3.6, 3.9, 4.3, 4.7, 5.1, 5.6, 6.2, 6.8,
  7.5, 8.2, 9.1,
] as const;
/** E96 follows the rounded formula exactly (three significant figures). */
export const E96: readonly number[] = Array.from(
  { length: 96 },
  (_, i) => Math.round(100 * 10 ** (i / 96)) / 100,
);

export type Series = "E6" | "E12" | "E24" | "E96";
const SERIES: Record<Series, readonly number[]> = { E6, E12, E24, E96 };

export type PreferredCheck = { preferred: boolean; nearest: number; deviationPct: number };

/** Whether a positive value is in a preferred series, and its nearest preferred value (log distance). */
export const checkPreferred = guard((value: number, series: Series = "E24"): Result<PreferredCheck> => {
  const list = typeof series === "string" && Object.hasOwn(SERIES, series) ? SERIES[series] : undefined;
  if (!list) return fail("invalid-input", "Series must be E6, E12, E24 or E96.");
  if (typeof value !== "number" || !Number.isFinite(value) || value <= 0)
    return fail("invalid-input", "A preferred value check needs a positive finite number.");
  const decade = Math.floor(Math.log10(value));
  let best = Number.NaN;
  let bestDist = Number.POSITIVE_INFINITY;
  for (const d of [decade - 1, decade, decade + 1]) {
    for (const m of list) {
      const candidate = Number(`${m}e${d}`);
      const dist = Math.abs(Math.log(value / candidate));
      if (dist < bestDist) {
        bestDist = dist;
        best = candidate;
      }
    }
  }
  const deviationPct = ((value - best) / best) * 100;
  return ok({ preferred: Math.abs(deviationPct) < 1e-9, nearest: best, deviationPct });
});
