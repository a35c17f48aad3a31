import { and, eq } from "drizzle-orm";
import { describe, expect, it } from "vitest";
import * as customerRoute from "~/routes/customer";
import * as jobRoute from "~/routes/job";
import * as jobNew from "~/routes/job-new";
import * as jobQuote from "~/routes/job-quote";
import { audit } from "~/server/audit.server";
import { eraseExpiredPersonalData } from "~/server/customers.server";
import { db } from "~/server/db.server";
import { auditEvents, customers, invoices, jobs, payments, quotes, shops } from "~/server/schema.server";
import { createShopWithRoles } from "../support/fixtures";
import { call, formRequest } from "../support/requests";

// Erasing a customer reaches the copies of their name, e-mail and phone outside the customer row: the audit
// trail (the address a quote was sent to, a waiver's reason), the waiver on the job, the desk's payment notes.

type Shop = Awaited<ReturnType<typeof createShopWithRoles>>;

const NAME = "Odessa Fairweather";
const PHONE = "555-0142";

async function quotedJob(shop: Shop) {
  const email = `odessa-${Math.random().toString(36).slice(2)}@customer.test`;
  const res = await call(jobNew.action, {
    request: formRequest(
      "/jobs/new",
      {
        name: NAME,
        email,
        phone: PHONE,
        consentToContact: "on",
        boardId: shop.boardId,
        serial: "SN-ERASE",
        complaint: "Fan spins, no picture",
        diagnosticFee: "45.00",
        termsAccepted: "on",
      },
      shop.cookies.desk,
    ),
  });
  expect(res.status).toBe(302);
  const jobId = res.response!.headers.get("Location")!.split("/").pop()!;
  const act = (fields: Record<string, string>, role: keyof Shop["cookies"] = "desk") =>
    call(jobRoute.action, {
      request: formRequest(`/jobs/${jobId}`, fields, shop.cookies[role]),
      params: { jobId },
    });
  await act({ intent: "move", to: "diagnosing" }, "tech");
  await call(jobQuote.action, {
    request: formRequest(
      `/jobs/${jobId}/quote`,
      { "lines[0].description": "Bench labour", "lines[0].quantity": "1", "lines[0].unitPrice": "90.00" },
      shop.cookies.desk,
    ),
    params: { jobId },
  });
  const quote = (await db.select().from(quotes).where(eq(quotes.jobId, jobId)).get())!;
  expect((await act({ intent: "send-quote", quoteId: quote.id })).status).toBe(302);
  const job = (await db.select().from(jobs).where(eq(jobs.id, jobId)).get())!;
  return { job, quote, email, act };
}

const entriesOf = (shop: Shop) =>
  db.select().from(auditEvents).where(eq(auditEvents.shopId, shop.shopId)).all();

describe("customer erasure", () => {
  it("scrubs the customer's e-mail, name and phone from the audit trail and the job's free text", async () => {
    const shop = await createShopWithRoles("Erasure Shop");
    const { job, quote, email, act } = await quotedJob(shop);
    expect((await act({ intent: "move", to: "repairing" })).status).toBe(302);
    await act({
      intent: "counter-payment",
      amount: "20.00",
      method: "cash",
      note: `Deposit handed over by ${NAME}, call ${PHONE}`,
    });
    expect(
      (await act({ intent: "waive", reason: `Goodwill for ${NAME} after a long wait` }, "owner")).status,
    ).toBe(302);
    // An entry elsewhere that quotes the address (say, a note copied into the trail), and one about the job
    // whose words merely start with the name, which must stay as they were.
    await audit({ shopId: shop.shopId, actorId: null, action: "test.note", data: { said: `mail ${email}` } });
    await audit({
      shopId: shop.shopId,
      actorId: null,
      action: "test.other",
      subject: job.id,
      data: { text: `${NAME}ing station` },
    });

    const sent = (await entriesOf(shop)).find((e) => e.action === "quote.sent")!;
    expect(sent.data).toEqual({ to: email });

    const erased = await call(customerRoute.action, {
      request: formRequest(
        `/customers/${job.customerId}`,
        { intent: "erase", confirm: "ERASE" },
        shop.cookies.owner,
      ),
      params: { customerId: job.customerId! },
    });
    expect(erased.status).toBe(302);

    const after = await entriesOf(shop);
    const text = JSON.stringify(after.filter((e) => e.action !== "test.other"));
    expect(text).not.toContain(email);
    expect(text).not.toContain(NAME);
    expect(text).not.toContain(PHONE);
    // The entries stay: who did what and when is still there.
    expect(after.find((e) => e.id === sent.id)).toMatchObject({
      action: "quote.sent",
      subject: quote.id,
      actorId: shop.userIds.desk,
      data: { to: "[erased]" },
    });
    expect(after.find((e) => e.action === "invoice.waived")!.data).toEqual({
      reason: "Goodwill for [erased] after a long wait",
    });
    expect(after.find((e) => e.action === "test.note")!.data).toEqual({ said: "mail [erased]" });
    expect(after.find((e) => e.action === "test.other")!.data).toEqual({
      text: "Odessa Fairweathering station",
    });
    expect(after.filter((e) => e.action === "customer.erased")).toHaveLength(1);

    const j = (await db.select().from(jobs).where(eq(jobs.id, job.id)).get())!;
    expect(j.waiverReason).toBe("Goodwill for [erased] after a long wait");
    const [invoice] = await db.select().from(invoices).where(eq(invoices.jobId, job.id)).all();
    const [payment] = await db.select().from(payments).where(eq(payments.invoiceId, invoice.id)).all();
    expect(payment).toMatchObject({
      note: "Deposit handed over by [erased], call [erased]",
      amountMinor: 2000,
    });
    expect((await db.select().from(customers).where(eq(customers.id, job.customerId!)).get())!).toMatchObject(
      { name: "Erased customer", email: null, phone: null },
    );
  });

  it("leaves other customers' entries alone", async () => {
    const shop = await createShopWithRoles("Erasure Neighbours");
    const first = await quotedJob(shop);
    const second = await quotedJob(shop);
    await call(customerRoute.action, {
      request: formRequest(
        `/customers/${first.job.customerId}`,
        { intent: "erase", confirm: "ERASE" },
        shop.cookies.owner,
      ),
      params: { customerId: first.job.customerId! },
    });
    const kept = (await entriesOf(shop)).find(
      (e) => e.action === "quote.sent" && e.subject === second.quote.id,
    )!;
    expect(kept.data).toEqual({ to: second.email });
  });

  it("scrubs the audit entries of jobs the retention task erases", async () => {
    const shop = await createShopWithRoles("Retention Scrub");
    await db.update(shops).set({ retentionDays: 30 }).where(eq(shops.id, shop.shopId));
    const { job, quote, email } = await quotedJob(shop);
    await db
      .update(jobs)
      .set({ state: "closed", closedAt: new Date(Date.now() - 31 * 86_400_000) })
      .where(eq(jobs.id, job.id));
    await eraseExpiredPersonalData();
    const sent = (
      await db
        .select()
        .from(auditEvents)
        .where(and(eq(auditEvents.subject, quote.id), eq(auditEvents.action, "quote.sent")))
        .all()
    )[0];
    expect(sent.data).toEqual({ to: "[erased]" });
    expect(JSON.stringify(await entriesOf(shop))).not.toContain(email);
  });
});
