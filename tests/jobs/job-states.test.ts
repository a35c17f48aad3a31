import { describe, expect, it } from "vitest";
import {
  type Actor,
  checkTransition,
  JOB_STATES,
  type JobState,
  nextTransitions,
  type TransitionContext,
} from "~/lib/job-states";
import { JOB_STATES as SCHEMA_JOB_STATES } from "~/server/schema.server";

// The expected table, written out independently of the module: "from>to": roles allowed.
const LEGAL: Record<string, Actor[]> = {
  "received>diagnosing": ["owner", "lead", "tech"],
  "diagnosing>awaiting-approval": ["owner", "lead", "desk"],
  "diagnosing>repairing": ["owner", "lead"],
  "awaiting-approval>repairing": ["owner", "lead", "desk", "customer"],
  "awaiting-approval>declined": ["owner", "lead", "desk", "customer"],
  "repairing>testing": ["owner", "lead", "tech"],
  "testing>repairing": ["owner", "lead", "tech"],
  "testing>ready": ["owner", "lead", "tech"],
  "ready>closed": ["owner", "lead", "desk"],
  "declined>closed": ["owner", "lead", "desk"],
};
const ACTORS: Actor[] = ["owner", "lead", "tech", "desk", "customer"];
// A context that passes every guard, so the table itself is what is tested.
const OPEN: TransitionContext = { billing: "paid", waived: false, warranty: true };

describe("job state table", () => {
  it("has the same states as the database column", () => {
    expect([...JOB_STATES]).toEqual([...SCHEMA_JOB_STATES]);
  });

  for (const from of JOB_STATES) {
    for (const to of JOB_STATES) {
      const key = `${from}>${to}`;
      for (const actor of ACTORS) {
        const legal = LEGAL[key]?.includes(actor) ?? false;
        it(`${from} → ${to} by ${actor}: ${legal ? "allowed" : "refused"}`, () => {
          const result = checkTransition(from as JobState, to as JobState, actor, OPEN);
          expect(result.ok).toBe(legal);
          if (!result.ok) expect(result.message.length).toBeGreaterThan(10);
        });
      }
    }
  }

  it("never leaves closed", () => {
    for (const actor of ACTORS) expect(nextTransitions("closed", actor)).toEqual([]);
  });
});

describe("guards", () => {
  it("closes only a paid, waived or free job", () => {
    const unpaid = { billing: "unpaid", waived: false, warranty: false } as const;
    const refused = checkTransition("ready", "closed", "desk", unpaid);
    expect(refused).toMatchObject({ ok: false });
    if (!refused.ok) expect(refused.message).toContain("not paid");
    expect(checkTransition("ready", "closed", "desk", { ...unpaid, waived: true }).ok).toBe(true);
    expect(checkTransition("ready", "closed", "desk", { ...unpaid, billing: "paid" }).ok).toBe(true);
    expect(checkTransition("declined", "closed", "lead", { ...unpaid, billing: "nothing-owed" }).ok).toBe(
      true,
    );
    expect(checkTransition("declined", "closed", "lead", unpaid).ok).toBe(false);
  });

  it("skips approval only for warranty comebacks", () => {
    const normal = { billing: "unpaid", waived: false, warranty: false } as const;
    expect(checkTransition("diagnosing", "repairing", "lead", normal).ok).toBe(false);
    expect(checkTransition("diagnosing", "repairing", "lead", { ...normal, warranty: true }).ok).toBe(true);
  });
});
