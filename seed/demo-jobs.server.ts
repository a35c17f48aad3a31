import { eq } from "drizzle-orm";
import type { Db } from "../app/server/db.server";
import {
  customers,
  invoices,
  jobEvents,
  jobs,
  payments,
  quoteLines,
  quotes,
} from "../app/server/schema.server";

// Invented customers and jobs for the demo shop, one or two in each state, so the job board has something to
// show. Fixed ids and numbers make it idempotent. Call after seedDemo (it needs the shop, members and boards).
const SHOP = "demo-harbor";
const DAY = 86_400_000;

const CUSTOMERS = [
  {
    id: "demo-cust-1",
    name: "Alma Pereira",
    email: "alma.pereira@customer.example",
    phone: "555-0101",
    consentToContact: true,
  },
  {
    id: "demo-cust-2",
    name: "Bram Kowal",
    email: "bram.kowal@customer.example",
    phone: "555-0102",
    consentToContact: true,
  },
  { id: "demo-cust-3", name: "Cleo Haddad", email: null, phone: "555-0103", consentToContact: false },
  {
    id: "demo-cust-4",
    name: "Dario Lund",
    email: "dario.lund@customer.example",
    phone: null,
    consentToContact: true,
  },
];

type DemoJob = {
  n: number;
  customer: string;
  board: "demo-board-om5150" | "demo-board-om5130";
  state: (typeof jobs.$inferInsert)["state"];
  daysAgo: number;
  complaint: string;
  serial: string;
  path: Array<NonNullable<(typeof jobs.$inferInsert)["state"]>>;
};

const JOBS: DemoJob[] = [
  {
    n: 1,
    customer: "demo-cust-1",
    board: "demo-board-om5150",
    state: "closed",
    daysAgo: 40,
    complaint: "No power after a drop",
    serial: "OM5150-DEMO-001",
    path: ["received", "diagnosing", "awaiting-approval", "repairing", "testing", "ready", "closed"],
  },
  {
    n: 2,
    customer: "demo-cust-2",
    board: "demo-board-om5130",
    state: "ready",
    daysAgo: 6,
    complaint: "Charges but will not turn on",
    serial: "OM5130-DEMO-002",
    path: ["received", "diagnosing", "awaiting-approval", "repairing", "testing", "ready"],
  },
  {
    n: 3,
    customer: "demo-cust-3",
    board: "demo-board-om5150",
    state: "repairing",
    daysAgo: 4,
    complaint: "Liquid spill on the keyboard, dead",
    serial: "OM5150-DEMO-003",
    path: ["received", "diagnosing", "awaiting-approval", "repairing"],
  },
  {
    n: 4,
    customer: "demo-cust-4",
    board: "demo-board-om5150",
    state: "awaiting-approval",
    daysAgo: 2,
    complaint: "Fan spins, no display",
    serial: "OM5150-DEMO-004",
    path: ["received", "diagnosing", "awaiting-approval"],
  },
  {
    n: 5,
    customer: "demo-cust-1",
    board: "demo-board-om5130",
    state: "diagnosing",
    daysAgo: 1,
    complaint: "Random shutdowns on battery",
    serial: "OM5130-DEMO-005",
    path: ["received", "diagnosing"],
  },
  {
    n: 6,
    customer: "demo-cust-2",
    board: "demo-board-om5150",
    state: "received",
    daysAgo: 0,
    complaint: "Does nothing with the charger attached",
    serial: "OM5150-DEMO-006",
    path: ["received"],
  },
  {
    n: 7,
    customer: "demo-cust-4",
    board: "demo-board-om5130",
    state: "declined",
    daysAgo: 9,
    complaint: "Power button has no effect",
    serial: "OM5130-DEMO-007",
    path: ["received", "diagnosing", "awaiting-approval", "declined"],
  },
];

const ACTOR: Record<string, string> = {
  received: "demo-user-desk",
  diagnosing: "demo-user-tech",
  "awaiting-approval": "demo-user-desk",
  repairing: "demo-user-tech",
  testing: "demo-user-tech",
  ready: "demo-user-tech",
  closed: "demo-user-desk",
  declined: "demo-user-desk",
};

export async function seedDemoJobs(db: Db) {
  const existing = await db.select({ id: jobs.id }).from(jobs).where(eq(jobs.id, "demo-job-1")).get();
  if (existing) return { created: false };
  const now = Date.now();
  const statements: unknown[] = CUSTOMERS.map((c) =>
    db
      .insert(customers)
      .values({ ...c, shopId: SHOP })
      .onConflictDoNothing(),
  );
  for (const j of JOBS) {
    const start = now - j.daysAgo * DAY;
    const id = `demo-job-${j.n}`;
    const step = (i: number) => new Date(start + i * 3_600_000 * 5);
    statements.push(
      db
        .insert(jobs)
        .values({
          id,
          shopId: SHOP,
          number: j.n,
          customerId: j.customer,
          boardId: j.board,
          serial: j.serial,
          complaint: j.complaint,
          state: j.state,
          conditionNotes: "Light wear",
          accessories: "charger",
          diagnosticFeeMinor: 4500,
          termsAcceptedAt: step(0),
          unclaimedDays: 60,
          assignedTo: j.path.length > 1 ? "demo-user-tech" : null,
          stateChangedAt: step(j.path.length - 1),
          closedAt: j.state === "closed" ? step(j.path.length - 1) : null,
          createdBy: "demo-user-desk",
          createdAt: step(0),
        })
        .onConflictDoNothing(),
      ...j.path.map((to, i) =>
        db.insert(jobEvents).values({
          shopId: SHOP,
          jobId: id,
          fromState: i === 0 ? null : j.path[i - 1],
          toState: to,
          actorKind: to === "repairing" || to === "declined" ? "customer" : "member",
          actorId: to === "repairing" || to === "declined" ? null : ACTOR[to],
          at: step(i),
        }),
      ),
    );
    if (j.path.includes("awaiting-approval")) {
      // Invented prices: bench labour 85.00, a regulator 4.80, the fee 45.00; 8.25 % tax on 134.80 = 11.121 → 11.12.
      const quoteId = `demo-quote-${j.n}`;
      const decided = j.state !== "awaiting-approval";
      const approved = decided && j.state !== "declined";
      statements.push(
        db
          .insert(quotes)
          .values({
            id: quoteId,
            shopId: SHOP,
            jobId: id,
            number: j.n,
            status: decided ? (approved ? "approved" : "declined") : "sent",
            currency: "USD",
            taxRateBp: 825,
            subtotalMinor: 13480,
            taxMinor: 1112,
            totalMinor: 14592,
            sentAt: step(2),
            expiresAt: new Date(step(2).getTime() + 14 * DAY),
            decidedAt: decided ? step(3) : null,
            createdBy: "demo-user-desk",
          })
          .onConflictDoNothing(),
        ...[
          { kind: "part" as const, description: "Buck regulator", quantity: 1, unitMinor: 480 },
          { kind: "labour" as const, description: "Bench labour", quantity: 1, unitMinor: 8500 },
          {
            kind: "fee" as const,
            description: "Diagnostic fee (agreed at intake)",
            quantity: 1,
            unitMinor: 4500,
          },
        ].map((l, i) =>
          db
            .insert(quoteLines)
            .values({
              id: `${quoteId}-l${i}`,
              shopId: SHOP,
              quoteId,
              position: i,
              ...l,
              totalMinor: l.quantity * l.unitMinor,
            })
            .onConflictDoNothing(),
        ),
      );
      if (approved || j.state === "declined") {
        const invoiceId = `demo-invoice-${j.n}`;
        const total = approved ? 14592 : 4871; // declined: the 45.00 fee + 3.71 tax (371.25 → 371)
        const paid = j.state === "closed" ? total : 0;
        statements.push(
          db
            .insert(invoices)
            .values({
              id: invoiceId,
              shopId: SHOP,
              jobId: id,
              quoteId: approved ? quoteId : null,
              number: j.n,
              status: paid ? "paid" : "open",
              currency: "USD",
              subtotalMinor: approved ? 13480 : 4500,
              taxMinor: approved ? 1112 : 371,
              totalMinor: total,
              paidMinor: paid,
              paidAt: paid ? step(6) : null,
            })
            .onConflictDoNothing(),
        );
        if (paid) {
          statements.push(
            db
              .insert(payments)
              .values({
                id: `demo-payment-${j.n}`,
                shopId: SHOP,
                invoiceId,
                kind: "payment",
                method: "card-terminal",
                status: "succeeded",
                amountMinor: paid,
                currency: "USD",
                recordedBy: "demo-user-desk",
                settledAt: step(6),
              })
              .onConflictDoNothing(),
          );
        }
      }
    }
  }
  await db.batch(statements as unknown as Parameters<typeof db.batch>[0]);
  return { created: true };
}
