import { and, eq } from "drizzle-orm";
import { describe, expect, it } from "vitest";
import * as jobRoute from "~/routes/job";
import * as jobNew from "~/routes/job-new";
import * as jobQuote from "~/routes/job-quote";
import { db } from "~/server/db.server";
import { billingOf } from "~/server/jobs.server";
import { recordCounterPayment } from "~/server/payments.server";
import { auditEvents, invoices, jobs, payments, quotes } from "~/server/schema.server";
import { createShopWithRoles } from "../support/fixtures";
import { call, formRequest, getRequest } from "../support/requests";

// What a job owes when the desk records the customer's answer itself (a phone call, the counter) instead of the
// customer pressing a button on the approval page, and counter payments that are submitted twice.

type Shop = Awaited<ReturnType<typeof createShopWithRoles>>;
type Role = keyof Shop["cookies"];

async function intake(shop: Shop, fee: string) {
  const res = await call(jobNew.action, {
    request: formRequest(
      "/jobs/new",
      {
        name: "Wren Alder",
        email: `wren-${Math.random().toString(36).slice(2)}@customer.test`,
        consentToContact: "on",
        boardId: shop.boardId,
        serial: "SN-BILL",
        complaint: "Boot loop",
        diagnosticFee: fee,
        termsAccepted: "on",
      },
      shop.cookies.desk,
    ),
  });
  expect(res.status).toBe(302);
  const id = res.response!.headers.get("Location")!.split("/").pop()!;
  return (await db.select().from(jobs).where(eq(jobs.id, id)).get())!;
}

const act = (shop: Shop, jobId: string, fields: Record<string, string>, role: Role = "desk") =>
  call(jobRoute.action, {
    request: formRequest(`/jobs/${jobId}`, fields, shop.cookies[role]),
    params: { jobId },
  });
const move = (shop: Shop, jobId: string, to: string, role: Role = "desk") =>
  act(shop, jobId, { intent: "move", to }, role);

const quoteLabour = (shop: Shop, jobId: string, price: string) =>
  call(jobQuote.action, {
    request: formRequest(
      `/jobs/${jobId}/quote`,
      { "lines[0].description": "Bench labour", "lines[0].quantity": "1", "lines[0].unitPrice": price },
      shop.cookies.desk,
    ),
    params: { jobId },
  });

const jobRow = async (id: string) => (await db.select().from(jobs).where(eq(jobs.id, id)).get())!;
const invoicesOf = (jobId: string) => db.select().from(invoices).where(eq(invoices.jobId, jobId)).all();

describe("the customer's answer recorded by the desk", () => {
  it("raises the invoice from the approved quote, so a repair with no diagnostic fee cannot close unpaid", async () => {
    const shop = await createShopWithRoles("Phone Approval");
    const job = await intake(shop, "0");
    expect(job.diagnosticFeeMinor).toBe(0);
    expect((await move(shop, job.id, "diagnosing", "tech")).status).toBe(302);
    expect((await quoteLabour(shop, job.id, "85.00")).status).toBe(302);
    // The price is given by phone, and the customer says yes on the same call.
    expect((await move(shop, job.id, "awaiting-approval")).status).toBe(302);
    expect((await move(shop, job.id, "repairing")).status).toBe(302);

    const quote = (await db.select().from(quotes).where(eq(quotes.jobId, job.id)).get())!;
    expect(quote.status).toBe("approved");
    expect(quote.decidedAt).toBeInstanceOf(Date);
    const [invoice] = await invoicesOf(job.id);
    expect(invoice).toMatchObject({ quoteId: quote.id, totalMinor: 8500, status: "open" });
    const logged = await db
      .select()
      .from(auditEvents)
      .where(and(eq(auditEvents.subject, quote.id), eq(auditEvents.action, "quote.approved")))
      .all();
    expect(logged).toMatchObject([{ actorId: shop.userIds.desk }]);

    expect((await move(shop, job.id, "testing", "tech")).status).toBe(302);
    expect((await move(shop, job.id, "ready", "tech")).status).toBe(302);
    const refused = await move(shop, job.id, "closed");
    expect(refused.status).toBe(409);
    expect(JSON.stringify(refused.data)).toContain("not paid");
    expect((await jobRow(job.id)).state).toBe("ready");

    expect(
      (await act(shop, job.id, { intent: "counter-payment", amount: "85.00", method: "cash" })).status,
    ).toBe(302);
    expect((await move(shop, job.id, "closed")).status).toBe(302);
  });

  it("refuses an approval with no quote to approve on a chargeable job, and moves nothing", async () => {
    const shop = await createShopWithRoles("No Quote");
    const job = await intake(shop, "0");
    await move(shop, job.id, "diagnosing", "tech");
    await move(shop, job.id, "awaiting-approval");
    const res = await move(shop, job.id, "repairing");
    expect(res.status).toBe(409);
    expect(JSON.stringify(res.data)).toContain("Build the quote the customer approved first");
    expect((await jobRow(job.id)).state).toBe("awaiting-approval");
    expect(await invoicesOf(job.id)).toEqual([]);
  });

  it("bills the diagnostic fee when the desk records a decline", async () => {
    const shop = await createShopWithRoles("Phone Decline");
    const job = await intake(shop, "45.00");
    await move(shop, job.id, "diagnosing", "tech");
    await quoteLabour(shop, job.id, "120.00");
    await move(shop, job.id, "awaiting-approval");
    expect((await move(shop, job.id, "declined")).status).toBe(302);
    expect((await db.select().from(quotes).where(eq(quotes.jobId, job.id)).get())!.status).toBe("declined");
    expect(await invoicesOf(job.id)).toMatchObject([{ quoteId: null, totalMinor: 4500, status: "open" }]);
    expect((await move(shop, job.id, "closed")).status).toBe(409);
  });

  it("counts an approved quote without an invoice as owed, and raises that invoice on request", async () => {
    const shop = await createShopWithRoles("Approved Uninvoiced");
    const job = await intake(shop, "0");
    await move(shop, job.id, "diagnosing", "tech");
    await quoteLabour(shop, job.id, "60.00");
    // As if the process stopped between the approval and the invoice.
    await db
      .update(quotes)
      .set({ status: "approved", decidedAt: new Date() })
      .where(eq(quotes.jobId, job.id));
    await db.update(jobs).set({ state: "ready" }).where(eq(jobs.id, job.id));
    expect(await billingOf(await jobRow(job.id))).toBe("unpaid");
    expect((await move(shop, job.id, "closed")).status).toBe(409);

    const page = await call(jobRoute.loader, {
      request: getRequest(`/jobs/${job.id}`, shop.cookies.desk),
      params: { jobId: job.id },
    });
    expect(page.data).toMatchObject({ billing: "unpaid", invoice: null, owedQuote: { totalMinor: 6000 } });
    expect((await act(shop, job.id, { intent: "raise-invoice" })).status).toBe(302);
    expect(await invoicesOf(job.id)).toMatchObject([{ totalMinor: 6000, status: "open" }]);
  });
});

describe("counter payments", () => {
  async function openInvoice(shop: Shop) {
    const job = await intake(shop, "0");
    await move(shop, job.id, "diagnosing", "tech");
    await quoteLabour(shop, job.id, "85.00");
    await move(shop, job.id, "awaiting-approval");
    await move(shop, job.id, "repairing");
    const [invoice] = await invoicesOf(job.id);
    return { job, invoice };
  }

  it("records a form submitted twice once", async () => {
    const shop = await createShopWithRoles("Double Submit");
    const { job, invoice } = await openInvoice(shop);
    const page = await call(jobRoute.loader, {
      request: getRequest(`/jobs/${job.id}`, shop.cookies.desk),
      params: { jobId: job.id },
    });
    const key = (page.data as { counterKey: string }).counterKey;
    expect(key).toMatch(/^[a-z2-7]{16,}$/);
    const submit = () =>
      act(shop, job.id, { intent: "counter-payment", amount: "50.00", method: "cash", idempotencyKey: key });
    const first = await submit();
    expect(first.status).toBe(302);
    const second = await submit();
    expect(second.status).toBe(302);
    const rows = await db.select().from(payments).where(eq(payments.invoiceId, invoice.id)).all();
    expect(rows).toHaveLength(1);
    expect((await db.select().from(invoices).where(eq(invoices.id, invoice.id)).get())!.paidMinor).toBe(5000);
    // A fresh page load gives a fresh key: the rest of the money is a new payment.
    const next = await call(jobRoute.loader, {
      request: getRequest(`/jobs/${job.id}`, shop.cookies.desk),
      params: { jobId: job.id },
    });
    const nextKey = (next.data as { counterKey: string }).counterKey;
    expect(nextKey).not.toBe(key);
    expect(
      (
        await act(shop, job.id, {
          intent: "counter-payment",
          amount: "35.00",
          method: "cash",
          idempotencyKey: nextKey,
        })
      ).status,
    ).toBe(302);
    expect((await db.select().from(invoices).where(eq(invoices.id, invoice.id)).get())!).toMatchObject({
      status: "paid",
      paidMinor: 8500,
    });
  });

  it("records one payment when two submits with one key race", async () => {
    const shop = await createShopWithRoles("Racing Submits");
    const { invoice } = await openInvoice(shop);
    const input = {
      shopId: shop.shopId,
      invoice,
      amountMinor: 8500,
      method: "card-terminal" as const,
      note: "",
      actorId: shop.userIds.desk,
      idempotencyKey: "abcdefghijklmnopqrstuvwx",
    };
    const results = await Promise.all([recordCounterPayment(input), recordCounterPayment(input)]);
    expect(results.map((r) => r.duplicate).sort()).toEqual([false, true]);
    const rows = await db.select().from(payments).where(eq(payments.invoiceId, invoice.id)).all();
    expect(rows).toHaveLength(1);
    expect((await db.select().from(invoices).where(eq(invoices.id, invoice.id)).get())!).toMatchObject({
      status: "paid",
      paidMinor: 8500,
    });
    const recorded = await db
      .select()
      .from(auditEvents)
      .where(and(eq(auditEvents.subject, invoice.id), eq(auditEvents.action, "payment.recorded")))
      .all();
    expect(recorded).toHaveLength(1);
  });
});
