import fc from "fast-check";
import { describe, expect, it } from "vitest";
import {
  expectedCostObserveFirst,
  expectedCostOfRepair,
  orderRepairs,
  type RepairAction,
} from "~/lib/engine";
import { permutations } from "../../bench/lib/exact";

// Heckerman, Breese & Rommelse, "Decision-theoretic troubleshooting", CACM 38(3), 1995; Kadane & Simon,
// Annals of Statistics 5(2), 1977. Worked example recomputed by hand in REFERENCES.md.
const A: RepairAction = { id: "A", p: 0.5, cost: 10 };
const B: RepairAction = { id: "B", p: 0.3, cost: 3 };
const C: RepairAction = { id: "C", p: 0.2, cost: 8 };

describe("repair ordering", () => {
  it("worked example: every order's ECR and the p/c optimum B, A, C = 11.6", () => {
    const expected: Record<string, number> = {
      ABC: 13.1,
      ACB: 14.9,
      BAC: 11.6,
      BCA: 13.6,
      CAB: 16.9,
      CBA: 15.4,
    };
    for (const perm of permutations([A, B, C])) {
      const key = perm.map((a) => a.id).join("");
      const ecr = expectedCostOfRepair(perm);
      expect(ecr.ok && ecr.value).toBeCloseTo(expected[key], 10);
    }
    const r = orderRepairs([A, B, C]);
    expect(r.ok && r.value.order.map((a) => a.id)).toEqual(["B", "A", "C"]);
    expect(r.ok && r.value.expectedCost).toBeCloseTo(11.6, 10);
  });

  it("observing first: a test of cost 1 separating {A} from {B, C} gives 9.1 < 11.6", () => {
    const r = expectedCostObserveFirst(1, [A, B, C], [["A"], ["B", "C"]]);
    expect(r.ok && r.value).toBeCloseTo(9.1, 10);
  });

  it("the p/c rule matches brute force over all permutations (up to 8 actions)", () => {
    fc.assert(
      fc.property(
        fc.array(
          fc.record({
            w: fc.double({ min: 0.01, max: 1, noNaN: true }),
            c: fc.double({ min: 0.1, max: 50, noNaN: true }),
          }),
          {
            minLength: 1,
            maxLength: 8,
          },
        ),
        (xs) => {
          const total = xs.reduce((s, x) => s + x.w, 0);
          const actions = xs.map((x, i) => ({ id: `a${i}`, p: x.w / total, cost: x.c }));
          let best = Number.POSITIVE_INFINITY;
          for (const perm of permutations(actions)) {
            const e = expectedCostOfRepair(perm);
            if (e.ok) best = Math.min(best, e.value);
          }
          const r = orderRepairs(actions);
          expect(r.ok).toBe(true);
          if (r.ok) expect(r.value.expectedCost).toBeLessThanOrEqual(best * (1 + 1e-9));
        },
      ),
      { numRuns: 150, seed: 7 },
    );
  });

  it("refuses bad actions", () => {
    expect(orderRepairs([{ id: "x", p: 2, cost: 1 }]).ok).toBe(false);
    expect(orderRepairs([{ id: "x", p: 0, cost: 1 }]).ok).toBe(false);
    expect(orderRepairs(null as never).ok).toBe(false);
    expect(expectedCostOfRepair(null as never).ok).toBe(false);
  });
});
