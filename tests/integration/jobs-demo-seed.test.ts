import { eq } from "drizzle-orm";
import { expect, it } from "vitest";
import { totalsOf } from "~/lib/money";
import { db } from "~/server/db.server";
import { invoices, jobs, quotes } from "~/server/schema.server";
import { seedDemo } from "../../seed/demo.server";
import { seedDemoJobs } from "../../seed/demo-jobs.server";

it("seeds demo jobs once, with quote and invoice totals that follow the money rules", async () => {
  // seedDemo calls seedDemoJobs itself; a second call adds nothing.
  await seedDemo(db);
  expect(await seedDemoJobs(db)).toEqual({ created: false });
  const rows = await db.select().from(jobs).where(eq(jobs.shopId, "demo-harbor")).all();
  // Open jobs are numbered from 1; the invented history's closed jobs from 5001.
  const open = rows.map((r) => r.number).filter((n) => n < 5000);
  expect(open.sort((a, b) => a - b)).toEqual([1, 2, 3, 4, 5, 6, 7]);
  for (const q of await db.select().from(quotes).where(eq(quotes.shopId, "demo-harbor")).all()) {
    const expected = totalsOf(
      [
        { quantity: 1, unitMinor: 480 },
        { quantity: 1, unitMinor: 8500 },
        { quantity: 1, unitMinor: 4500 },
      ],
      q.taxRateBp,
    );
    expect({ subtotalMinor: q.subtotalMinor, taxMinor: q.taxMinor, totalMinor: q.totalMinor }).toEqual(
      expected,
    );
  }
  const declined = (await db.select().from(invoices).where(eq(invoices.id, "demo-invoice-7")).get())!;
  expect(declined).toMatchObject(totalsOf([{ quantity: 1, unitMinor: 4500 }], 825));
});
