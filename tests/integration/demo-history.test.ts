import { sql } from "drizzle-orm";
import { describe, expect, it } from "vitest";
import { parseInsightsFilter } from "~/lib/insights-filters";
import { db } from "~/server/db.server";
import { getEscalations, getHotSpots, getPartsUsage, getRepeatFailures } from "~/server/insights.server";
import { seedDemoHistory } from "../../seed/demo-history.server";
import { seedDemo } from "../../seed/demo.server";

// Only the history's own rows (other demo seeds add open jobs of their own).
const count = async (table: string, prefix: string) =>
  Number(
    (
      await db.all<{ n: number }>(
        sql.raw(`SELECT COUNT(*) AS n FROM ${table} WHERE shop_id = 'demo-harbor' AND id LIKE '${prefix}%'`),
      )
    )[0].n,
  );

describe("demo history", () => {
  // The PRNG seed is fixed and every date is relative to the day of seeding, so these counts never change.
  it("adds the same invented history every time, once", async () => {
    await seedDemo(db); // calls seedDemoHistory
    const counted = async () => [
      await count("runs", "demo-run-"),
      await count("readings", "demo-rd-"),
      await count("findings", "demo-finding-"),
      await count("jobs", "demo-job-h0"),
    ];
    expect(await counted()).toEqual([389, 2421, 389, 389]);
    const again = await seedDemoHistory(db);
    expect(again).toMatchObject({ created: false, runs: 389, readings: 2421, findings: 389, jobs: 389 });
    expect(await counted()).toEqual([389, 2421, 389, 389]);
  });

  it("gives the insights pages something to show", async () => {
    const { filter } = parseInsightsFilter(new URLSearchParams(""));
    const hot = await getHotSpots(db, "demo-harbor", filter);
    expect(hot.filter((h) => h.failures > 0).length).toBeGreaterThan(10);
    const esc = await getEscalations(db, "demo-harbor", filter);
    expect(esc.escalated).toBeGreaterThan(0);
    const rep = await getRepeatFailures(db, "demo-harbor", filter);
    expect(rep.repeats).toBeGreaterThan(0);
    expect(rep.list.every((r) => r.daysApart <= 30)).toBe(true);
    // Parts are recorded as the walker records them (reference designators) and described from the map.
    const parts = await getPartsUsage(db, "demo-harbor", filter);
    expect(parts.parts.length).toBeGreaterThan(10);
    expect(parts.parts.every((p) => /^[A-Z]{1,4}\d{1,5}[A-Z]?$/.test(p.refdes))).toBe(true);
    expect(new Set(parts.parts.map((p) => p.boardLabel))).toEqual(
      new Set(["OM-5150 rev C", "OM-5130 rev A"]),
    );
    expect(parts.parts.find((p) => p.boardLabel === "OM-5150 rev C" && p.refdes === "R362")).toMatchObject({
      name: "3.3 V standby enable resistor",
      value: "4K7",
      package: "0201",
    });
  });
});
