import type { Role } from "./permissions";

// A job's life from intake to pickup. Payment is not a state: it is the status of the job's invoice, and it
// only gates closing. `declined` is the side exit: the customer said no to the quote and takes the device back.
export const JOB_STATES = [
  "received",
  "diagnosing",
  "awaiting-approval",
  "repairing",
  "testing",
  "ready",
  "closed",
  "declined",
] as const;
export type JobState = (typeof JOB_STATES)[number];

export const JOB_STATE_LABELS: Record<JobState, string> = {
  received: "Received",
  diagnosing: "Diagnosing",
  "awaiting-approval": "Awaiting approval",
  repairing: "Repairing",
  testing: "Testing",
  ready: "Ready for pickup",
  closed: "Closed",
  declined: "Declined",
};

/** Who moves a job: a member by role, or the customer through the quote's approval page. */
export type Actor = Role | "customer";

export type Guard = "settled" | "pre-approved";

export type Transition = {
  from: JobState;
  to: JobState;
  roles: readonly Actor[];
  /** The button's words. */
  label: string;
  guard?: Guard;
};

export const TRANSITIONS: readonly Transition[] = [
  { from: "received", to: "diagnosing", roles: ["owner", "lead", "tech"], label: "Start diagnosis" },
  // Normally taken by sending the quote; the desk may also record a quote given by phone.
  { from: "diagnosing", to: "awaiting-approval", roles: ["owner", "lead", "desk"], label: "Quote given" },
  // Warranty comebacks are free, so there is nothing for the customer to approve.
  {
    from: "diagnosing",
    to: "repairing",
    roles: ["owner", "lead"],
    label: "Repair under warranty",
    guard: "pre-approved",
  },
  {
    from: "awaiting-approval",
    to: "repairing",
    roles: ["owner", "lead", "desk", "customer"],
    label: "Customer approved",
  },
  {
    from: "awaiting-approval",
    to: "declined",
    roles: ["owner", "lead", "desk", "customer"],
    label: "Customer declined",
  },
  { from: "repairing", to: "testing", roles: ["owner", "lead", "tech"], label: "Repair done, test" },
  {
    from: "testing",
    to: "repairing",
    roles: ["owner", "lead", "tech"],
    label: "Failed test, back to repair",
  },
  { from: "testing", to: "ready", roles: ["owner", "lead", "tech"], label: "Passed test, ready for pickup" },
  {
    from: "ready",
    to: "closed",
    roles: ["owner", "lead", "desk"],
    label: "Picked up, close",
    guard: "settled",
  },
  {
    from: "declined",
    to: "closed",
    roles: ["owner", "lead", "desk"],
    label: "Returned unrepaired, close",
    guard: "settled",
  },
];

export type Billing = "paid" | "unpaid" | "nothing-owed";

export type TransitionContext = {
  /** The invoice's status as far as closing cares. */
  billing: Billing;
  /** An owner recorded that this job's charge is waived. */
  waived: boolean;
  /** A warranty comeback (free, no approval needed). */
  warranty: boolean;
};

export type TransitionCheck =
  | { ok: true; transition: Transition }
  | { ok: false; reason: "illegal" | "role" | "guard"; message: string };

export function findTransition(from: JobState, to: JobState): Transition | undefined {
  return TRANSITIONS.find((t) => t.from === from && t.to === to);
}

export function checkTransition(
  from: JobState,
  to: JobState,
  actor: Actor,
  context: TransitionContext,
): TransitionCheck {
  const transition = findTransition(from, to);
  if (!transition) {
    return {
      ok: false,
      reason: "illegal",
      message: `A job cannot go from ${JOB_STATE_LABELS[from]} to ${JOB_STATE_LABELS[to]}.`,
    };
  }
  if (!transition.roles.includes(actor)) {
    return {
      ok: false,
      reason: "role",
      message: `Your role cannot move a job from ${JOB_STATE_LABELS[from]} to ${JOB_STATE_LABELS[to]}.`,
    };
  }
  if (transition.guard === "settled" && context.billing === "unpaid" && !context.waived) {
    return {
      ok: false,
      reason: "guard",
      message:
        "The invoice is not paid. Take the payment, or ask the owner to record a waiver, before closing.",
    };
  }
  if (transition.guard === "pre-approved" && !context.warranty) {
    return {
      ok: false,
      reason: "guard",
      message: "Only a warranty comeback goes to repair without the customer's approval.",
    };
  }
  return { ok: true, transition };
}

/** The moves this actor may offer from a state (guards are checked again when the move is made). */
export function nextTransitions(from: JobState, actor: Actor): Transition[] {
  return TRANSITIONS.filter((t) => t.from === from && t.roles.includes(actor));
}

/** States where the device is still in the shop's hands and the job is open. */
export function isOpen(state: JobState): boolean {
  return state !== "closed";
}
