import { and, eq } from "drizzle-orm";
import { describe, expect, it } from "vitest";
import { bpToPercent, percentToBp } from "~/lib/shop-settings";
import * as jobRoute from "~/routes/job";
import * as jobNew from "~/routes/job-new";
import * as jobQuote from "~/routes/job-quote";
import * as jobTag from "~/routes/job-tag";
import * as settings from "~/routes/settings";
import { db } from "~/server/db.server";
import { auditEvents, jobs, quotes, shops } from "~/server/schema.server";
import { createShopWithRoles } from "../support/fixtures";
import { call, formRequest, getRequest } from "../support/requests";

// The owner's money and terms on the Shop settings page, against the test's SQLite file: what is saved, what is
// refused (and then nothing is written), and where the values are used: the quote's tax and the intake terms.

type Shop = Awaited<ReturnType<typeof createShopWithRoles>>;

const valid = {
  intent: "shop-terms",
  taxPercent: "8.25",
  currency: "EUR",
  warrantyDays: "180",
  retentionDays: "1095",
  unclaimedDays: "45",
};

const save = (shop: Shop, fields: Record<string, string>, role: keyof Shop["cookies"] = "owner") =>
  call(settings.action, { request: formRequest("/settings", fields, shop.cookies[role]) });

const shopRow = async (shop: Shop) => (await db.select().from(shops).where(eq(shops.id, shop.shopId)).get())!;

describe("tax rate as a percent", () => {
  it("converts exactly to basis points and back", () => {
    expect(percentToBp("8.25")).toEqual({ ok: true, bp: 825 });
    // 0.07 × 100 is 7.000000000000001 in floating point; the string conversion has no such error.
    expect(percentToBp("0.07")).toEqual({ ok: true, bp: 7 });
    expect(percentToBp("19")).toEqual({ ok: true, bp: 1900 });
    expect(percentToBp("7,5 %")).toEqual({ ok: true, bp: 750 });
    expect(percentToBp("30")).toEqual({ ok: true, bp: 3000 });
    expect(percentToBp("30.01").ok).toBe(false);
    expect(percentToBp("8.255").ok).toBe(false);
    expect(percentToBp("-1").ok).toBe(false);
    expect(percentToBp("").ok).toBe(false);
    expect(bpToPercent(825)).toBe("8.25");
    expect(bpToPercent(850)).toBe("8.5");
    expect(bpToPercent(1900)).toBe("19");
    expect(bpToPercent(7)).toBe("0.07");
    expect(bpToPercent(0)).toBe("0");
  });
});

describe("shop settings: money and terms", () => {
  it("saves valid values for the owner, audits the change, and shows them back", async () => {
    const shop = await createShopWithRoles("Settings Save");
    const res = await save(shop, valid);
    expect(res.status).toBe(302);
    expect(await shopRow(shop)).toMatchObject({
      taxRateBp: 825,
      currency: "EUR",
      warrantyDays: 180,
      retentionDays: 1095,
      unclaimedDays: 45,
    });
    const logged = await db
      .select()
      .from(auditEvents)
      .where(and(eq(auditEvents.shopId, shop.shopId), eq(auditEvents.action, "shop.terms-changed")))
      .all();
    expect(logged).toHaveLength(1);
    expect(logged[0].actorId).toBe(shop.userIds.owner);
    expect(logged[0].data).toMatchObject({
      taxRateBp: { from: 0, to: 825 },
      currency: { from: "USD", to: "EUR" },
      unclaimedDays: { from: 60, to: 45 },
    });

    const page = await call(settings.loader, { request: getRequest("/settings", shop.cookies.owner) });
    expect(page.data).toMatchObject({
      shop: {
        taxPercent: "8.25",
        currency: "EUR",
        warrantyDays: 180,
        retentionDays: 1095,
        unclaimedDays: 45,
      },
      links: { meters: true, tokens: true },
    });

    // The same values again change nothing and log nothing.
    expect((await save(shop, valid)).status).toBe(302);
    expect(
      (
        await db
          .select()
          .from(auditEvents)
          .where(and(eq(auditEvents.shopId, shop.shopId), eq(auditEvents.action, "shop.terms-changed")))
          .all()
      ).length,
    ).toBe(1);
  });

  it("refuses out-of-range and malformed values with a message beside the field, writing nothing", async () => {
    const shop = await createShopWithRoles("Settings Refuse");
    const before = await shopRow(shop);
    const cases: Array<[Record<string, string>, string, string]> = [
      [{ taxPercent: "31" }, "taxPercent", "from 0 to 30 %"],
      [{ taxPercent: "8.255" }, "taxPercent", "at most two decimals"],
      [{ taxPercent: "eight" }, "taxPercent", "not a percentage"],
      [{ taxPercent: "" }, "taxPercent", "Enter the tax rate"],
      [{ currency: "XYZ" }, "currency", "Pick a currency"],
      [{ warrantyDays: "731" }, "warrantyDays", "at most 730 days"],
      [{ warrantyDays: "-1" }, "warrantyDays", "at least 0 days"],
      [{ warrantyDays: "12.5" }, "warrantyDays", "whole days"],
      [{ retentionDays: "29" }, "retentionDays", "at least 30 days"],
      [{ retentionDays: "3651" }, "retentionDays", "at most 3650 days"],
      [{ unclaimedDays: "13" }, "unclaimedDays", "at least 14 days"],
      [{ unclaimedDays: "366" }, "unclaimedDays", "at most 365 days"],
      [{ unclaimedDays: "" }, "unclaimedDays", "Enter the time unclaimed devices are kept"],
      // Personal data must outlast the warranty, or a comeback could not find its customer.
      [{ warrantyDays: "365", retentionDays: "200" }, "retentionDays", "at least as long as the warranty"],
    ];
    for (const [change, field, message] of cases) {
      const res = await save(shop, { ...valid, ...change });
      expect(res.status, JSON.stringify(change)).toBe(400);
      const errors = (res.data as { result: { error: Record<string, string[]> } }).result.error;
      expect(errors[field]?.join(" "), JSON.stringify(change)).toContain(message);
    }
    // Only the owner manages the shop.
    for (const role of ["lead", "tech", "desk"] as const) {
      expect((await save(shop, valid, role)).status).toBe(403);
    }
    expect(await shopRow(shop)).toEqual(before);
    expect(
      await db
        .select()
        .from(auditEvents)
        .where(and(eq(auditEvents.shopId, shop.shopId), eq(auditEvents.action, "shop.terms-changed")))
        .all(),
    ).toEqual([]);
  });

  it("keeps the currency while jobs billed in it are open", async () => {
    const shop = await createShopWithRoles("Settings Currency");
    const job = await intake(shop);
    const before = await shopRow(shop);
    const res = await save(shop, { ...valid, currency: "GBP" });
    expect(res.status).toBe(409);
    expect(JSON.stringify(res.data)).toContain("1 open job is billed in USD");
    expect(await shopRow(shop)).toEqual(before);
    // Once the job is closed the shop may switch.
    await db.update(jobs).set({ state: "closed", closedAt: new Date() }).where(eq(jobs.id, job.id));
    expect((await save(shop, { ...valid, currency: "GBP" })).status).toBe(302);
    expect((await shopRow(shop)).currency).toBe("GBP");
  });

  it("prices a new quote at the saved tax rate", async () => {
    const shop = await createShopWithRoles("Settings Tax");
    expect((await save(shop, { ...valid, currency: "USD", taxPercent: "7.25" })).status).toBe(302);
    const job = await intake(shop);
    await call(jobRoute.action, {
      request: formRequest(`/jobs/${job.id}`, { intent: "move", to: "diagnosing" }, shop.cookies.tech),
      params: { jobId: job.id },
    });
    const saved = await call(jobQuote.action, {
      request: formRequest(
        `/jobs/${job.id}/quote`,
        { "lines[0].description": "Bench labour", "lines[0].quantity": "1", "lines[0].unitPrice": "123.45" },
        shop.cookies.desk,
      ),
      params: { jobId: job.id },
    });
    expect(saved.status).toBe(302);
    const quote = (await db.select().from(quotes).where(eq(quotes.jobId, job.id)).get())!;
    // 7.25 % of 12 345 cents = 895.0125 → 895 (half-up); total 132.40.
    expect(quote).toMatchObject({ taxRateBp: 725, subtotalMinor: 12345, taxMinor: 895, totalMinor: 13240 });
  });

  it("puts the shop's unclaimed-device days into the intake terms, the job and its receipt", async () => {
    const shop = await createShopWithRoles("Settings Unclaimed");
    expect((await save(shop, { ...valid, currency: "USD", unclaimedDays: "21" })).status).toBe(302);
    const form = await call(jobNew.loader, { request: getRequest("/jobs/new", shop.cookies.desk) });
    const terms = (form.data as { terms: string[] }).terms;
    expect(terms.join(" ")).toContain("within 21 days");
    expect(terms.join(" ")).not.toContain("60 days");
    const job = await intake(shop);
    expect(job.unclaimedDays).toBe(21);
    // A later change does not rewrite what this customer accepted.
    expect((await save(shop, { ...valid, currency: "USD", unclaimedDays: "90" })).status).toBe(302);
    const tag = await call(jobTag.loader, {
      request: getRequest(`/jobs/${job.id}/tag`, shop.cookies.desk),
      params: { jobId: job.id },
    });
    expect((tag.data as { job: { unclaimedDays: number } }).job.unclaimedDays).toBe(21);
  });
});

async function intake(shop: Shop) {
  const res = await call(jobNew.action, {
    request: formRequest(
      "/jobs/new",
      {
        name: "Tobin Vale",
        email: `tobin-${Math.random().toString(36).slice(2)}@customer.test`,
        consentToContact: "on",
        boardId: shop.boardId,
        serial: "SN-TERMS",
        complaint: "No backlight",
        diagnosticFee: "40.00",
        termsAccepted: "on",
      },
      shop.cookies.desk,
    ),
  });
  expect(res.status).toBe(302);
  const id = res.response!.headers.get("Location")!.split("/").pop()!;
  return (await db.select().from(jobs).where(eq(jobs.id, id)).get())!;
}
