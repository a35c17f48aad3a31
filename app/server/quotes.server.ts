import { sha256 } from "@oslojs/crypto/sha2";
import { encodeHexLowerCase } from "@oslojs/encoding";
import { and, asc, desc, eq, inArray, ne, sql } from "drizzle-orm";
import { type Line, totalsOf } from "~/lib/money";
import { audit } from "./audit.server";
import { db } from "./db.server";
import { newId } from "./ids.server";
import { invoices, jobs, payments, quoteLines, quotes, type shops } from "./schema.server";

export type Quote = typeof quotes.$inferSelect;
export type Invoice = typeof invoices.$inferSelect;
export type QuoteLineInput = Line & { kind: "part" | "labour" | "fee"; description: string };

/** How long an e-mailed approval link works. */
export const QUOTE_LINK_DAYS = 14;

const hashToken = (token: string) => encodeHexLowerCase(sha256(new TextEncoder().encode(token)));

// Numbers are drawn inside the INSERT (see jobs.server.ts); quotes and invoices each count per shop.
const nextNumber = (table: typeof quotes | typeof invoices, shopId: string) =>
  sql<number>`(select coalesce(max(${table.number}), 0) + 1 from ${table} where ${table.shopId} = ${shopId})`;

export async function createQuote(
  shop: Pick<typeof shops.$inferSelect, "id" | "currency" | "taxRateBp">,
  jobId: string,
  actorId: string,
  input: { lines: QuoteLineInput[]; depositMinor: number; note: string; findingId: string | null },
) {
  const totals = totalsOf(input.lines, shop.taxRateBp);
  const id = newId();
  await db.batch([
    db.insert(quotes).values({
      id,
      shopId: shop.id,
      jobId,
      number: nextNumber(quotes, shop.id),
      currency: shop.currency,
      taxRateBp: shop.taxRateBp,
      ...totals,
      depositMinor: Math.min(input.depositMinor, totals.totalMinor),
      note: input.note,
      findingId: input.findingId,
      createdBy: actorId,
    }),
    ...input.lines.map((l, i) =>
      db.insert(quoteLines).values({
        id: newId(),
        shopId: shop.id,
        quoteId: id,
        position: i,
        kind: l.kind,
        description: l.description,
        quantity: l.quantity,
        unitMinor: l.unitMinor,
        totalMinor: l.quantity * l.unitMinor,
      }),
    ),
  ]);
  await audit({ shopId: shop.id, actorId, action: "quote.created", subject: id, data: { jobId, ...totals } });
  return (await getQuote(shop.id, id))!;
}

export function getQuote(shopId: string, quoteId: string) {
  return db
    .select()
    .from(quotes)
    .where(and(eq(quotes.shopId, shopId), eq(quotes.id, quoteId)))
    .get();
}

export function linesOf(shopId: string, quoteId: string) {
  return db
    .select()
    .from(quoteLines)
    .where(and(eq(quoteLines.shopId, shopId), eq(quoteLines.quoteId, quoteId)))
    .orderBy(asc(quoteLines.position))
    .all();
}

export async function quotesOfJob(shopId: string, jobId: string) {
  const list = await db
    .select()
    .from(quotes)
    .where(and(eq(quotes.shopId, shopId), eq(quotes.jobId, jobId)))
    .orderBy(desc(quotes.number))
    .all();
  const lines = list.length
    ? await db
        .select()
        .from(quoteLines)
        .where(
          and(
            eq(quoteLines.shopId, shopId),
            inArray(
              quoteLines.quoteId,
              list.map((q) => q.id),
            ),
          ),
        )
        .orderBy(asc(quoteLines.position))
        .all()
    : [];
  return list.map((q) => ({ ...q, lines: lines.filter((l) => l.quoteId === q.id) }));
}

/** Issues an unguessable approval link (160 random bits, only its hash kept) valid for QUOTE_LINK_DAYS. */
export async function issueQuoteLink(quote: Quote, now = new Date()) {
  const token = newId(20);
  const expiresAt = new Date(now.getTime() + QUOTE_LINK_DAYS * 86_400_000);
  await db
    .update(quotes)
    .set({ tokenHash: hashToken(token), expiresAt, sentAt: now, status: "sent" })
    .where(and(eq(quotes.shopId, quote.shopId), eq(quotes.id, quote.id)));
  return { token, expiresAt };
}

export type PublicQuote =
  | { ok: true; quote: Quote }
  | { ok: false; status: 404 | 410; message: string; quote?: Quote };

export async function findQuoteByToken(token: string, now = new Date()): Promise<PublicQuote> {
  if (!/^[a-z2-7]{20,64}$/.test(token)) return { ok: false, status: 404, message: "This link is not valid." };
  const quote = await db
    .select()
    .from(quotes)
    .where(eq(quotes.tokenHash, hashToken(token)))
    .get();
  if (!quote) return { ok: false, status: 404, message: "This link is not valid." };
  if (quote.status === "sent" && quote.expiresAt && quote.expiresAt < now) {
    return {
      ok: false,
      status: 410,
      quote,
      message: "This quote's link has expired. Please contact the shop for a new one.",
    };
  }
  return { ok: true, quote };
}

/** The job's current invoice (the newest not void). */
export function currentInvoice(shopId: string, jobId: string) {
  return db
    .select()
    .from(invoices)
    .where(and(eq(invoices.shopId, shopId), eq(invoices.jobId, jobId), ne(invoices.status, "void")))
    .orderBy(desc(invoices.createdAt))
    .get();
}

/**
 * Raises an invoice from an approved quote, or for the diagnostic fee alone when the quote is declined.
 * Any earlier open invoice of the job is voided so only one is due at a time.
 */
export async function raiseInvoice(
  shop: Pick<typeof shops.$inferSelect, "id" | "currency" | "taxRateBp">,
  jobId: string,
  from: { quote: Quote } | { diagnosticFeeMinor: number },
) {
  const totals =
    "quote" in from
      ? {
          subtotalMinor: from.quote.subtotalMinor,
          taxMinor: from.quote.taxMinor,
          totalMinor: from.quote.totalMinor,
        }
      : totalsOf([{ quantity: 1, unitMinor: from.diagnosticFeeMinor }], shop.taxRateBp);
  const id = newId();
  const previous = await currentInvoice(shop.id, jobId);
  // Money already taken (e.g. a deposit) moves to the new invoice with its payments.
  await db.batch([
    db.insert(invoices).values({
      id,
      shopId: shop.id,
      jobId,
      quoteId: "quote" in from ? from.quote.id : null,
      number: nextNumber(invoices, shop.id),
      currency: "quote" in from ? from.quote.currency : shop.currency,
      ...totals,
    }),
    ...(previous
      ? [
          db
            .update(payments)
            .set({ invoiceId: id })
            .where(and(eq(payments.shopId, shop.id), eq(payments.invoiceId, previous.id))),
          db
            .update(invoices)
            .set({ status: "void" })
            .where(and(eq(invoices.shopId, shop.id), eq(invoices.id, previous.id))),
        ]
      : []),
  ]);
  return settleInvoice(shop.id, id);
}

/**
 * Recomputes what was paid and refunded from the payment rows. An invoice is paid once the money taken reaches
 * its total; later refunds are shown beside it and do not reopen it.
 */
export async function settleInvoice(shopId: string, invoiceId: string): Promise<Invoice> {
  const rows = await db
    .select()
    .from(payments)
    .where(
      and(eq(payments.shopId, shopId), eq(payments.invoiceId, invoiceId), eq(payments.status, "succeeded")),
    )
    .all();
  const paidMinor = rows.filter((p) => p.kind !== "refund").reduce((s, p) => s + p.amountMinor, 0);
  const refundedMinor = rows.filter((p) => p.kind === "refund").reduce((s, p) => s + p.amountMinor, 0);
  const invoice = (await db
    .select()
    .from(invoices)
    .where(and(eq(invoices.shopId, shopId), eq(invoices.id, invoiceId)))
    .get())!;
  const nowPaid = invoice.status === "paid" || (invoice.status === "open" && paidMinor >= invoice.totalMinor);
  const updated = await db
    .update(invoices)
    .set({
      paidMinor,
      refundedMinor,
      ...(nowPaid && invoice.status === "open" ? { status: "paid" as const, paidAt: new Date() } : {}),
    })
    .where(and(eq(invoices.shopId, shopId), eq(invoices.id, invoiceId)))
    .returning()
    .get();
  return updated!;
}

export function paymentsOfInvoice(shopId: string, invoiceId: string) {
  return db
    .select()
    .from(payments)
    .where(and(eq(payments.shopId, shopId), eq(payments.invoiceId, invoiceId)))
    .orderBy(asc(payments.createdAt))
    .all();
}

export const balanceOf = (invoice: Invoice) => Math.max(0, invoice.totalMinor - invoice.paidMinor);

export function jobOfQuote(quote: Quote) {
  return db
    .select()
    .from(jobs)
    .where(and(eq(jobs.shopId, quote.shopId), eq(jobs.id, quote.jobId)))
    .get();
}
