import { and, eq } from "drizzle-orm";
import { describe, expect, it } from "vitest";
import * as jobRoute from "~/routes/job";
import * as jobNew from "~/routes/job-new";
import * as jobQuote from "~/routes/job-quote";
import * as jobsRoute from "~/routes/jobs";
import { CLOSED_JOBS_SHOWN } from "~/server/jobs.server";
import * as quotePublic from "~/routes/quote-public";
import * as customerRoute from "~/routes/customer";
import * as customerExport from "~/routes/customer-export";
import { db } from "~/server/db.server";
import { eraseExpiredPersonalData } from "~/server/customers.server";
import {
  auditEvents,
  customers,
  invoices,
  jobEvents,
  jobs,
  outbox,
  quotes,
  shops,
} from "~/server/schema.server";
import { createShopWithRoles } from "../support/fixtures";
import { call, formRequest, getRequest } from "../support/requests";

type Shop = Awaited<ReturnType<typeof createShopWithRoles>>;

const intakeFields = (shop: Shop, extra: Record<string, string> = {}) => ({
  name: "Mara Quill",
  email: `mara-${Math.random().toString(36).slice(2)}@customer.test`,
  phone: "555-0100",
  consentToContact: "on",
  boardId: shop.boardId,
  serial: "SN-000123",
  conditionNotes: "Scuff on lid",
  accessories: "charger",
  complaint: "Dead after a coffee spill",
  diagnosticFee: "45.00",
  termsAccepted: "on",
  notify: "on",
  ...extra,
});

async function intake(shop: Shop, extra: Record<string, string> = {}, role: keyof Shop["cookies"] = "desk") {
  return call(jobNew.action, {
    request: formRequest("/jobs/new", intakeFields(shop, extra), shop.cookies[role]),
  });
}

async function newJob(shop: Shop, extra: Record<string, string> = {}) {
  const res = await intake(shop, extra);
  expect(res.status).toBe(302);
  const id = res.response!.headers.get("Location")!.split("/").pop()!;
  return (await db.select().from(jobs).where(eq(jobs.id, id)).get())!;
}

const move = (shop: Shop, jobId: string, to: string, role: keyof Shop["cookies"]) =>
  call(jobRoute.action, {
    request: formRequest(`/jobs/${jobId}`, { intent: "move", to }, shop.cookies[role]),
    params: { jobId },
  });

/** A one-line labour quote built by the desk. */
const quoteLabour = (shop: Shop, jobId: string, price: string) =>
  call(jobQuote.action, {
    request: formRequest(
      `/jobs/${jobId}/quote`,
      { "lines[0].description": "Bench labour", "lines[0].quantity": "1", "lines[0].unitPrice": price },
      shop.cookies.desk,
    ),
    params: { jobId },
  });

describe("intake", () => {
  it("opens jobs with sequential numbers per shop and records who took the device in", async () => {
    const a = await createShopWithRoles("Intake A");
    const b = await createShopWithRoles("Intake B");
    const first = await newJob(a);
    const second = await newJob(a);
    const other = await newJob(b);
    expect(second.number).toBe(first.number + 1);
    expect(other.number).toBe(1);
    expect(first.diagnosticFeeMinor).toBe(4500);
    expect(first.termsAcceptedAt).toBeInstanceOf(Date);
    const events = await db.select().from(jobEvents).where(eq(jobEvents.jobId, first.id)).all();
    expect(events).toMatchObject([{ toState: "received", actorKind: "member", actorId: a.userIds.desk }]);
    // The "received" update went out because the customer agreed to contact.
    const customer = await db.select().from(customers).where(eq(customers.id, first.customerId!)).get();
    const mail = await db.select().from(outbox).where(eq(outbox.to, customer!.email!)).all();
    expect(mail.map((m) => m.subject)).toEqual([expect.stringContaining("we have your device")]);
    expect(mail[0].html).toContain("<html");
    expect(mail[0].text).toContain(`job ${first.number}`);
  });

  it("refuses intake without the terms or with a bad fee, and changes nothing", async () => {
    const shop = await createShopWithRoles();
    const before = await db.select().from(jobs).where(eq(jobs.shopId, shop.shopId)).all();
    const noTerms = await intake(shop, { termsAccepted: "" });
    expect(noTerms.status).toBe(400);
    expect(JSON.stringify(noTerms.data)).toContain("must accept the shop's terms");
    const badFee = await intake(shop, { diagnosticFee: "45.999" });
    expect(badFee.status).toBe(400);
    expect(JSON.stringify(badFee.data)).toContain("at most 2 decimal places");
    const after = await db.select().from(jobs).where(eq(jobs.shopId, shop.shopId)).all();
    expect(after.length).toBe(before.length);
  });

  it("lets only desk, lead and owner take devices in", async () => {
    const shop = await createShopWithRoles();
    expect((await intake(shop, {}, "tech")).status).toBe(403);
    expect((await intake(shop, {}, "owner")).status).toBe(302);
  });

  it("lets a technician take a job nobody has, not one assigned to someone else (nor its passcode)", async () => {
    const shop = await createShopWithRoles();
    const assign = (job: string, userId: string, role: keyof Shop["cookies"]) =>
      call(jobRoute.action, {
        request: formRequest(`/jobs/${job}`, { intent: "assign", userId }, shop.cookies[role]),
        params: { jobId: job },
      });
    const free = await newJob(shop, {});
    expect((await assign(free.id, shop.userIds.tech, "tech")).status).toBe(302);
    expect((await db.select().from(jobs).where(eq(jobs.id, free.id)).get())!.assignedTo).toBe(
      shop.userIds.tech,
    );
    // Taking one's own job again changes nothing and is allowed.
    expect((await assign(free.id, shop.userIds.tech, "tech")).status).toBe(302);

    const held = await newJob(shop, { passcode: "1357" });
    expect((await assign(held.id, shop.userIds.lead, "desk")).status).toBe(302);
    const refused = await assign(held.id, shop.userIds.tech, "tech");
    expect(refused.status).toBe(409);
    expect(JSON.stringify(refused.data)).toContain("already assigned to another technician");
    expect((await db.select().from(jobs).where(eq(jobs.id, held.id)).get())!.assignedTo).toBe(
      shop.userIds.lead,
    );
    const reveal = await call(jobRoute.action, {
      request: formRequest(`/jobs/${held.id}`, { intent: "reveal-passcode" }, shop.cookies.tech),
      params: { jobId: held.id },
    });
    expect(reveal.status).toBe(403);
    // A lead or the desk hands it over.
    expect((await assign(held.id, shop.userIds.tech, "lead")).status).toBe(302);
    expect((await db.select().from(jobs).where(eq(jobs.id, held.id)).get())!.assignedTo).toBe(
      shop.userIds.tech,
    );
  });

  it("seals the passcode, shows it to the assigned tech only, and erases it at closing", async () => {
    const shop = await createShopWithRoles();
    const job = await newJob(shop, { passcode: "2468-secret" });
    expect(job.passcodeSealed).toBeTruthy();
    expect(job.passcodeSealed).not.toContain("2468");
    const reveal = (role: keyof Shop["cookies"]) =>
      call(jobRoute.action, {
        request: formRequest(`/jobs/${job.id}`, { intent: "reveal-passcode" }, shop.cookies[role]),
        params: { jobId: job.id },
      });
    expect((await reveal("tech")).status).toBe(403);
    expect((await reveal("owner")).status).toBe(403);
    const assign = await call(jobRoute.action, {
      request: formRequest(
        `/jobs/${job.id}`,
        { intent: "assign", userId: shop.userIds.tech },
        shop.cookies.desk,
      ),
      params: { jobId: job.id },
    });
    expect(assign.status).toBe(302);
    const shown = await reveal("tech");
    expect(shown.status).toBe(200);
    expect(shown.data).toMatchObject({ passcode: "2468-secret" });
    expect((await reveal("desk")).status).toBe(403);

    // Through the repair to closing; a waiver lets it close unpaid; the passcode is gone afterwards.
    expect((await move(shop, job.id, "diagnosing", "tech")).status).toBe(302);
    expect((await quoteLabour(shop, job.id, "85.00")).status).toBe(302);
    for (const [to, role] of [
      ["awaiting-approval", "desk"],
      ["repairing", "desk"],
      ["testing", "tech"],
      ["ready", "tech"],
    ] as const) {
      expect((await move(shop, job.id, to, role)).status).toBe(302);
    }
    const refused = await move(shop, job.id, "closed", "desk");
    expect(refused.status).toBe(409);
    expect(JSON.stringify(refused.data)).toContain("not paid");
    const deskWaive = await call(jobRoute.action, {
      request: formRequest(`/jobs/${job.id}`, { intent: "waive", reason: "Goodwill" }, shop.cookies.desk),
      params: { jobId: job.id },
    });
    expect(deskWaive.status).toBe(403);
    const waive = await call(jobRoute.action, {
      request: formRequest(
        `/jobs/${job.id}`,
        { intent: "waive", reason: "Goodwill for a regular" },
        shop.cookies.owner,
      ),
      params: { jobId: job.id },
    });
    expect(waive.status).toBe(302);
    expect((await move(shop, job.id, "closed", "desk")).status).toBe(302);
    const closed = (await db.select().from(jobs).where(eq(jobs.id, job.id)).get())!;
    expect(closed.state).toBe("closed");
    expect(closed.passcodeSealed).toBeNull();
    const trail = await db.select().from(jobEvents).where(eq(jobEvents.jobId, job.id)).all();
    expect(trail.map((e) => e.toState)).toEqual([
      "received",
      "diagnosing",
      "awaiting-approval",
      "repairing",
      "testing",
      "ready",
      "closed",
    ]);
    expect(trail.every((e) => e.actorId)).toBe(true);
  });
});

describe("transitions through the route", () => {
  it("refuses an illegal move and a role's forbidden move, leaving the state alone", async () => {
    const shop = await createShopWithRoles();
    const job = await newJob(shop);
    const illegal = await move(shop, job.id, "ready", "owner");
    expect(illegal.status).toBe(409);
    const wrongRole = await move(shop, job.id, "diagnosing", "desk");
    expect(wrongRole.status).toBe(403);
    expect((await db.select().from(jobs).where(eq(jobs.id, job.id)).get())!.state).toBe("received");
  });

  it("answers 404 for another shop's job, to loader and action alike", async () => {
    const a = await createShopWithRoles("Tenant A");
    const b = await createShopWithRoles("Tenant B");
    const theirs = await newJob(b);
    const load = await call(jobRoute.loader, {
      request: getRequest(`/jobs/${theirs.id}`, a.cookies.owner),
      params: { jobId: theirs.id },
    });
    expect(load.status).toBe(404);
    expect((await move(a, theirs.id, "diagnosing", "owner")).status).toBe(404);
    expect((await db.select().from(jobs).where(eq(jobs.id, theirs.id)).get())!.state).toBe("received");
    const list = await call(jobsRoute.loader, { request: getRequest("/jobs", a.cookies.desk) });
    expect((list.data as { rows: Array<{ id: string }> }).rows.map((j) => j.id)).not.toContain(theirs.id);
  });
});

describe("job list", () => {
  type ListData = {
    rows: Array<{ id: string; number: number; state: string; closedAt: number | null }>;
    stations: Record<string, { count: number; numbers: number[]; oldestAt: number | null }>;
    state: string;
  };
  const list = async (shop: Shop, query = "") =>
    (await call(jobsRoute.loader, { request: getRequest(`/jobs${query}`, shop.cookies.desk) }))
      .data as ListData;

  it("filters by state in SQL, counts every state, and lists only the most recent closed jobs", async () => {
    const shop = await createShopWithRoles();
    const waiting = await newJob(shop);
    const later = await newJob(shop);
    const waitingSince = Date.now() - 5 * 86_400_000;
    await db
      .update(jobs)
      .set({ stateChangedAt: new Date(waitingSince) })
      .where(eq(jobs.id, waiting.id));
    // Years of closed jobs, written directly (the intake path is tested above).
    const base = later.number;
    // Closed in the order of their numbers, except the first one, which waited for parts and closed last.
    const closedAt = (i: number) => new Date(Date.UTC(2025, 0, 1) + (i === 0 ? 400 : i) * 86_400_000);
    const closedRows = Array.from({ length: CLOSED_JOBS_SHOWN + 5 }, (_, i) => ({
      id: `closed-${shop.shopId}-${i}`,
      shopId: shop.shopId,
      number: base + 1 + i,
      state: "closed" as const,
      stateChangedAt: closedAt(i),
      closedAt: closedAt(i),
    }));
    for (let i = 0; i < closedRows.length; i += 50) await db.insert(jobs).values(closedRows.slice(i, i + 50));

    const open = await list(shop);
    // Open jobs only, newest first; the station counts cover every state.
    expect(open.state).toBe("");
    expect(open.rows.map((r) => r.id)).toEqual([later.id, waiting.id]);
    // The job that has waited longest comes first, and the station's age is its wait.
    expect(open.stations.received).toEqual({
      count: 2,
      numbers: [waiting.number, later.number],
      oldestAt: waitingSince,
    });
    expect(open.stations.closed.count).toBe(CLOSED_JOBS_SHOWN + 5);
    // For the line's exit: the three closed last, by when they closed, not by number.
    expect(open.stations.closed.numbers).toEqual([base + 1, base + 205, base + 204]);
    expect(open.stations.diagnosing).toEqual({ count: 0, numbers: [], oldestAt: null });

    const closed = await list(shop, "?state=closed");
    expect(closed.state).toBe("closed");
    expect(closed.rows).toHaveLength(CLOSED_JOBS_SHOWN);
    expect(closed.rows.slice(0, 3).map((r) => r.number)).toEqual([base + 1, base + 205, base + 204]);
    expect(closed.rows.every((r) => r.state === "closed")).toBe(true);
    // Each closed row carries when it closed (the page's "Closed" column, which the table opens sorted by).
    expect(closed.rows[0].closedAt).toBe(closedAt(0).getTime());
    expect(closed.rows[1].closedAt).toBe(closedAt(CLOSED_JOBS_SHOWN + 4).getTime());
    expect(open.rows.every((r) => r.closedAt === null)).toBe(true);

    expect((await list(shop, "?state=received")).rows.map((r) => r.id)).toEqual([later.id, waiting.id]);
    // An unknown state is the default view, not an error.
    expect((await list(shop, "?state=nonsense")).rows.map((r) => r.id)).toEqual([later.id, waiting.id]);
  });
});

describe("quote, approval link and counter payment", () => {
  it("builds a quote with tax on the subtotal, e-mails an approval link, and the customer's approval moves the job", async () => {
    const shop = await createShopWithRoles();
    await db.update(shops).set({ taxRateBp: 825 }).where(eq(shops.id, shop.shopId));
    const job = await newJob(shop);
    expect((await move(shop, job.id, "diagnosing", "tech")).status).toBe(302);

    const saved = await call(jobQuote.action, {
      request: formRequest(
        `/jobs/${job.id}/quote`,
        {
          "lines[0].kind": "part",
          "lines[0].description": "Buck regulator",
          "lines[0].quantity": "2",
          "lines[0].unitPrice": "4.80",
          "lines[1].kind": "labour",
          "lines[1].description": "Bench labour",
          "lines[1].quantity": "1",
          "lines[1].unitPrice": "85.00",
          "lines[2].kind": "fee",
          "lines[2].description": "Diagnostic fee",
          "lines[2].quantity": "1",
          "lines[2].unitPrice": "45.00",
        },
        shop.cookies.desk,
      ),
      params: { jobId: job.id },
    });
    expect(saved.status).toBe(302);
    const quote = (await db.select().from(quotes).where(eq(quotes.jobId, job.id)).get())!;
    // 2 × 4.80 + 85.00 + 45.00 = 139.60; 8.25 % of 13 960 cents = 1151.7 → 1152 (half-up); total 151.12.
    expect(quote).toMatchObject({ subtotalMinor: 13960, taxMinor: 1152, totalMinor: 15112, number: 1 });

    const badQuote = await call(jobQuote.action, {
      request: formRequest(
        `/jobs/${job.id}/quote`,
        { "lines[0].description": "Part", "lines[0].quantity": "1", "lines[0].unitPrice": "abc" },
        shop.cookies.desk,
      ),
      params: { jobId: job.id },
    });
    expect(badQuote.status).toBe(400);
    expect((await db.select().from(quotes).where(eq(quotes.jobId, job.id)).all()).length).toBe(1);

    const techSend = await call(jobRoute.action, {
      request: formRequest(`/jobs/${job.id}`, { intent: "send-quote", quoteId: quote.id }, shop.cookies.tech),
      params: { jobId: job.id },
    });
    expect(techSend.status).toBe(403);
    const sent = await call(jobRoute.action, {
      request: formRequest(`/jobs/${job.id}`, { intent: "send-quote", quoteId: quote.id }, shop.cookies.desk),
      params: { jobId: job.id },
    });
    expect(sent.status).toBe(302);
    expect((await db.select().from(jobs).where(eq(jobs.id, job.id)).get())!.state).toBe("awaiting-approval");
    const customer = (await db.select().from(customers).where(eq(customers.id, job.customerId!)).get())!;
    const mail = (await db.select().from(outbox).where(eq(outbox.to, customer.email!)).all()).find((m) =>
      m.subject.includes("quote"),
    )!;
    const token = /\/q\/([a-z2-7]+)/.exec(mail.text)![1];
    expect(mail.html).toContain(`/q/${token}`);
    expect(token.length).toBeGreaterThanOrEqual(32);

    // A wrong token is 404 and shows nothing; the right one shows the quote without signing in.
    expect(
      (
        await call(quotePublic.loader, {
          request: getRequest("/q/aaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaa"),
          params: { token: "aaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaa" },
        })
      ).status,
    ).toBe(404);
    const shown = await call(quotePublic.loader, { request: getRequest(`/q/${token}`), params: { token } });
    expect(shown.status).toBe(200);
    expect(shown.data).toMatchObject({ quote: { totalMinor: 15112, status: "sent" } });

    const approved = await call(quotePublic.action, {
      request: formRequest(`/q/${token}`, { intent: "approve" }),
      params: { token },
    });
    expect(approved.status).toBe(302);
    const after = (await db.select().from(jobs).where(eq(jobs.id, job.id)).get())!;
    expect(after.state).toBe("repairing");
    const lastEvent = (await db.select().from(jobEvents).where(eq(jobEvents.jobId, job.id)).all()).at(-1)!;
    expect(lastEvent).toMatchObject({ toState: "repairing", actorKind: "customer", actorId: null });
    expect(lastEvent.note).toMatch(/^Quote \d+ approved by the customer$/);
    const invoice = (await db.select().from(invoices).where(eq(invoices.jobId, job.id)).get())!;
    expect(invoice).toMatchObject({ number: 1, totalMinor: 15112, status: "open" });
    // The same decision as the desk's (one code path): the quote decided and the answer in the audit log.
    const decided = (await db.select().from(quotes).where(eq(quotes.jobId, job.id)).get())!;
    expect(decided.status).toBe("approved");
    expect(decided.decidedAt).toBeInstanceOf(Date);
    const logged = await db
      .select()
      .from(auditEvents)
      .where(and(eq(auditEvents.subject, decided.id), eq(auditEvents.action, "quote.approved")))
      .all();
    expect(logged).toMatchObject([{ actorId: null, data: { by: "customer" } }]);

    // A second answer is refused.
    const again = await call(quotePublic.action, {
      request: formRequest(`/q/${token}`, { intent: "decline" }),
      params: { token },
    });
    expect(again.status).toBe(409);

    // A deposit, then the rest at the counter; an over-payment is refused with a message.
    const pay = (amount: string) =>
      call(jobRoute.action, {
        request: formRequest(
          `/jobs/${job.id}`,
          { intent: "counter-payment", amount, method: "cash" },
          shop.cookies.desk,
        ),
        params: { jobId: job.id },
      });
    expect((await pay("50.00")).status).toBe(302);
    const over = await pay("200.00");
    expect(over.status).toBe(400);
    expect((await pay("101.12")).status).toBe(302);
    const paid = (await db.select().from(invoices).where(eq(invoices.id, invoice.id)).get())!;
    expect(paid).toMatchObject({ status: "paid", paidMinor: 15112 });
    const receipts = (await db.select().from(outbox).where(eq(outbox.to, customer.email!)).all()).filter(
      (m) => m.subject.includes("receipt"),
    );
    expect(receipts.length).toBe(2);
  });

  it("treats an expired approval link as gone", async () => {
    const shop = await createShopWithRoles();
    const job = await newJob(shop);
    await move(shop, job.id, "diagnosing", "tech");
    await call(jobQuote.action, {
      request: formRequest(
        `/jobs/${job.id}/quote`,
        { "lines[0].description": "Labour", "lines[0].quantity": "1", "lines[0].unitPrice": "10" },
        shop.cookies.desk,
      ),
      params: { jobId: job.id },
    });
    const quote = (await db.select().from(quotes).where(eq(quotes.jobId, job.id)).get())!;
    await call(jobRoute.action, {
      request: formRequest(`/jobs/${job.id}`, { intent: "send-quote", quoteId: quote.id }, shop.cookies.desk),
      params: { jobId: job.id },
    });
    const customer = (await db.select().from(customers).where(eq(customers.id, job.customerId!)).get())!;
    const mail = (await db.select().from(outbox).where(eq(outbox.to, customer.email!)).all()).find((m) =>
      m.subject.includes("quote"),
    )!;
    const token = /\/q\/([a-z2-7]+)/.exec(mail.text)![1];
    await db
      .update(quotes)
      .set({ expiresAt: new Date(Date.now() - 1000) })
      .where(eq(quotes.id, quote.id));
    const res = await call(quotePublic.loader, { request: getRequest(`/q/${token}`), params: { token } });
    expect(res.status).toBe(410);
    const act = await call(quotePublic.action, {
      request: formRequest(`/q/${token}`, { intent: "approve" }),
      params: { token },
    });
    expect(act.status).toBe(410);
    expect((await db.select().from(jobs).where(eq(jobs.id, job.id)).get())!.state).toBe("awaiting-approval");
  });
});

describe("customer data", () => {
  it("exports everything to the owner only, and erasure keeps anonymised totals", async () => {
    const shop = await createShopWithRoles();
    const job = await newJob(shop, { passcode: "1111" });
    const customerId = job.customerId!;
    const deskExport = await call(customerExport.loader, {
      request: getRequest(`/customers/${customerId}/export`, shop.cookies.desk),
      params: { customerId },
    });
    expect(deskExport.status).toBe(403);
    const res = await call(customerExport.loader, {
      request: getRequest(`/customers/${customerId}/export`, shop.cookies.owner),
      params: { customerId },
    });
    expect(res.status).toBe(200);
    expect(res.response!.headers.get("Content-Disposition")).toContain("attachment");
    const body = await res.response!.json();
    expect(body.customer.name).toBe("Mara Quill");
    expect(body.jobs[0]).toMatchObject({ number: job.number, serial: "SN-000123", devicePasscodeHeld: true });
    expect(JSON.stringify(body)).not.toContain("1111");

    const other = await createShopWithRoles();
    expect(
      (
        await call(customerExport.loader, {
          request: getRequest(`/customers/${customerId}/export`, other.cookies.owner),
          params: { customerId },
        })
      ).status,
    ).toBe(404);

    const unconfirmed = await call(customerRoute.action, {
      request: formRequest(`/customers/${customerId}`, { intent: "erase", confirm: "" }, shop.cookies.owner),
      params: { customerId },
    });
    expect(unconfirmed.status).toBe(400);
    expect(
      (await db.select().from(customers).where(eq(customers.id, customerId)).get())!.erasedAt,
    ).toBeNull();
    const erased = await call(customerRoute.action, {
      request: formRequest(
        `/customers/${customerId}`,
        { intent: "erase", confirm: "ERASE" },
        shop.cookies.owner,
      ),
      params: { customerId },
    });
    expect(erased.status).toBe(302);
    const c = (await db.select().from(customers).where(eq(customers.id, customerId)).get())!;
    expect(c).toMatchObject({ name: "Erased customer", email: null, phone: null });
    const j = (await db.select().from(jobs).where(eq(jobs.id, job.id)).get())!;
    expect(j).toMatchObject({
      serial: "",
      complaint: "",
      passcodeSealed: null,
      number: job.number,
      diagnosticFeeMinor: 4500,
    });
    expect(j.anonymisedAt).toBeInstanceOf(Date);
  });

  it("erases closed jobs past the shop's retention period, and only those", async () => {
    const shop = await createShopWithRoles();
    await db.update(shops).set({ retentionDays: 30 }).where(eq(shops.id, shop.shopId));
    const old = await newJob(shop, { serial: "OLD-1" });
    const recent = await newJob(shop, { serial: "NEW-1" });
    const open = await newJob(shop, { serial: "OPEN-1" });
    const day = 86_400_000;
    await db
      .update(jobs)
      .set({ state: "closed", closedAt: new Date(Date.now() - 31 * day) })
      .where(eq(jobs.id, old.id));
    await db
      .update(jobs)
      .set({ state: "closed", closedAt: new Date(Date.now() - 29 * day) })
      .where(eq(jobs.id, recent.id));
    const result = await eraseExpiredPersonalData();
    expect(result.jobsErased).toBeGreaterThanOrEqual(1);
    const rows = await db.select().from(jobs).where(eq(jobs.shopId, shop.shopId)).all();
    const byId = new Map(rows.map((r) => [r.id, r]));
    expect(byId.get(old.id)!.serial).toBe("");
    expect(byId.get(recent.id)!.serial).toBe("NEW-1");
    expect(byId.get(open.id)!.serial).toBe("OPEN-1");
    expect(
      (await db.select().from(customers).where(eq(customers.id, old.customerId!)).get())!.erasedAt,
    ).toBeInstanceOf(Date);
    const logged = await db
      .select()
      .from(auditEvents)
      .where(and(eq(auditEvents.shopId, shop.shopId), eq(auditEvents.action, "retention.erased")))
      .all();
    expect(logged.length).toBe(1);
    // Run again: nothing left to do for this shop.
    await eraseExpiredPersonalData();
    expect(
      (
        await db
          .select()
          .from(auditEvents)
          .where(and(eq(auditEvents.shopId, shop.shopId), eq(auditEvents.action, "retention.erased")))
          .all()
      ).length,
    ).toBe(1);
  });
});

describe("decline, warranty comebacks, refunds and status e-mail", () => {
  async function quotedJob(shop: Shop) {
    const job = await newJob(shop);
    await move(shop, job.id, "diagnosing", "tech");
    await call(jobQuote.action, {
      request: formRequest(
        `/jobs/${job.id}/quote`,
        { "lines[0].description": "Bench labour", "lines[0].quantity": "1", "lines[0].unitPrice": "85.00" },
        shop.cookies.desk,
      ),
      params: { jobId: job.id },
    });
    const quote = (await db.select().from(quotes).where(eq(quotes.jobId, job.id)).get())!;
    await call(jobRoute.action, {
      request: formRequest(`/jobs/${job.id}`, { intent: "send-quote", quoteId: quote.id }, shop.cookies.desk),
      params: { jobId: job.id },
    });
    const customer = (await db.select().from(customers).where(eq(customers.id, job.customerId!)).get())!;
    const mail = (await db.select().from(outbox).where(eq(outbox.to, customer.email!)).all()).find((m) =>
      m.subject.includes("quote"),
    )!;
    return { job, quote, customer, token: /\/q\/([a-z2-7]+)/.exec(mail.text)![1] };
  }

  it("a declined quote bills the diagnostic fee, and the job closes only once that is paid", async () => {
    const shop = await createShopWithRoles();
    await db.update(shops).set({ taxRateBp: 825 }).where(eq(shops.id, shop.shopId));
    const { job, token } = await quotedJob(shop);
    const declined = await call(quotePublic.action, {
      request: formRequest(`/q/${token}`, { intent: "decline" }),
      params: { token },
    });
    expect(declined.status).toBe(302);
    expect((await db.select().from(jobs).where(eq(jobs.id, job.id)).get())!.state).toBe("declined");
    const invoice = (await db.select().from(invoices).where(eq(invoices.jobId, job.id)).get())!;
    // 45.00 at 8.25 % = 3.7125 → 3.71; total 48.71.
    expect(invoice).toMatchObject({ subtotalMinor: 4500, taxMinor: 371, totalMinor: 4871, status: "open" });
    expect((await move(shop, job.id, "closed", "desk")).status).toBe(409);
    await call(jobRoute.action, {
      request: formRequest(
        `/jobs/${job.id}`,
        { intent: "counter-payment", amount: "48.71", method: "card-terminal" },
        shop.cookies.desk,
      ),
      params: { jobId: job.id },
    });
    expect((await move(shop, job.id, "closed", "desk")).status).toBe(302);
  });

  it("opens a free warranty comeback inside the warranty period that skips approval", async () => {
    const shop = await createShopWithRoles();
    await db.update(shops).set({ warrantyDays: 90 }).where(eq(shops.id, shop.shopId));
    const original = await newJob(shop);
    await db
      .update(jobs)
      .set({ state: "closed", closedAt: new Date(Date.now() - 10 * 86_400_000) })
      .where(eq(jobs.id, original.id));
    const comeback = await newJob(shop, {
      warrantyOf: original.id,
      customerId: original.customerId!,
      name: "",
      email: "",
    });
    expect(comeback).toMatchObject({
      warrantyOfJobId: original.id,
      chargeable: false,
      diagnosticFeeMinor: 0,
    });
    expect(comeback.customerId).toBe(original.customerId);
    await move(shop, comeback.id, "diagnosing", "tech");
    expect((await move(shop, comeback.id, "repairing", "lead")).status).toBe(302);
    await move(shop, comeback.id, "testing", "tech");
    await move(shop, comeback.id, "ready", "tech");
    // Nothing is owed, so it closes without an invoice.
    expect((await move(shop, comeback.id, "closed", "desk")).status).toBe(302);

    // Past the warranty period the comeback is charged and needs approval like any job.
    await db
      .update(jobs)
      .set({ closedAt: new Date(Date.now() - 91 * 86_400_000) })
      .where(eq(jobs.id, original.id));
    const late = await newJob(shop, {
      warrantyOf: original.id,
      customerId: original.customerId!,
      name: "",
      email: "",
    });
    expect(late).toMatchObject({ chargeable: true, diagnosticFeeMinor: 4500 });
    await move(shop, late.id, "diagnosing", "tech");
    expect((await move(shop, late.id, "repairing", "lead")).status).toBe(409);
  });

  it("refunds only for the owner, through the route", async () => {
    const shop = await createShopWithRoles();
    const { job, token } = await quotedJob(shop);
    await call(quotePublic.action, {
      request: formRequest(`/q/${token}`, { intent: "approve" }),
      params: { token },
    });
    await call(jobRoute.action, {
      request: formRequest(
        `/jobs/${job.id}`,
        { intent: "counter-payment", amount: "85.00", method: "cash" },
        shop.cookies.desk,
      ),
      params: { jobId: job.id },
    });
    const { payments } = await import("~/server/schema.server");
    const invoice = (await db.select().from(invoices).where(eq(invoices.jobId, job.id)).get())!;
    const payment = (await db.select().from(payments).where(eq(payments.invoiceId, invoice.id)).get())!;
    const refund = (role: keyof Shop["cookies"], amount: string) =>
      call(jobRoute.action, {
        request: formRequest(
          `/jobs/${job.id}`,
          { intent: "refund", paymentId: payment.id, amount },
          shop.cookies[role],
        ),
        params: { jobId: job.id },
      });
    expect((await refund("desk", "10.00")).status).toBe(403);
    expect((await refund("owner", "90.00")).status).toBe(400);
    expect((await refund("owner", "10.00")).status).toBe(302);
    expect((await db.select().from(invoices).where(eq(invoices.id, invoice.id)).get())!).toMatchObject({
      status: "paid",
      refundedMinor: 1000,
    });
  });

  it("sends a chosen status e-mail only to a customer who agreed to contact", async () => {
    const shop = await createShopWithRoles();
    const agreed = await newJob(shop);
    const send = (jobId: string, role: keyof Shop["cookies"] = "desk") =>
      call(jobRoute.action, {
        request: formRequest(`/jobs/${jobId}`, { intent: "email-update", kind: "ready" }, shop.cookies[role]),
        params: { jobId },
      });
    expect((await send(agreed.id, "tech")).status).toBe(403);
    expect((await send(agreed.id)).status).toBe(302);
    const customer = (await db.select().from(customers).where(eq(customers.id, agreed.customerId!)).get())!;
    const ready = (await db.select().from(outbox).where(eq(outbox.to, customer.email!)).all()).find((m) =>
      m.subject.includes("ready for pickup"),
    )!;
    expect(ready.text).toContain(`job ${agreed.number}`);
    expect(ready.html).toContain("Ready for pickup");
    const refused = await newJob(shop, { consentToContact: "" });
    const res = await send(refused.id);
    expect(res.status).toBe(400);
    expect(JSON.stringify(res.data)).toContain("did not agree to be contacted");
  });
});
