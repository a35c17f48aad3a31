import { fail, guard, ok, type Result } from "./result";

/** z for a two-sided 95 % interval. */
export const Z_95 = 1.959964;

export type FailureRate = { rate: number; low: number; high: number };

/**
 * Failure rate k/n with its Wilson score interval (NIST/SEMATECH e-Handbook §7.2.4.1; Wilson 1927):
 * (p̂ + z²/2n ± z·√(p̂(1−p̂)/n + z²/4n²)) / (1 + z²/n).
 */
export const failureRate = guard((k: number, n: number, z: number = Z_95): Result<FailureRate> => {
  if (![k, n, z].every((x) => typeof x === "number" && Number.isFinite(x)))
    return fail("invalid-input", "k, n and z must be finite numbers.");
  if (!Number.isInteger(k) || !Number.isInteger(n) || k < 0 || n < 0 || k > n)
    return fail("invalid-input", "Need whole numbers with 0 ≤ k ≤ n.");
  if (!(z > 0)) return fail("invalid-input", "z must be positive.");
  if (n === 0) return ok({ rate: 0, low: 0, high: 1 });
  const p = k / n;
  const z2 = z * z;
  const centre = p + z2 / (2 * n);
  const spread = z * Math.sqrt((p * (1 - p)) / n + z2 / (4 * n * n));
  const denom = 1 + z2 / n;
  return ok({
    rate: p,
    low: Math.max(0, (centre - spread) / denom),
    high: Math.min(1, (centre + spread) / denom),
  });
});

/** Ranks nodes by the lower Wilson bound, so 2 failures in 3 does not outrank 40 in 100. */
export const rankByFailureRate = guard(
  (rows: { id: string; failures: number; runs: number }[]): Result<(FailureRate & { id: string })[]> => {
    if (!Array.isArray(rows) || rows.length > 100_000)
      return fail("invalid-input", "Expected up to 100,000 rows.");
    const out: (FailureRate & { id: string })[] = [];
    for (const r of rows) {
      if (!r || typeof r !== "object" || (typeof r.id !== "string" && typeof r.id !== "number"))
        return fail("invalid-input", "Each row needs an id (text or number), failures and runs.");
      const f = failureRate(r.failures, r.runs);
      if (!f.ok) return f;
      out.push({ id: String(r.id), ...f.value });
    }
    return ok(out.sort((a, b) => b.low - a.low || b.rate - a.rate));
  },
);
