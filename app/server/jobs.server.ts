import { and, asc, desc, eq, gt, inArray, ne, sql } from "drizzle-orm";
import {
  type Actor,
  type Billing,
  checkTransition,
  JOB_STATES,
  type JobState,
  nextTransitions,
  type Transition,
} from "~/lib/job-states";
import { audit } from "./audit.server";
import { db } from "./db.server";
import { newId } from "./ids.server";
import { sealPasscode } from "./passcode.server";
import { currentInvoice, type Quote, raiseInvoice } from "./quotes.server";
// Starts the daily retention task in a running server (see tasks.server.ts).
import "./tasks.server";
import {
  auditEvents,
  boards,
  customers,
  findings,
  invoices,
  jobEvents,
  jobs,
  mapVersions,
  members,
  quotes,
  runs,
  type shops,
  users,
} from "./schema.server";

export type Shop = typeof shops.$inferSelect;
export type Job = typeof jobs.$inferSelect;

/** The job if it belongs to the shop; otherwise undefined (callers answer 404). */
export function getJob(shopId: string, jobId: string) {
  return db
    .select()
    .from(jobs)
    .where(and(eq(jobs.shopId, shopId), eq(jobs.id, jobId)))
    .get();
}

// The next number inside the INSERT itself, so two desks taking in devices at once cannot draw the same one;
// the unique index (shop_id, number) is the backstop.
const nextJobNumber = (shopId: string) =>
  sql<number>`(select coalesce(max(${jobs.number}), 0) + 1 from ${jobs} where ${jobs.shopId} = ${shopId})`;

export type IntakeInput = {
  customer: { id?: string; name: string; email?: string; phone?: string; consentToContact: boolean };
  boardId: string | null;
  serial: string;
  conditionNotes: string;
  accessories: string;
  complaint: string;
  diagnosticFeeMinor: number;
  unclaimedDays: number;
  passcode?: string;
  warrantyOfJobId?: string | null;
  chargeable?: boolean;
};

export async function createJob(shopId: string, actorId: string, input: IntakeInput) {
  const jobId = newId();
  const customerId = input.customer.id ?? newId();
  const now = new Date();
  const statements = [];
  if (!input.customer.id) {
    statements.push(
      db.insert(customers).values({
        id: customerId,
        shopId,
        name: input.customer.name,
        email: input.customer.email || null,
        phone: input.customer.phone || null,
        consentToContact: input.customer.consentToContact,
      }),
    );
  }
  statements.push(
    db.insert(jobs).values({
      id: jobId,
      shopId,
      number: nextJobNumber(shopId),
      customerId,
      boardId: input.boardId,
      serial: input.serial,
      complaint: input.complaint,
      conditionNotes: input.conditionNotes,
      accessories: input.accessories,
      diagnosticFeeMinor: input.diagnosticFeeMinor,
      termsAcceptedAt: now,
      unclaimedDays: input.unclaimedDays,
      passcodeSealed: input.passcode ? sealPasscode(input.passcode, jobId) : null,
      warrantyOfJobId: input.warrantyOfJobId ?? null,
      chargeable: input.chargeable ?? true,
      stateChangedAt: now,
      createdBy: actorId,
    }),
    db.insert(jobEvents).values({
      shopId,
      jobId,
      fromState: null,
      toState: "received",
      actorKind: "member",
      actorId,
      note: input.warrantyOfJobId ? "Warranty comeback" : "Taken in",
    }),
  );
  await db.batch(statements as unknown as Parameters<typeof db.batch>[0]);
  const job = (await getJob(shopId, jobId))!;
  await audit({ shopId, actorId, action: "job.created", subject: jobId, data: { number: job.number } });
  return job;
}

/**
 * How closing sees the job's money: the latest invoice that is not void. With none, an approved quote is
 * still owed (its invoice was not raised), and so is a chargeable diagnostic fee; otherwise nothing is owed.
 */
export async function billingOf(job: Job): Promise<Billing> {
  const invoice = await db
    .select()
    .from(invoices)
    .where(and(eq(invoices.shopId, job.shopId), eq(invoices.jobId, job.id), ne(invoices.status, "void")))
    .orderBy(desc(invoices.createdAt))
    .get();
  if (!invoice) {
    if (await approvedQuoteWithoutInvoice(job)) return "unpaid";
    return !job.chargeable || job.diagnosticFeeMinor === 0 ? "nothing-owed" : "unpaid";
  }
  if (invoice.totalMinor === 0) return "nothing-owed";
  return invoice.status === "paid" ? "paid" : "unpaid";
}

/** The job's newest approved quote with something to pay, when no invoice (not void) stands for the job. */
export async function approvedQuoteWithoutInvoice(job: Job) {
  const invoiced = await db
    .select({ id: invoices.id })
    .from(invoices)
    .where(and(eq(invoices.shopId, job.shopId), eq(invoices.jobId, job.id), ne(invoices.status, "void")))
    .get();
  if (invoiced) return undefined;
  return db
    .select()
    .from(quotes)
    .where(
      and(
        eq(quotes.shopId, job.shopId),
        eq(quotes.jobId, job.id),
        eq(quotes.status, "approved"),
        gt(quotes.totalMinor, 0),
      ),
    )
    .orderBy(desc(quotes.number))
    .get();
}

/** The quote a customer's answer is about: the job's newest one not yet decided. */
export function undecidedQuote(job: Job) {
  return db
    .select()
    .from(quotes)
    .where(
      and(eq(quotes.shopId, job.shopId), eq(quotes.jobId, job.id), inArray(quotes.status, ["draft", "sent"])),
    )
    .orderBy(desc(quotes.number))
    .get();
}

/**
 * The desk records the customer's answer itself (by phone, at the counter). A chargeable job is approved only
 * against a quote, so a repair always leaves something to pay or an owner's waiver.
 */
export async function recordQuoteDecision(
  shop: Pick<Shop, "id" | "currency" | "taxRateBp">,
  job: Job,
  decision: "approved" | "declined",
  actor: { kind: "member"; id: string; role: Actor },
): Promise<TransitionResult> {
  const quote = await undecidedQuote(job);
  if (decision === "approved" && !quote && job.chargeable) {
    return {
      ok: false,
      status: 409,
      message: "Build the quote the customer approved first: approving it raises the invoice.",
    };
  }
  return decideQuote(shop, job, quote, decision, actor);
}

/**
 * A quote's answer, whoever gives it: the customer on the approval page or the desk for them. The job moves,
 * the quote is marked decided (only from the status it was read in, so two answers cannot both land) and
 * audited, and the money follows: an approval raises the invoice from the quote, a decline bills the
 * diagnostic fee unless the job already has an invoice.
 */
export async function decideQuote(
  shop: Pick<Shop, "id" | "currency" | "taxRateBp">,
  job: Job,
  quote: Quote | undefined,
  decision: "approved" | "declined",
  actor: { kind: "member"; id: string; role: Actor } | { kind: "customer" },
): Promise<TransitionResult> {
  const by = actor.kind === "customer" ? "by the customer" : "(recorded by the shop)";
  const moved = await transitionJob(
    job,
    decision === "approved" ? "repairing" : "declined",
    actor,
    quote ? `Quote ${quote.number} ${decision} ${by}` : `Customer ${decision} ${by}`,
  );
  if (!moved.ok) return moved;
  if (quote) {
    await db.batch([
      db
        .update(quotes)
        .set({ status: decision, decidedAt: new Date() })
        .where(and(eq(quotes.shopId, job.shopId), eq(quotes.id, quote.id), eq(quotes.status, quote.status))),
      db.insert(auditEvents).values({
        shopId: job.shopId,
        actorId: actor.kind === "member" ? actor.id : null,
        action: `quote.${decision}`,
        subject: quote.id,
        data: { by: actor.kind },
      }),
    ]);
  }
  if (decision === "approved" && quote) await raiseInvoice(shop, job.id, { quote });
  else if (
    decision === "declined" &&
    job.chargeable &&
    job.diagnosticFeeMinor > 0 &&
    !(await currentInvoice(job.shopId, job.id))
  )
    await raiseInvoice(shop, job.id, { diagnosticFeeMinor: job.diagnosticFeeMinor });
  return moved;
}

export type TransitionResult = { ok: true; job: Job } | { ok: false; status: number; message: string };

/**
 * Moves a job along the table in app/lib/job-states.ts. The UPDATE repeats the expected current state, so
 * two people pressing buttons at once cannot both move it; each move is a job event and an audit entry.
 */
export async function transitionJob(
  job: Job,
  to: JobState,
  actor: { kind: "member"; id: string; role: Actor } | { kind: "customer" } | { kind: "system"; role: Actor },
  note?: string,
): Promise<TransitionResult> {
  const role: Actor = actor.kind === "customer" ? "customer" : actor.role;
  const check = checkTransition(job.state, to, role, {
    billing: await billingOf(job),
    waived: !!job.waivedAt,
    warranty: !job.chargeable,
  });
  if (!check.ok) return { ok: false, status: check.reason === "role" ? 403 : 409, message: check.message };
  const now = new Date();
  const updated = await db
    .update(jobs)
    .set({
      state: to,
      stateChangedAt: now,
      ...(to === "closed" ? { closedAt: now, passcodeSealed: null } : {}),
    })
    .where(and(eq(jobs.shopId, job.shopId), eq(jobs.id, job.id), eq(jobs.state, job.state)))
    .returning()
    .get();
  if (!updated)
    return { ok: false, status: 409, message: "Someone else moved this job just now. Reload to see it." };
  const actorId = actor.kind === "member" ? actor.id : null;
  await db.batch([
    db.insert(jobEvents).values({
      shopId: job.shopId,
      jobId: job.id,
      fromState: job.state,
      toState: to,
      actorKind: actor.kind,
      actorId,
      note: note ?? null,
    }),
    db.insert(auditEvents).values({
      shopId: job.shopId,
      actorId,
      action: "job.state-changed",
      subject: job.id,
      data: {
        from: job.state,
        to,
        by: actor.kind,
        ...(to === "closed" ? { passcodeErased: !!job.passcodeSealed } : {}),
      },
    }),
  ]);
  return { ok: true, job: updated };
}

export function allowedMoves(job: Job, role: Actor): Transition[] {
  return nextTransitions(job.state, role).filter((t) => t.guard !== "pre-approved" || !job.chargeable);
}

export type JobListRow = {
  id: string;
  number: number;
  state: JobState;
  customerName: string | null;
  board: string | null;
  serial: string;
  complaint: string;
  assignedName: string | null;
  createdAt: number;
  stateChangedAt: number | null;
  /** When a closed job closed (the closed list's order); null for a job not closed. */
  closedAt: number | null;
  warranty: boolean;
};

/** Closed jobs pile up for years: the list shows this many of the most recent, newest first. */
export const CLOSED_JOBS_SHOWN = 200;

export type JobStation = { count: number; numbers: number[]; oldestAt: number | null };

/** When a closed job closed (older rows may lack closed_at: then when its state last changed, or it opened). */
const closedOrder = sql`coalesce(${jobs.closedAt}, ${jobs.stateChangedAt}, ${jobs.createdAt})`;

/**
 * The jobs page: the jobs of one state (or every job not closed), and per state its count and the three jobs
 * that have waited longest in it (for "closed", the three closed most recently). Filtered in SQL, so the
 * years of closed jobs are never all read to show the handful on the bench.
 */
export async function listJobs(
  shopId: string,
  state: JobState | "" = "",
): Promise<{ rows: JobListRow[]; stations: Record<JobState, JobStation> }> {
  const [rows, counts, waiting, lastClosed] = await Promise.all([
    db
      .select({
        id: jobs.id,
        number: jobs.number,
        state: jobs.state,
        customerName: customers.name,
        boardMaker: boards.maker,
        boardModel: boards.model,
        boardNumber: boards.boardNumber,
        serial: jobs.serial,
        complaint: jobs.complaint,
        assignedName: users.name,
        createdAt: jobs.createdAt,
        stateChangedAt: jobs.stateChangedAt,
        closedAt: sql<number | null>`CASE WHEN ${jobs.state} = 'closed' THEN ${closedOrder} END`,
        warrantyOf: jobs.warrantyOfJobId,
      })
      .from(jobs)
      .leftJoin(customers, and(eq(customers.id, jobs.customerId), eq(customers.shopId, shopId)))
      .leftJoin(boards, and(eq(boards.id, jobs.boardId), eq(boards.shopId, shopId)))
      .leftJoin(users, eq(users.id, jobs.assignedTo))
      .where(and(eq(jobs.shopId, shopId), state ? eq(jobs.state, state) : ne(jobs.state, "closed")))
      // Closed jobs: the last closed first (a job that waited weeks for parts closes long after its number).
      .orderBy(...(state === "closed" ? [desc(closedOrder), desc(jobs.number)] : [desc(jobs.number)]))
      .limit(state === "closed" ? CLOSED_JOBS_SHOWN : -1)
      .all(),
    db
      .select({ state: jobs.state, n: sql<number>`count(*)` })
      .from(jobs)
      .where(eq(jobs.shopId, shopId))
      .groupBy(jobs.state)
      .all(),
    db
      .select({
        state: jobs.state,
        number: jobs.number,
        at: sql<number>`coalesce(${jobs.stateChangedAt}, ${jobs.createdAt})`,
      })
      .from(jobs)
      .where(and(eq(jobs.shopId, shopId), ne(jobs.state, "closed")))
      // Longest waiting first; between equal waits the later job first, as the page always showed them.
      .orderBy(sql`3`, desc(jobs.number))
      .all(),
    db
      .select({ number: jobs.number })
      .from(jobs)
      .where(and(eq(jobs.shopId, shopId), eq(jobs.state, "closed")))
      .orderBy(desc(closedOrder), desc(jobs.number))
      .limit(3)
      .all(),
  ]);
  const stations = Object.fromEntries(
    JOB_STATES.map((s) => [s, { count: 0, numbers: [], oldestAt: null }]),
  ) as unknown as Record<JobState, JobStation>;
  for (const c of counts) stations[c.state].count = Number(c.n);
  for (const w of waiting) {
    const st = stations[w.state];
    if (st.oldestAt === null) st.oldestAt = Number(w.at);
    if (st.numbers.length < 3) st.numbers.push(w.number);
  }
  stations.closed.numbers = lastClosed.map((j) => j.number);
  return {
    rows: rows.map((r) => ({
      id: r.id,
      number: r.number,
      state: r.state,
      customerName: r.customerName,
      board: r.boardMaker ? `${r.boardMaker} ${r.boardModel} (${r.boardNumber})` : null,
      serial: r.serial,
      complaint: r.complaint,
      assignedName: r.assignedName,
      createdAt: r.createdAt.getTime(),
      stateChangedAt: r.stateChangedAt?.getTime() ?? null,
      closedAt: r.closedAt == null ? null : Number(r.closedAt),
      warranty: !!r.warrantyOf,
    })),
    stations,
  };
}

export function listEvents(shopId: string, jobId: string) {
  return db
    .select({
      id: jobEvents.id,
      fromState: jobEvents.fromState,
      toState: jobEvents.toState,
      actorKind: jobEvents.actorKind,
      actorName: users.name,
      note: jobEvents.note,
      at: jobEvents.at,
    })
    .from(jobEvents)
    .leftJoin(users, eq(users.id, jobEvents.actorId))
    .where(and(eq(jobEvents.shopId, shopId), eq(jobEvents.jobId, jobId)))
    .orderBy(asc(jobEvents.id))
    .all();
}

/** The job's runs with their findings, the parts they used and the bench time they took. */
export async function runsOfJob(shopId: string, jobId: string) {
  const jobRuns = await db
    .select({
      id: runs.id,
      status: runs.status,
      outcome: runs.outcome,
      startedAt: runs.startedAt,
      isolatedAt: runs.isolatedAt,
      closedAt: runs.closedAt,
      techName: users.name,
    })
    .from(runs)
    .leftJoin(users, eq(users.id, runs.techId))
    .where(and(eq(runs.shopId, shopId), eq(runs.jobId, jobId)))
    .orderBy(asc(runs.startedAt))
    .all();
  const runFindings = jobRuns.length
    ? await db
        .select()
        .from(findings)
        .where(
          and(
            eq(findings.shopId, shopId),
            inArray(
              findings.runId,
              jobRuns.map((r) => r.id),
            ),
          ),
        )
        .orderBy(asc(findings.createdAt))
        .all()
    : [];
  const now = Date.now();
  // Bench time counts a run until it closed, or until its fault was isolated; an open run counts up to now.
  const minutes = jobRuns.reduce((sum, r) => {
    const end = (r.closedAt ?? r.isolatedAt)?.getTime() ?? now;
    return sum + Math.max(0, end - r.startedAt.getTime()) / 60_000;
  }, 0);
  const parts = runFindings.flatMap((f) => f.partsUsed ?? []);
  const described = await describeFindings(shopId, runFindings);
  return { runs: jobRuns, findings: described, parts, minutes: Math.round(minutes) };
}

type FindingRow = typeof findings.$inferSelect;
type DocNode = {
  id?: string;
  name?: string;
  refdes?: string;
  fixes?: Array<{ id?: string; label?: string }>;
};

/**
 * Names a finding's node and fix the way the map the run pinned names them ("R362 (3.3 V standby enable
 * resistor)", "Replace R362"), read from that published version's document.
 */
export async function describeFindings(shopId: string, rows: FindingRow[]) {
  const docs = new Map<string, DocNode[]>();
  for (const versionId of new Set(rows.map((f) => f.mapVersionId))) {
    const version = await db
      .select({ document: mapVersions.document })
      .from(mapVersions)
      .where(and(eq(mapVersions.shopId, shopId), eq(mapVersions.id, versionId)))
      .get();
    const nodes = (version?.document as { nodes?: unknown } | undefined)?.nodes;
    docs.set(versionId, Array.isArray(nodes) ? (nodes as DocNode[]) : []);
  }
  return rows.map((f) => {
    const node = docs.get(f.mapVersionId)?.find((n) => n.id === f.nodeId);
    const nodeLabel = node
      ? node.refdes
        ? `${node.refdes} (${node.name ?? ""})`
        : (node.name ?? f.nodeId)
      : f.nodeId;
    const fixLabel = f.fixKind ? (node?.fixes?.find((x) => x.id === f.fixKind)?.label ?? f.fixKind) : null;
    return { ...f, nodeLabel, fixLabel };
  });
}

export function listTechs(shopId: string) {
  return db
    .select({ userId: users.id, name: users.name, role: members.role })
    .from(members)
    .innerJoin(users, eq(users.id, members.userId))
    .where(and(eq(members.shopId, shopId), inArray(members.role, ["tech", "lead", "owner"])))
    .orderBy(asc(users.name))
    .all();
}

export function getCustomer(shopId: string, customerId: string | null) {
  if (!customerId) return undefined;
  return db
    .select()
    .from(customers)
    .where(and(eq(customers.shopId, shopId), eq(customers.id, customerId)))
    .get();
}

/** A warranty comeback is free when the original job closed no more than the shop's warranty days ago. */
export function warrantyCovers(original: Job, shop: Pick<Shop, "warrantyDays">, now = new Date()): boolean {
  if (original.state !== "closed" || !original.closedAt) return false;
  const days = (now.getTime() - original.closedAt.getTime()) / 86_400_000;
  return days <= shop.warrantyDays;
}
