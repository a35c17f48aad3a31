import { z } from "zod";
import { fail, guard, ok, type Result } from "./result";

/** A repair action that fixes the fault with probability p (single fault, perfect repair) at cost c. */
export type RepairAction = { id: string; p: number; cost: number };

const ActionsSchema = z
  .array(
    z.object({ id: z.string().max(200), p: z.number().min(0).max(1), cost: z.number().positive().finite() }),
  )
  .max(10_000);
const OutcomesSchema = z.array(z.array(z.string().max(200)).max(10_000)).max(1_000);

/**
 * Expected cost of repair when the actions are tried in this order until one fixes the fault:
 * ECR = Σ cᵢ·(1 − Σ_{j<i} pⱼ) (Heckerman, Breese & Rommelse 1995).
 */
export const expectedCostOfRepair = guard((actions: readonly RepairAction[]): Result<number> => {
  const parsed = ActionsSchema.safeParse(actions);
  if (!parsed.success)
    return fail("invalid-input", "Each action needs an id, a probability 0..1 and a positive cost.");
  return ok(ecr(parsed.data));
});

function ecr(actions: readonly RepairAction[]): number {
  let remaining = 1;
  let total = 0;
  for (const a of actions) {
    total += a.cost * Math.max(0, remaining);
    remaining -= a.p;
  }
  return total;
}

/**
 * Orders repair actions by non-increasing p/c, optimal for single-fault, order-independent costs
 * (Kadane & Simon 1977). Probabilities are normalised first; ties keep the input order.
 */
export const orderRepairs = guard(
  (actions: RepairAction[]): Result<{ order: RepairAction[]; expectedCost: number }> => {
    const parsed = ActionsSchema.safeParse(actions);
    if (!parsed.success)
      return fail("invalid-input", "Each action needs an id, a probability 0..1 and a positive cost.");
    const sum = parsed.data.reduce((s, a) => s + a.p, 0);
    if (!(sum > 0)) return fail("invalid-input", "At least one action needs a positive probability.");
    const norm = parsed.data.map((a, i) => ({ ...a, p: a.p / sum, i }));
    norm.sort((a, b) => b.p / b.cost - a.p / a.cost || a.i - b.i);
    const order = norm.map(({ i: _i, ...a }) => a);
    return ok({ order, expectedCost: ecr(order) });
  },
);

/**
 * Expected cost of observing first: pay the test, then repair optimally within the outcome
 * (each outcome lists the action ids consistent with it).
 */
export const expectedCostObserveFirst = guard(
  (testCost: number, actions: RepairAction[], outcomes: string[][]): Result<number> => {
    if (!(typeof testCost === "number" && testCost >= 0 && Number.isFinite(testCost)))
      return fail("invalid-input", "The test cost must be ≥ 0.");
    const parsed = ActionsSchema.safeParse(actions);
    if (!parsed.success)
      return fail("invalid-input", "Each action needs an id, a probability and a positive cost.");
    const out = OutcomesSchema.safeParse(outcomes);
    if (!out.success)
      return fail(
        "invalid-input",
        "Outcomes must be a list (at most 1,000) of lists of action ids, one list per test outcome.",
      );
    const total = parsed.data.reduce((s, a) => s + a.p, 0);
    let cost = testCost;
    for (const ids of out.data) {
      const members = parsed.data.filter((a) => ids.includes(a.id));
      const mass = members.reduce((s, a) => s + a.p, 0);
      if (!mass) continue;
      const r = orderRepairs(members);
      if (!r.ok) return r;
      cost += (mass / total) * r.value.expectedCost;
    }
    return ok(cost);
  },
);
