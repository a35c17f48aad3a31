/**
 * Next month's need of a part by simple exponential smoothing (Hyndman & Athanasopoulos, "Forecasting:
 * Principles and Practice", 3rd ed., §8.1): level ℓ₁ = y₁, ℓₜ = α·yₜ + (1 − α)·ℓₜ₋₁, forecast ŷ = ℓ_T.
 * α = 0.5 weighs the last month as much as all earlier ones together: quick to follow a new failure, while one
 * odd month moves the forecast only half-way. Months without use must be passed as 0, not left out.
 */
export const SMOOTHING_ALPHA = 0.5;

export function smoothedForecast(series: readonly number[], alpha = SMOOTHING_ALPHA): number {
  if (!(alpha > 0 && alpha <= 1)) throw new RangeError("alpha must be in (0, 1].");
  if (series.length === 0) return 0;
  let level = series[0];
  for (let i = 1; i < series.length; i++) level = alpha * series[i] + (1 - alpha) * level;
  return level;
}

/** Whole parts to have on the shelf for the forecast (never fewer than zero). */
export function stockToHold(forecast: number): number {
  return Math.max(0, Math.ceil(forecast - 1e-9));
}

/** Every month from `from` to `to` inclusive as "YYYY-MM" (UTC), so gaps become explicit zeros. */
export function monthsBetween(from: string, to: string): string[] {
  const [fy, fm] = from.slice(0, 7).split("-").map(Number);
  const [ty, tm] = to.slice(0, 7).split("-").map(Number);
  const out: string[] = [];
  let y = fy;
  let m = fm;
  while ((y < ty || (y === ty && m <= tm)) && out.length < 1200) {
    out.push(`${y}-${String(m).padStart(2, "0")}`);
    m += 1;
    if (m === 13) {
      m = 1;
      y += 1;
    }
  }
  return out;
}

/** The month after "YYYY-MM". */
export function nextMonth(month: string): string {
  const [y, m] = month.split("-").map(Number);
  return m === 12 ? `${y + 1}-01` : `${y}-${String(m + 1).padStart(2, "0")}`;
}
