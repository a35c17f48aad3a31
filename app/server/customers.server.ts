import { and, eq, inArray, isNull, like, lt, or } from "drizzle-orm";
import { audit } from "./audit.server";
import { db } from "./db.server";
import {
  auditEvents,
  customers,
  invoices,
  jobEvents,
  jobPhotos,
  jobs,
  payments,
  quoteLines,
  quotes,
  shops,
  uploads,
} from "./schema.server";

// What the shop holds about a customer, for the owner's export and erasure, and the retention task that erases
// closed jobs' personal data after the shop's retention period. Jobs keep their numbers, states, dates and money
// (invoices and payments) so the shop's totals stay right; what names or describes the person goes.

export async function exportCustomer(shopId: string, customerId: string) {
  const customer = await db
    .select()
    .from(customers)
    .where(and(eq(customers.shopId, shopId), eq(customers.id, customerId)))
    .get();
  if (!customer) return undefined;
  const jobRows = await db
    .select()
    .from(jobs)
    .where(and(eq(jobs.shopId, shopId), eq(jobs.customerId, customerId)))
    .all();
  const jobIds = jobRows.map((j) => j.id);
  const [events, quoteRows, invoiceRows, photos] = jobIds.length
    ? await Promise.all([
        db
          .select()
          .from(jobEvents)
          .where(and(eq(jobEvents.shopId, shopId), inArray(jobEvents.jobId, jobIds)))
          .all(),
        db
          .select()
          .from(quotes)
          .where(and(eq(quotes.shopId, shopId), inArray(quotes.jobId, jobIds)))
          .all(),
        db
          .select()
          .from(invoices)
          .where(and(eq(invoices.shopId, shopId), inArray(invoices.jobId, jobIds)))
          .all(),
        db
          .select({
            id: jobPhotos.id,
            jobId: jobPhotos.jobId,
            contentType: uploads.contentType,
            bytes: uploads.bytes,
          })
          .from(jobPhotos)
          .innerJoin(uploads, eq(uploads.id, jobPhotos.uploadId))
          .where(and(eq(jobPhotos.shopId, shopId), inArray(jobPhotos.jobId, jobIds)))
          .all(),
      ])
    : [[], [], [], []];
  const quoteIds = quoteRows.map((q) => q.id);
  const invoiceIds = invoiceRows.map((i) => i.id);
  const [lines, paymentRows] = await Promise.all([
    quoteIds.length
      ? db
          .select()
          .from(quoteLines)
          .where(and(eq(quoteLines.shopId, shopId), inArray(quoteLines.quoteId, quoteIds)))
          .all()
      : [],
    invoiceIds.length
      ? db
          .select()
          .from(payments)
          .where(and(eq(payments.shopId, shopId), inArray(payments.invoiceId, invoiceIds)))
          .all()
      : [],
  ]);
  return {
    exportedAt: new Date().toISOString(),
    customer: {
      id: customer.id,
      name: customer.name,
      email: customer.email,
      phone: customer.phone,
      consentToContact: customer.consentToContact,
      createdAt: customer.createdAt,
      erasedAt: customer.erasedAt,
    },
    jobs: jobRows.map((j) => ({
      number: j.number,
      state: j.state,
      serial: j.serial,
      complaint: j.complaint,
      conditionNotes: j.conditionNotes,
      accessories: j.accessories,
      diagnosticFeeMinor: j.diagnosticFeeMinor,
      termsAcceptedAt: j.termsAcceptedAt,
      unclaimedDays: j.unclaimedDays,
      // The passcode itself is never exported; the customer knows it.
      devicePasscodeHeld: !!j.passcodeSealed,
      createdAt: j.createdAt,
      closedAt: j.closedAt,
      history: events
        .filter((e) => e.jobId === j.id)
        .map((e) => ({ from: e.fromState, to: e.toState, by: e.actorKind, at: e.at })),
      photos: photos
        .filter((p) => p.jobId === j.id)
        .map((p) => ({ id: p.id, contentType: p.contentType, bytes: p.bytes })),
      quotes: quoteRows
        .filter((q) => q.jobId === j.id)
        .map((q) => ({
          number: q.number,
          status: q.status,
          currency: q.currency,
          subtotalMinor: q.subtotalMinor,
          taxMinor: q.taxMinor,
          totalMinor: q.totalMinor,
          sentAt: q.sentAt,
          decidedAt: q.decidedAt,
          lines: lines
            .filter((l) => l.quoteId === q.id)
            .map((l) => ({
              kind: l.kind,
              description: l.description,
              quantity: l.quantity,
              unitMinor: l.unitMinor,
            })),
        })),
      invoices: invoiceRows
        .filter((i) => i.jobId === j.id)
        .map((i) => ({
          number: i.number,
          status: i.status,
          currency: i.currency,
          totalMinor: i.totalMinor,
          paidMinor: i.paidMinor,
          refundedMinor: i.refundedMinor,
          payments: paymentRows
            .filter((p) => p.invoiceId === i.id)
            .map((p) => ({
              kind: p.kind,
              method: p.method,
              status: p.status,
              amountMinor: p.amountMinor,
              at: p.createdAt,
            })),
        })),
    })),
  };
}

/** Removes what describes the person from a set of jobs; numbers, states, dates and money stay. */
async function anonymiseJobs(shopId: string, jobIds: string[], now: Date) {
  if (!jobIds.length) return;
  const photoRows = await db
    .select({ uploadId: jobPhotos.uploadId })
    .from(jobPhotos)
    .where(and(eq(jobPhotos.shopId, shopId), inArray(jobPhotos.jobId, jobIds)))
    .all();
  await db.batch([
    db
      .update(jobs)
      .set({
        serial: "",
        complaint: "",
        conditionNotes: "",
        accessories: "",
        passcodeSealed: null,
        details: null,
        anonymisedAt: now,
      })
      .where(and(eq(jobs.shopId, shopId), inArray(jobs.id, jobIds))),
    db
      .update(quotes)
      .set({ note: "", tokenHash: null })
      .where(and(eq(quotes.shopId, shopId), inArray(quotes.jobId, jobIds))),
    db.delete(jobPhotos).where(and(eq(jobPhotos.shopId, shopId), inArray(jobPhotos.jobId, jobIds))),
    db
      .update(jobEvents)
      .set({ note: null })
      .where(and(eq(jobEvents.shopId, shopId), inArray(jobEvents.jobId, jobIds))),
  ]);
  if (photoRows.length) {
    const { deleteStoredUpload } = await import("./job-photos.server");
    for (const p of photoRows) await deleteStoredUpload(shopId, p.uploadId);
  }
}

type Person = { id: string; name: string; email: string | null; phone: string | null };

const ERASED = "[erased]";
const escapeRegExp = (text: string) => text.replace(/[.*+?^${}()|[\]\\]/g, "\\$&");

/** The person's e-mail, phone and full name replaced wherever they appear whole in a text. */
function scrubText(text: string, person: Person): string {
  let out = text;
  for (const needle of [person.email, person.phone, person.name]) {
    // Very short values ("Al") would hit ordinary words; a name that short stays.
    if (!needle || needle.trim().length < 3 || needle === "Erased customer") continue;
    // Whole words only, so "Ann" does not eat the start of "Annual".
    const whole = new RegExp(`(?<![\\p{L}\\p{N}])${escapeRegExp(needle.trim())}(?![\\p{L}\\p{N}])`, "giu");
    out = out.replace(whole, ERASED);
  }
  return out;
}

function scrubValue(value: unknown, person: Person): unknown {
  if (typeof value === "string") return scrubText(value, person);
  if (Array.isArray(value)) return value.map((v) => scrubValue(v, person));
  if (value && typeof value === "object") {
    return Object.fromEntries(Object.entries(value).map(([k, v]) => [k, scrubValue(v, person)]));
  }
  return value;
}

/**
 * Personal data copied out of the customer row: audit entries (a quote's `to` address, a waiver's reason),
 * the waiver reason on the job and the desk's notes on payments. The entries stay, so the trail still says who
 * did what and when; only the copies of the person go. `wholeCustomer` (an erasure, not the retention of some
 * jobs) also reaches entries about the customer row and any entry quoting their address or phone number.
 * Captured e-mail (the outbox) exists only in development and the local demo and is not touched.
 */
async function scrubCopies(shopId: string, person: Person, jobIds: string[], wholeCustomer: boolean) {
  const [quoteRows, invoiceRows] = jobIds.length
    ? await Promise.all([
        db
          .select({ id: quotes.id })
          .from(quotes)
          .where(and(eq(quotes.shopId, shopId), inArray(quotes.jobId, jobIds)))
          .all(),
        db
          .select({ id: invoices.id })
          .from(invoices)
          .where(and(eq(invoices.shopId, shopId), inArray(invoices.jobId, jobIds)))
          .all(),
      ])
    : [[], []];
  const subjects = [
    ...(wholeCustomer ? [person.id] : []),
    ...jobIds,
    ...quoteRows.map((q) => q.id),
    ...invoiceRows.map((i) => i.id),
  ];
  // Entries about the customer's records, and on erasure any other entry quoting their address or phone.
  const quoting = wholeCustomer
    ? [person.email, person.phone]
        .filter((v): v is string => !!v && v.trim().length >= 3)
        .map((v) => like(auditEvents.data, `%${v.trim()}%`))
    : [];
  const entries = await db
    .select({ id: auditEvents.id, data: auditEvents.data })
    .from(auditEvents)
    .where(and(eq(auditEvents.shopId, shopId), or(inArray(auditEvents.subject, subjects), ...quoting)))
    .all();
  const jobRows = jobIds.length
    ? await db
        .select({ id: jobs.id, waiverReason: jobs.waiverReason })
        .from(jobs)
        .where(and(eq(jobs.shopId, shopId), inArray(jobs.id, jobIds)))
        .all()
    : [];
  const paymentRows = invoiceRows.length
    ? await db
        .select({ id: payments.id, note: payments.note })
        .from(payments)
        .where(
          and(
            eq(payments.shopId, shopId),
            inArray(
              payments.invoiceId,
              invoiceRows.map((i) => i.id),
            ),
          ),
        )
        .all()
    : [];
  const writes = [
    ...entries.flatMap((e) => {
      const data = e.data ? (scrubValue(e.data, person) as Record<string, unknown>) : e.data;
      return JSON.stringify(data) === JSON.stringify(e.data)
        ? []
        : [db.update(auditEvents).set({ data }).where(eq(auditEvents.id, e.id))];
    }),
    ...jobRows.flatMap((j) => {
      const reason = j.waiverReason ? scrubText(j.waiverReason, person) : j.waiverReason;
      return reason === j.waiverReason
        ? []
        : [db.update(jobs).set({ waiverReason: reason }).where(eq(jobs.id, j.id))];
    }),
    ...paymentRows.flatMap((p) => {
      const note = scrubText(p.note, person);
      return note === p.note ? [] : [db.update(payments).set({ note }).where(eq(payments.id, p.id))];
    }),
  ];
  if (writes.length) await db.batch(writes as unknown as Parameters<typeof db.batch>[0]);
}

async function eraseCustomerRow(shopId: string, customerId: string, now: Date) {
  await db
    .update(customers)
    .set({ name: "Erased customer", email: null, phone: null, consentToContact: false, erasedAt: now })
    .where(and(eq(customers.shopId, shopId), eq(customers.id, customerId)));
}

/** The owner's erasure: the customer row and every one of their jobs' personal fields. */
export async function eraseCustomer(shopId: string, customerId: string, actorId: string, now = new Date()) {
  const jobRows = await db
    .select({ id: jobs.id })
    .from(jobs)
    .where(and(eq(jobs.shopId, shopId), eq(jobs.customerId, customerId)))
    .all();
  const person = await db
    .select({ id: customers.id, name: customers.name, email: customers.email, phone: customers.phone })
    .from(customers)
    .where(and(eq(customers.shopId, shopId), eq(customers.id, customerId)))
    .get();
  await anonymiseJobs(
    shopId,
    jobRows.map((j) => j.id),
    now,
  );
  if (person)
    await scrubCopies(
      shopId,
      person,
      jobRows.map((j) => j.id),
      true,
    );
  await eraseCustomerRow(shopId, customerId, now);
  await audit({
    shopId,
    actorId,
    action: "customer.erased",
    subject: customerId,
    data: { jobs: jobRows.length },
  });
}

/**
 * The scheduled task: for every shop, closed jobs older than its retention period lose their personal data,
 * and a customer with no job left that still holds any is erased too. Returns what it did.
 */
export async function eraseExpiredPersonalData(now = new Date()) {
  const shopRows = await db.select({ id: shops.id, retentionDays: shops.retentionDays }).from(shops).all();
  let jobsErased = 0;
  let customersErased = 0;
  for (const shop of shopRows) {
    const cutoff = new Date(now.getTime() - shop.retentionDays * 86_400_000);
    const due = await db
      .select({ id: jobs.id, customerId: jobs.customerId })
      .from(jobs)
      .where(
        and(
          eq(jobs.shopId, shop.id),
          eq(jobs.state, "closed"),
          lt(jobs.closedAt, cutoff),
          isNull(jobs.anonymisedAt),
        ),
      )
      .all();
    if (!due.length) continue;
    await anonymiseJobs(
      shop.id,
      due.map((d) => d.id),
      now,
    );
    jobsErased += due.length;
    const customerIds = [...new Set(due.map((d) => d.customerId).filter((c): c is string => !!c))];
    for (const customerId of customerIds) {
      const person = await db
        .select({ id: customers.id, name: customers.name, email: customers.email, phone: customers.phone })
        .from(customers)
        .where(and(eq(customers.shopId, shop.id), eq(customers.id, customerId)))
        .get();
      if (person)
        await scrubCopies(
          shop.id,
          person,
          due.filter((d) => d.customerId === customerId).map((d) => d.id),
          false,
        );
      const stillHeld = await db
        .select({ id: jobs.id })
        .from(jobs)
        .where(and(eq(jobs.shopId, shop.id), eq(jobs.customerId, customerId), isNull(jobs.anonymisedAt)))
        .get();
      if (!stillHeld) {
        // Nothing of theirs is kept any more: whatever else quotes them goes as on an erasure.
        if (person) await scrubCopies(shop.id, person, [], true);
        await eraseCustomerRow(shop.id, customerId, now);
        customersErased++;
      }
    }
    await audit({
      shopId: shop.id,
      actorId: null,
      action: "retention.erased",
      data: { jobs: due.length, cutoff: cutoff.toISOString() },
    });
  }
  return { jobsErased, customersErased };
}
