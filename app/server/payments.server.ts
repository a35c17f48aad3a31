import { and, eq, sql } from "drizzle-orm";
import Stripe from "stripe";
import { z } from "zod";
import { audit } from "./audit.server";
import { sendReceiptEmail } from "./customer-email.server";
import { db } from "./db.server";
import { newId } from "./ids.server";
import { type PaymentsFake, startPaymentsFake } from "./payments-fake.server";
import type { Invoice } from "./quotes.server";
import { boards, customers, invoices, jobs, payments, shops, webhookEvents } from "./schema.server";

// The hosted payment provider behind one module, through its official SDK. With STRIPE_SECRET_KEY set it talks
// to the provider (or to STRIPE_API_HOST/PORT); without one, outside production or in the demo, it starts the
// local fake (payments-fake.server.ts) on first use so the whole path runs on one machine.

const PaymentsEnvSchema = z.object({
  STRIPE_SECRET_KEY: z.string().min(1).optional(),
  STRIPE_WEBHOOK_SECRET: z.string().min(1).optional(),
  STRIPE_API_HOST: z.string().min(1).optional(),
  STRIPE_API_PORT: z.coerce.number().int().min(0).max(65535).optional(),
  STRIPE_API_PROTOCOL: z.enum(["http", "https"]).optional(),
  PAYMENTS_FAKE: z.enum(["0", "1"]).optional(),
  STRIPE_WEBHOOK_URL: z.string().url().optional(),
  PORT: z.coerce.number().int().optional(),
  APP_URL: z.string().url().optional(),
  NODE_ENV: z.string().optional(),
  SEED_DEMO: z.string().optional(),
});

const FAKE_KEY = "sk_test_railwise_local_fake";
const FAKE_WEBHOOK_SECRET = "whsec_railwise_local_fake";

function readPaymentsEnv() {
  const parsed = PaymentsEnvSchema.safeParse(process.env);
  if (!parsed.success) {
    const lines = parsed.error.issues.map((i) => `  ${i.path.join(".")}: ${i.message}`);
    throw new Error(`Payments are not configured correctly:\n${lines.join("\n")}`);
  }
  return parsed.data;
}

export type PaymentsMode = "provider" | "fake" | "off";

export function paymentsMode(e = readPaymentsEnv()): PaymentsMode {
  if (e.PAYMENTS_FAKE === "1") return "fake";
  if (e.STRIPE_SECRET_KEY) return "provider";
  if (e.PAYMENTS_FAKE === "0") return "off";
  // A production start with no key has no online payments rather than a fake that "takes" money.
  return e.NODE_ENV !== "production" || e.SEED_DEMO === "1" ? "fake" : "off";
}

type Ready = { stripe: Stripe; webhookSecret: string; fake?: PaymentsFake };
let ready: Promise<Ready> | undefined;

async function init(): Promise<Ready> {
  const e = readPaymentsEnv();
  const mode = paymentsMode(e);
  if (mode === "off") throw new PaymentsOffError();
  if (mode === "provider") {
    const local = e.STRIPE_API_HOST
      ? { host: e.STRIPE_API_HOST, port: e.STRIPE_API_PORT, protocol: e.STRIPE_API_PROTOCOL ?? "https" }
      : {};
    if (!e.STRIPE_WEBHOOK_SECRET)
      throw new Error("STRIPE_WEBHOOK_SECRET is required with STRIPE_SECRET_KEY.");
    return {
      stripe: new Stripe(e.STRIPE_SECRET_KEY!, { ...local, maxNetworkRetries: 2, telemetry: false }),
      webhookSecret: e.STRIPE_WEBHOOK_SECRET,
    };
  }
  const appPort = e.PORT ?? 3000;
  // In tests an ephemeral port; otherwise STRIPE_API_PORT, or the app's port + 1000 so parallel servers differ.
  const port = e.STRIPE_API_PORT ?? (e.NODE_ENV === "test" ? 0 : appPort + 1000);
  const webhookSecret = e.STRIPE_WEBHOOK_SECRET ?? FAKE_WEBHOOK_SECRET;
  const webhookUrl =
    e.STRIPE_WEBHOOK_URL ?? new URL("/payments/webhook", e.APP_URL ?? `http://127.0.0.1:${appPort}`).href;
  const fake = await startPaymentsFake({
    port,
    apiKey: FAKE_KEY,
    webhookSecret,
    webhookUrl: () => webhookUrl,
  });
  console.log(`Payments: local test provider on ${fake.baseUrl} (webhooks to ${webhookUrl})`);
  return {
    stripe: new Stripe(FAKE_KEY, {
      host: "127.0.0.1",
      port: fake.port,
      protocol: "http",
      maxNetworkRetries: 0,
      telemetry: false,
    }),
    webhookSecret,
    fake,
  };
}

export class PaymentsOffError extends Error {
  constructor() {
    super("Online payments are not set up for this installation (STRIPE_SECRET_KEY is missing).");
  }
}

export function getPayments(): Promise<Ready> {
  ready ??= init().catch((error) => {
    ready = undefined;
    throw error;
  });
  return ready;
}

type ShopRow = typeof shops.$inferSelect;

/** Creates a checkout for part or all of an invoice's balance; returns the provider's hosted page. */
export async function createCheckout(input: {
  shop: ShopRow;
  invoice: Invoice;
  jobNumber: number;
  amountMinor: number;
  kind: "deposit" | "payment";
  customerEmail: string | null;
  successUrl: string;
  cancelUrl: string;
  actorId: string | null;
}) {
  const { stripe } = await getPayments();
  const paymentId = newId();
  await db.insert(payments).values({
    id: paymentId,
    shopId: input.shop.id,
    invoiceId: input.invoice.id,
    kind: input.kind,
    method: "online",
    status: "pending",
    amountMinor: input.amountMinor,
    currency: input.invoice.currency,
    recordedBy: input.actorId,
  });
  const session = await stripe.checkout.sessions.create(
    {
      mode: "payment",
      line_items: [
        {
          quantity: 1,
          price_data: {
            currency: input.invoice.currency.toLowerCase(),
            unit_amount: input.amountMinor,
            product_data: {
              name: `${input.shop.name}: ${input.kind === "deposit" ? "deposit on " : ""}invoice ${input.invoice.number}, job ${input.jobNumber}`,
            },
          },
        },
      ],
      customer_email: input.customerEmail ?? undefined,
      client_reference_id: paymentId,
      metadata: { shopId: input.shop.id, invoiceId: input.invoice.id, paymentId },
      success_url: input.successUrl,
      cancel_url: input.cancelUrl,
    },
    { idempotencyKey: paymentId },
  );
  await db
    .update(payments)
    .set({ providerSessionId: session.id })
    .where(and(eq(payments.shopId, input.shop.id), eq(payments.id, paymentId)));
  await audit({
    shopId: input.shop.id,
    actorId: input.actorId,
    action: "payment.checkout-created",
    subject: input.invoice.id,
    data: { paymentId, amountMinor: input.amountMinor, kind: input.kind },
  });
  return { url: session.url!, sessionId: session.id, paymentId };
}

/**
 * The webhook endpoint's work: verify the signature on the raw body, apply each event id once, answer 400 to a
 * bad signature (and log it) so forged calls change nothing. The event id is recorded in the same transaction
 * as the event's effects: a crash before the commit leaves neither, so the provider's retry applies it; after
 * the commit a retry finds the id and is acknowledged as a duplicate.
 */
export async function handleWebhook(request: Request): Promise<Response> {
  const { stripe, webhookSecret } = await getPayments();
  const raw = await request.text();
  const signature = request.headers.get("stripe-signature") ?? "";
  let event: Stripe.Event;
  try {
    event = stripe.webhooks.constructEvent(raw, signature, webhookSecret);
  } catch (error) {
    const reason = (error as Error).message.slice(0, 200);
    console.warn(`Payments webhook refused: ${reason}`);
    await audit({ shopId: null, actorId: null, action: "payment.webhook-refused", data: { reason } });
    return new Response("Webhook signature could not be verified.", { status: 400 });
  }
  const duplicate = () => Response.json({ received: true, duplicate: true });
  const seen = await db
    .select({ id: webhookEvents.id })
    .from(webhookEvents)
    .where(eq(webhookEvents.id, event.id))
    .get();
  if (seen) return duplicate();
  let applied: Awaited<ReturnType<typeof applyEvent>>;
  try {
    applied = await applyEvent(event);
  } catch (error) {
    // A concurrent delivery of the same event committed first; ours rolled back whole.
    if (isUniqueViolation(error, "webhook_events.id")) return duplicate();
    console.error("Payments webhook failed", error);
    return new Response("Could not apply the event.", { status: 500 });
  }
  if (applied.receipt) {
    const { shopId, invoiceId, amountMinor } = applied.receipt;
    // The payment is already on the books; a failing e-mail must not make the provider send it again.
    try {
      const invoice = await invoiceById(shopId, invoiceId);
      if (invoice) await sendReceipt(shopId, invoice, amountMinor, "paid online");
    } catch (error) {
      console.error("Payments webhook: receipt not sent", error);
    }
  }
  return Response.json({ received: true });
}

/** Reads what the event is about, then writes the event id and its effects in one batch (one transaction). */
async function applyEvent(event: Stripe.Event) {
  const seen = db.insert(webhookEvents).values({ id: event.id, type: event.type });
  const none = async () => {
    await db.batch([seen]);
    return { receipt: null };
  };
  if (event.type !== "checkout.session.completed" && event.type !== "checkout.session.expired") return none();
  const session = event.data.object as Stripe.Checkout.Session;
  const shopId = session.metadata?.shopId;
  const paymentId = session.metadata?.paymentId;
  if (!shopId || !paymentId) return none();
  const payment = await db
    .select()
    .from(payments)
    .where(
      and(
        eq(payments.shopId, shopId),
        eq(payments.id, paymentId),
        eq(payments.providerSessionId, session.id),
      ),
    )
    .get();
  if (!payment) {
    await db.batch([
      seen,
      audit({
        shopId,
        actorId: null,
        action: "payment.webhook-unmatched",
        data: { session: session.id },
      }),
    ]);
    return { receipt: null };
  }
  if (payment.status !== "pending") return none();
  // Each change repeats `status = pending`, so two different events about one payment cannot both count it.
  const stillPending = and(
    eq(payments.shopId, shopId),
    eq(payments.id, payment.id),
    eq(payments.status, "pending"),
  );
  if (event.type === "checkout.session.expired") {
    await db.batch([seen, db.update(payments).set({ status: "failed" }).where(stillPending)]);
    return { receipt: null };
  }
  if (session.payment_status !== "paid") return none();
  const amountMinor = session.amount_total ?? payment.amountMinor;
  const [, marked] = await db.batch([
    seen,
    db
      .update(payments)
      .set({
        status: "succeeded",
        amountMinor,
        providerPaymentIntentId: typeof session.payment_intent === "string" ? session.payment_intent : null,
        settledAt: new Date(),
      })
      .where(stillPending)
      .returning({ id: payments.id }),
    settleStatement(shopId, payment.invoiceId),
    audit({
      shopId,
      actorId: null,
      action: "payment.received",
      subject: payment.invoiceId,
      data: { paymentId, amountMinor: session.amount_total, method: "online", event: event.id },
    }),
  ]);
  return { receipt: marked.length ? { shopId, invoiceId: payment.invoiceId, amountMinor } : null };
}

/**
 * The invoice's paid and refunded sums recomputed from its payment rows, as one UPDATE that can share a batch
 * with the payment it counts. Same rule as settleInvoice: paid once the money taken reaches the total; later
 * refunds are shown beside it and do not reopen it.
 */
function settleStatement(shopId: string, invoiceId: string, now = new Date()) {
  const sum = (refunds: boolean) =>
    sql<number>`(select coalesce(sum(p.amount_minor), 0) from payments p
      where p.shop_id = ${shopId} and p.invoice_id = ${invoiceId} and p.status = 'succeeded'
      and ${refunds ? sql`p.kind = 'refund'` : sql`p.kind <> 'refund'`})`;
  const nowPaid = sql`${invoices.status} = 'open' and ${sum(false)} >= ${invoices.totalMinor}`;
  return db
    .update(invoices)
    .set({
      paidMinor: sum(false),
      refundedMinor: sum(true),
      status: sql`case when ${nowPaid} then 'paid' else ${invoices.status} end`,
      paidAt: sql`case when ${nowPaid} then ${now.getTime()} else ${invoices.paidAt} end`,
    })
    .where(and(eq(invoices.shopId, shopId), eq(invoices.id, invoiceId)));
}

/** A UNIQUE or PRIMARY KEY failure on the named column, however the driver wraps it. */
function isUniqueViolation(error: unknown, column: string): boolean {
  for (let e = error as { message?: string; cause?: unknown } | undefined; e; e = e.cause as typeof e) {
    if (
      typeof e.message === "string" &&
      e.message.includes("constraint failed") &&
      e.message.includes(column)
    )
      return true;
  }
  return false;
}

export async function sendReceipt(shopId: string, invoice: Invoice, amountMinor: number, method: string) {
  const row = await db
    .select({ shop: shops, job: jobs, customer: customers, board: boards })
    .from(jobs)
    .innerJoin(shops, eq(shops.id, jobs.shopId))
    .leftJoin(customers, eq(customers.id, jobs.customerId))
    .leftJoin(boards, eq(boards.id, jobs.boardId))
    .where(and(eq(jobs.shopId, shopId), eq(jobs.id, invoice.jobId)))
    .get();
  if (!row?.customer?.email) return { sent: false as const };
  return sendReceiptEmail({
    shop: row.shop,
    job: {
      id: row.job.id,
      number: row.job.number,
      device: row.board ? `${row.board.maker} ${row.board.model}` : "device",
    },
    customer: row.customer,
    invoiceNumber: invoice.number,
    amountMinor,
    paidMinor: invoice.paidMinor,
    totalMinor: invoice.totalMinor,
    method,
  });
}

/** The counter payment a form with this key already recorded, if any. */
export function counterPaymentByKey(shopId: string, idempotencyKey: string) {
  return db
    .select()
    .from(payments)
    .where(and(eq(payments.shopId, shopId), eq(payments.idempotencyKey, idempotencyKey)))
    .get();
}

/**
 * Cash or a card terminal at the counter, recorded by the desk. The form's idempotency key makes a double
 * submit record the money once: the second finds the first's row, or loses the race on the unique index.
 */
export async function recordCounterPayment(input: {
  shopId: string;
  invoice: Invoice;
  amountMinor: number;
  method: "cash" | "card-terminal";
  note: string;
  actorId: string;
  idempotencyKey?: string;
}): Promise<{ invoice: Invoice; duplicate: boolean }> {
  const current = async () => (await invoiceById(input.shopId, input.invoice.id))!;
  if (input.idempotencyKey && (await counterPaymentByKey(input.shopId, input.idempotencyKey))) {
    return { invoice: await current(), duplicate: true };
  }
  const id = newId();
  try {
    await db.batch([
      db.insert(payments).values({
        id,
        shopId: input.shopId,
        invoiceId: input.invoice.id,
        kind: input.amountMinor < input.invoice.totalMinor - input.invoice.paidMinor ? "deposit" : "payment",
        method: input.method,
        status: "succeeded",
        amountMinor: input.amountMinor,
        currency: input.invoice.currency,
        note: input.note,
        recordedBy: input.actorId,
        settledAt: new Date(),
        idempotencyKey: input.idempotencyKey ?? null,
      }),
      settleStatement(input.shopId, input.invoice.id),
      audit({
        shopId: input.shopId,
        actorId: input.actorId,
        action: "payment.recorded",
        subject: input.invoice.id,
        data: { paymentId: id, amountMinor: input.amountMinor, method: input.method },
      }),
    ]);
  } catch (error) {
    if (isUniqueViolation(error, "payments.idempotency_key"))
      return { invoice: await current(), duplicate: true };
    throw error;
  }
  const invoice = await current();
  await sendReceipt(
    input.shopId,
    invoice,
    input.amountMinor,
    input.method === "cash" ? "cash" : "card at the counter",
  );
  return { invoice, duplicate: false };
}

export type RefundResult = { ok: true } | { ok: false; message: string };

/** Refunds an online payment through the provider's SDK, or records a counter refund handed back in cash. */
export async function refundPayment(input: {
  shopId: string;
  paymentId: string;
  amountMinor: number;
  actorId: string;
}): Promise<RefundResult> {
  const payment = await db
    .select()
    .from(payments)
    .where(and(eq(payments.shopId, input.shopId), eq(payments.id, input.paymentId)))
    .get();
  if (!payment || payment.kind === "refund" || payment.status !== "succeeded") {
    return { ok: false, message: "Only a received payment can be refunded." };
  }
  const earlier = await db
    .select()
    .from(payments)
    .where(
      and(
        eq(payments.shopId, input.shopId),
        eq(payments.refundOf, payment.id),
        eq(payments.status, "succeeded"),
      ),
    )
    .all();
  const refundable = payment.amountMinor - earlier.reduce((s, r) => s + r.amountMinor, 0);
  if (input.amountMinor < 1 || input.amountMinor > refundable) {
    return { ok: false, message: `A refund of this payment can be at most ${refundable} minor units.` };
  }
  let providerRefundId: string | null = null;
  if (payment.method === "online") {
    if (!payment.providerPaymentIntentId)
      return { ok: false, message: "The provider has no record of this payment yet." };
    const { stripe } = await getPayments();
    try {
      const refund = await stripe.refunds.create(
        { payment_intent: payment.providerPaymentIntentId, amount: input.amountMinor },
        { idempotencyKey: `refund-${payment.id}-${earlier.length}` },
      );
      if (refund.status !== "succeeded" && refund.status !== "pending") {
        return { ok: false, message: `The provider did not accept the refund (${refund.status}).` };
      }
      providerRefundId = refund.id;
    } catch (error) {
      return { ok: false, message: `The provider refused the refund: ${(error as Error).message}` };
    }
  }
  await db.batch([
    db.insert(payments).values({
      id: newId(),
      shopId: input.shopId,
      invoiceId: payment.invoiceId,
      kind: "refund",
      method: payment.method,
      status: "succeeded",
      amountMinor: input.amountMinor,
      currency: payment.currency,
      providerRefundId,
      refundOf: payment.id,
      recordedBy: input.actorId,
      settledAt: new Date(),
    }),
    settleStatement(input.shopId, payment.invoiceId),
    audit({
      shopId: input.shopId,
      actorId: input.actorId,
      action: "payment.refunded",
      subject: payment.invoiceId,
      data: { paymentId: payment.id, amountMinor: input.amountMinor, providerRefundId },
    }),
  ]);
  return { ok: true };
}

export function invoiceById(shopId: string, invoiceId: string) {
  return db
    .select()
    .from(invoices)
    .where(and(eq(invoices.shopId, shopId), eq(invoices.id, invoiceId)))
    .get();
}
