/**
 * Exact solvers used only to check the engine's heuristics.
 */

/** Optimal alphabetic search tree cost Σ wᵢ·depthᵢ over ordered leaves (Knuth 1971 recurrence with his root bound). */
export function optimalAlphabeticCost(w: readonly number[]): number {
  const n = w.length;
  if (n <= 1) return 0;
  const pre = [0];
  for (const x of w) pre.push(pre[pre.length - 1] + x);
  const W = (i: number, j: number) => pre[j + 1] - pre[i];
  const e: number[][] = Array.from({ length: n }, () => new Array(n).fill(0));
  const root: number[][] = Array.from({ length: n }, () => new Array(n).fill(0));
  for (let i = 0; i < n - 1; i++) {
    e[i][i + 1] = W(i, i + 1);
    root[i][i + 1] = i;
  }
  for (let len = 3; len <= n; len++) {
    for (let i = 0; i + len - 1 < n; i++) {
      const j = i + len - 1;
      let best = Number.POSITIVE_INFINITY;
      let br = i;
      // Knuth: the optimal split lies between the splits of the two shorter intervals.
      for (let r = root[i][j - 1]; r <= Math.min(root[i + 1][j], j - 1); r++) {
        const c = e[i][r] + e[r + 1][j];
        if (c < best) {
          best = c;
          br = r;
        }
      }
      e[i][j] = best + W(i, j);
      root[i][j] = br;
    }
  }
  return e[0][n - 1];
}

/** Plain O(n³) interval DP, to cross-check the Knuth speed-up. */
export function optimalAlphabeticCostCubic(w: readonly number[]): number {
  const n = w.length;
  const memo = new Map<string, number>();
  const sum = (i: number, j: number) => w.slice(i, j + 1).reduce((a, b) => a + b, 0);
  const interval = (i: number, j: number): number => {
    if (i >= j) return 0;
    const key = `${i},${j}`;
    const hit = memo.get(key);
    if (hit !== undefined) return hit;
    let best = Number.POSITIVE_INFINITY;
    for (let r = i; r < j; r++) best = Math.min(best, interval(i, r) + interval(r + 1, j));
    const v = best + sum(i, j);
    memo.set(key, v);
    return v;
  };
  return interval(0, n - 1);
}

/**
 * Optimal expected number of binary tests by exhaustive search over suspect sets (bitmask DP).
 * `sides[t]` is the bitmask of candidates on one side of test t. Returns Σ p·depth / Σ p.
 */
export function optimalPolicyCost(p: readonly number[], sides: readonly number[]): number {
  const n = p.length;
  if (n > 20) throw new Error("too many candidates for exhaustive search");
  const full = (1 << n) - 1;
  const mass = new Float64Array(1 << n);
  for (let s = 1; s <= full; s++) {
    const low = s & -s;
    mass[s] = mass[s ^ low] + p[31 - Math.clz32(low)];
  }
  const memo = new Float64Array(1 << n).fill(-1);
  const solve = (s: number): number => {
    if ((s & (s - 1)) === 0) return 0;
    if (memo[s] >= 0) return memo[s];
    let best = Number.POSITIVE_INFINITY;
    for (const t of sides) {
      const a = s & t;
      if (a === 0 || a === s) continue;
      const c = solve(a) + solve(s ^ a);
      if (c < best) best = c;
    }
    const v = best === Number.POSITIVE_INFINITY ? 0 : best + mass[s];
    memo[s] = v;
    return v;
  };
  return solve(full) / mass[full];
}

/** Every permutation (Heap's algorithm), for brute-force checks on up to 8 items. */
export function permutations<T>(xs: readonly T[]): T[][] {
  const a = [...xs];
  const out: T[][] = [a.slice()];
  const c = new Array(a.length).fill(0);
  let i = 0;
  while (i < a.length) {
    if (c[i] < i) {
      const j = i % 2 === 0 ? 0 : c[i];
      [a[j], a[i]] = [a[i], a[j]];
      out.push(a.slice());
      c[i]++;
      i = 0;
    } else {
      c[i] = 0;
      i++;
    }
  }
  return out;
}
