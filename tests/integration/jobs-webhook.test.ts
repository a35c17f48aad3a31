import http from "node:http";
import type { AddressInfo } from "node:net";
import { and, eq, sql } from "drizzle-orm";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import * as webhookRoute from "~/routes/payments-webhook";
import { db } from "~/server/db.server";
import { newId } from "~/server/ids.server";
import { createJob } from "~/server/jobs.server";
import { createCheckout, getPayments, refundPayment } from "~/server/payments.server";
import { createQuote, raiseInvoice } from "~/server/quotes.server";
import { auditEvents, outbox, payments, shops, webhookEvents } from "~/server/schema.server";
import { createShopWithRoles } from "../support/fixtures";

// The whole online path on one machine: the SDK creates a checkout on the local fake, the "customer" presses
// Pay on the fake's page, the fake signs and posts the webhook, and our route applies it.
let relay: http.Server;
const calls: number[] = [];

beforeAll(async () => {
  // A tiny HTTP front for the webhook route, standing in for the app server the fake posts to.
  relay = http.createServer(async (req, res) => {
    const chunks: Buffer[] = [];
    for await (const c of req) chunks.push(c as Buffer);
    const request = new Request(`http://railwise.test${req.url}`, {
      method: req.method,
      headers: req.headers as Record<string, string>,
      body: Buffer.concat(chunks),
    });
    const response = (await webhookRoute.action({ request, params: {}, context: {} } as never)) as Response;
    calls.push(response.status);
    res.writeHead(response.status, { "Content-Type": "text/plain" });
    res.end(await response.text());
  });
  await new Promise<void>((r) => relay.listen(0, "127.0.0.1", () => r()));
  process.env.STRIPE_WEBHOOK_URL = `http://127.0.0.1:${(relay.address() as AddressInfo).port}/payments/webhook`;
});

afterAll(async () => {
  await new Promise((r) => relay.close(r));
  await (await getPayments()).fake?.close();
});

async function openInvoice() {
  const fixture = await createShopWithRoles("Webhook Shop");
  await db.update(shops).set({ taxRateBp: 825 }).where(eq(shops.id, fixture.shopId));
  const shop = (await db.select().from(shops).where(eq(shops.id, fixture.shopId)).get())!;
  const email = `payer-${newId(5)}@customer.test`;
  const job = await createJob(shop.id, fixture.userIds.desk, {
    customer: { name: "Iris Payer", email, consentToContact: true },
    boardId: fixture.boardId,
    serial: "SN-W1",
    conditionNotes: "",
    accessories: "",
    complaint: "No power",
    diagnosticFeeMinor: 4500,
    unclaimedDays: 60,
  });
  const quote = await createQuote(shop, job.id, fixture.userIds.desk, {
    lines: [{ kind: "labour", description: "Bench labour", quantity: 1, unitMinor: 10000 }],
    depositMinor: 0,
    note: "",
    findingId: null,
  });
  const invoice = await raiseInvoice(shop, job.id, { quote });
  return { fixture, shop, job, invoice, email };
}

const post = (body: string, signature: string) =>
  webhookRoute.action({
    request: new Request("http://railwise.test/payments/webhook", {
      method: "POST",
      headers: { "Content-Type": "application/json", "Stripe-Signature": signature },
      body,
    }),
    params: {},
    context: {},
  } as never) as Promise<Response>;

describe("payments webhook", () => {
  it("marks the invoice paid once the customer pays on the fake checkout, and e-mails a receipt", async () => {
    const { shop, job, invoice, email } = await openInvoice();
    // 100.00 + 8.25 % = 108.25
    expect(invoice.totalMinor).toBe(10825);
    const checkout = await createCheckout({
      shop,
      invoice,
      jobNumber: job.number,
      amountMinor: invoice.totalMinor,
      kind: "payment",
      customerEmail: email,
      successUrl: "http://railwise.test/q/x?paid=1",
      cancelUrl: "http://railwise.test/q/x",
      actorId: null,
    });
    expect(checkout.url).toMatch(/^http:\/\/127\.0\.0\.1:\d+\/pay\/cs_test_/);
    // The SDK reads the session back from the fake.
    const { stripe, fake } = await getPayments();
    const retrieved = await stripe.checkout.sessions.retrieve(checkout.sessionId);
    expect(retrieved).toMatchObject({ amount_total: 10825, currency: "usd", status: "open" });

    const page = await fetch(checkout.url);
    expect(await page.text()).toContain("Pay $108.25");
    const paid = await fetch(checkout.url, { method: "POST", redirect: "manual" });
    expect(paid.status).toBe(303);
    expect(paid.headers.get("location")).toBe("http://railwise.test/q/x?paid=1");

    const payment = (await db.select().from(payments).where(eq(payments.id, checkout.paymentId)).get())!;
    expect(payment).toMatchObject({ status: "succeeded", amountMinor: 10825 });
    expect(payment.providerPaymentIntentId).toMatch(/^pi_/);
    const { invoices } = await import("~/server/schema.server");
    expect((await db.select().from(invoices).where(eq(invoices.id, invoice.id)).get())!).toMatchObject({
      status: "paid",
      paidMinor: 10825,
    });
    const receipts = (await db.select().from(outbox).where(eq(outbox.to, email)).all()).filter((m) =>
      m.subject.includes("receipt"),
    );
    expect(receipts.length).toBe(1);
    expect(receipts[0].text).toContain("paid in full");

    // Replay: the same signed delivery again is acknowledged and changes nothing.
    const delivered = fake!.delivered.at(-1)!;
    const replay = await post(delivered.payload, delivered.header);
    expect(replay.status).toBe(200);
    expect(await replay.json()).toMatchObject({ duplicate: true });
    expect((await db.select().from(payments).where(eq(payments.invoiceId, invoice.id)).all()).length).toBe(1);
    expect(
      (await db.select().from(outbox).where(eq(outbox.to, email)).all()).filter((m) =>
        m.subject.includes("receipt"),
      ).length,
    ).toBe(1);
    const event = JSON.parse(delivered.payload) as { id: string };
    expect((await db.select().from(webhookEvents).where(eq(webhookEvents.id, event.id)).all()).length).toBe(
      1,
    );

    // A refund goes through the SDK to the fake, which refuses more than was paid.
    const tooMuch = await refundPayment({
      shopId: shop.id,
      paymentId: payment.id,
      amountMinor: 20000,
      actorId: null as never,
    });
    expect(tooMuch.ok).toBe(false);
    const refund = await refundPayment({
      shopId: shop.id,
      paymentId: payment.id,
      amountMinor: 825,
      actorId: "x",
    });
    expect(refund).toEqual({ ok: true });
    const rows = await db.select().from(payments).where(eq(payments.invoiceId, invoice.id)).all();
    expect(rows.find((r) => r.kind === "refund")).toMatchObject({ amountMinor: 825, status: "succeeded" });
    expect(rows.find((r) => r.kind === "refund")!.providerRefundId).toMatch(/^re_/);
    expect((await db.select().from(invoices).where(eq(invoices.id, invoice.id)).get())!).toMatchObject({
      status: "paid",
      refundedMinor: 825,
    });
  });

  it("refuses a bad signature with 400, logs it, and changes nothing", async () => {
    const { shop, job, invoice } = await openInvoice();
    const checkout = await createCheckout({
      shop,
      invoice,
      jobNumber: job.number,
      amountMinor: 5000,
      kind: "deposit",
      customerEmail: null,
      successUrl: "http://railwise.test/ok",
      cancelUrl: "http://railwise.test/no",
      actorId: null,
    });
    const { stripe } = await getPayments();
    const forged = JSON.stringify({
      id: `evt_forged_${newId(6)}`,
      object: "event",
      type: "checkout.session.completed",
      data: {
        object: {
          id: checkout.sessionId,
          object: "checkout.session",
          payment_status: "paid",
          amount_total: 5000,
          metadata: { shopId: shop.id, paymentId: checkout.paymentId, invoiceId: invoice.id },
        },
      },
    });
    // Signed with another secret, then with none at all.
    const wrongSecret = stripe.webhooks.generateTestHeaderString({
      payload: forged,
      secret: "whsec_not_ours",
    });
    const before = await db
      .select()
      .from(auditEvents)
      .where(eq(auditEvents.action, "payment.webhook-refused"))
      .all();
    expect((await post(forged, wrongSecret)).status).toBe(400);
    expect((await post(forged, "")).status).toBe(400);
    // A genuine signature over a different body does not carry over to a tampered one.
    const genuine = stripe.webhooks.generateTestHeaderString({
      payload: forged,
      secret: "whsec_railwise_local_fake",
    });
    expect((await post(forged.replace('"amount_total":5000', '"amount_total":1'), genuine)).status).toBe(400);
    const after = await db
      .select()
      .from(auditEvents)
      .where(eq(auditEvents.action, "payment.webhook-refused"))
      .all();
    expect(after.length - before.length).toBe(3);
    expect(
      (await db
        .select()
        .from(payments)
        .where(and(eq(payments.id, checkout.paymentId)))
        .get())!.status,
    ).toBe("pending");

    // The untampered, correctly signed event is applied: a deposit leaves the invoice open.
    expect((await post(forged, genuine)).status).toBe(200);
    const { invoices } = await import("~/server/schema.server");
    expect((await db.select().from(invoices).where(eq(invoices.id, invoice.id)).get())!).toMatchObject({
      status: "open",
      paidMinor: 5000,
    });
  });

  it("records the event id only together with its effects: a crash in between leaves the retry to apply it, once", async () => {
    const { shop, job, invoice, email } = await openInvoice();
    const checkout = await createCheckout({
      shop,
      invoice,
      jobNumber: job.number,
      amountMinor: invoice.totalMinor,
      kind: "payment",
      customerEmail: email,
      successUrl: "http://railwise.test/ok",
      cancelUrl: "http://railwise.test/no",
      actorId: null,
    });
    const { stripe } = await getPayments();
    const payload = JSON.stringify({
      id: `evt_crash_${newId(6)}`,
      object: "event",
      type: "checkout.session.completed",
      data: {
        object: {
          id: checkout.sessionId,
          object: "checkout.session",
          payment_status: "paid",
          amount_total: invoice.totalMinor,
          payment_intent: `pi_crash_${newId(6)}`,
          metadata: { shopId: shop.id, paymentId: checkout.paymentId, invoiceId: invoice.id },
        },
      },
    });
    const header = () =>
      stripe.webhooks.generateTestHeaderString({ payload, secret: "whsec_railwise_local_fake" });
    const eventId = (JSON.parse(payload) as { id: string }).id;
    const paymentRow = async () =>
      (await db.select().from(payments).where(eq(payments.id, checkout.paymentId)).get())!;

    // The process dies while applying the event: writing the payment fails, and no clean-up code runs after
    // it (a delete of the recorded id would fail too). Triggers in the test's SQLite file stand in for both.
    await db.run(
      sql.raw(`CREATE TRIGGER test_crash_apply BEFORE UPDATE OF status ON payments WHEN NEW.id = '${checkout.paymentId}'
        BEGIN SELECT RAISE(ABORT, 'simulated crash while applying'); END`),
    );
    await db.run(
      sql.raw(`CREATE TRIGGER test_crash_cleanup BEFORE DELETE ON webhook_events
        BEGIN SELECT RAISE(ABORT, 'simulated crash before clean-up'); END`),
    );
    try {
      const crashed = await post(payload, header()).catch(() => new Response(null, { status: 500 }));
      expect(crashed.status).toBe(500);
      expect(await db.select().from(webhookEvents).where(eq(webhookEvents.id, eventId)).all()).toEqual([]);
      expect((await paymentRow()).status).toBe("pending");
    } finally {
      await db.run(sql.raw("DROP TRIGGER IF EXISTS test_crash_apply"));
      await db.run(sql.raw("DROP TRIGGER IF EXISTS test_crash_cleanup"));
    }

    // The provider retries (here two deliveries at once): the payment lands, with its event id, once.
    const retried = await Promise.all([post(payload, header()), post(payload, header())]);
    expect(retried.map((r) => r.status)).toEqual([200, 200]);
    const answers = await Promise.all(retried.map((r) => r.json()));
    expect(answers.filter((a) => a.duplicate)).toHaveLength(1);
    expect(await paymentRow()).toMatchObject({ status: "succeeded", amountMinor: invoice.totalMinor });
    const { invoices } = await import("~/server/schema.server");
    expect((await db.select().from(invoices).where(eq(invoices.id, invoice.id)).get())!).toMatchObject({
      status: "paid",
      paidMinor: invoice.totalMinor,
    });
    expect(
      (await db.select().from(invoices).where(eq(invoices.id, invoice.id)).get())!.paidAt,
    ).toBeInstanceOf(Date);

    // Replays, one after another and two at once, are acknowledged and change nothing.
    const replays = [
      await post(payload, header()),
      ...(await Promise.all([post(payload, header()), post(payload, header())])),
    ];
    for (const r of replays) {
      expect(r.status).toBe(200);
      expect(await r.json()).toMatchObject({ duplicate: true });
    }
    expect(await db.select().from(webhookEvents).where(eq(webhookEvents.id, eventId)).all()).toHaveLength(1);
    const received = await db
      .select()
      .from(auditEvents)
      .where(and(eq(auditEvents.subject, invoice.id), eq(auditEvents.action, "payment.received")))
      .all();
    expect(received).toHaveLength(1);
    const receipts = (await db.select().from(outbox).where(eq(outbox.to, email)).all()).filter((m) =>
      m.subject.includes("receipt"),
    );
    expect(receipts).toHaveLength(1);
  });
});
