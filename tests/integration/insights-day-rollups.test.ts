import { and, eq, sql } from "drizzle-orm";
import { afterEach, beforeAll, describe, expect, it } from "vitest";
import { parseInsightsFilter } from "~/lib/insights-filters";
import { client, db, installRollupTriggers } from "~/server/db.server";
import {
  getEscalations,
  getFirstTimeFix,
  getHotSpots,
  getPartsUsage,
  getStrategyStats,
} from "~/server/insights.server";
import { DAY_ROLLUPS, findings, ROLLUP_BACKFILL, readings, runs } from "~/server/schema.server";
import { seedDemo } from "../../seed/demo.server";

// The daily rollups are sums kept by triggers; an unfiltered insights view sums them instead of counting the
// rows. Both ways must give the same figures, after any write the product (or anyone) makes to the rows.
const SHOP = "demo-harbor";
const DAY_MS = 86_400_000;

/** Every rollup's rows with something counted, in key order. */
async function rollupRows() {
  const out: Record<string, unknown[]> = {};
  for (const r of DAY_ROLLUPS) {
    const keys = Object.keys(r.keys).join(", ");
    const values = Object.keys(r.values);
    out[r.table] = await db.all(
      sql.raw(
        `SELECT * FROM ${r.table} WHERE ${values.map((v) => `${v} <> 0`).join(" OR ")} ORDER BY ${keys}`,
      ),
    );
  }
  return out;
}

/** The hot spots, the runs page's statistics and the parts through the rollups and from the rows only. */
async function bothWays(query: string, now: number) {
  const f = parseInsightsFilter(new URLSearchParams(query), now).filter;
  const all = async () => ({
    hot: await getHotSpots(db, SHOP, f),
    strategies: await getStrategyStats(db, SHOP, f),
    escalations: await getEscalations(db, SHOP, f),
    firstTime: await getFirstTimeFix(db, SHOP, f),
    parts: await getPartsUsage(db, SHOP, f, now),
  });
  const rolled = await all();
  process.env.INSIGHTS_ROLLUPS = "off";
  const raw = await all();
  delete process.env.INSIGHTS_ROLLUPS;
  return { rolled, raw };
}

async function expectSameFiguresBothWays() {
  const now = Date.now();
  const day = (ms: number) => new Date(ms).toISOString().slice(0, 10);
  // The default window (the last 365 days) and a shorter one whose ends cut through the demo's history.
  for (const q of ["", `from=${day(now - 40 * DAY_MS)}&to=${day(now - 3 * DAY_MS)}`]) {
    const { rolled, raw } = await bothWays(q, now);
    expect(rolled).toEqual(raw);
    // Not empty: the comparison is about real figures.
    expect(rolled.strategies.find((s) => s.strategy === "all")!.runs).toBeGreaterThan(q ? 5 : 50);
    expect(rolled.firstTime.length).toBeGreaterThan(0);
    expect(rolled.hot.filter((h) => h.failures > 0).length).toBeGreaterThan(q ? 2 : 10);
    expect(rolled.parts.parts.length).toBeGreaterThan(q ? 0 : 5);
  }
}

beforeAll(async () => {
  // The demo's history: hundreds of runs over the past months, written by plain inserts (the insert triggers).
  await seedDemo(db);
});

afterEach(() => {
  delete process.env.INSIGHTS_ROLLUPS;
});

describe("daily insights rollups", () => {
  it("give the runs page the same figures as counting the rows", async () => {
    await expectSameFiguresBothWays();
  });

  it("equal a recount after inserts, updates and deletes of runs, readings and findings", async () => {
    const some = await db
      .select({ id: runs.id })
      .from(runs)
      .where(eq(runs.shopId, SHOP))
      .orderBy(runs.id)
      .limit(12)
      .all();
    expect(some.length).toBe(12);
    const before = await rollupRows();
    // Updates of every watched kind: isolation undone, escalation, a move to another day, a reading skipped (the
    // run's reading count changes), a strategy change, a finding's fix and re-test outcome, its node and kind,
    // a move to another board, deletes.
    await db.update(runs).set({ status: "open", isolatedAt: null }).where(eq(runs.id, some[0].id));
    await db.update(runs).set({ escalatedAt: new Date() }).where(eq(runs.id, some[1].id));
    await db
      .update(runs)
      .set({ startedAt: new Date(Date.now() - 9 * DAY_MS) })
      .where(eq(runs.id, some[2].id));
    const rd = await db.select().from(readings).where(eq(readings.runId, some[3].id)).limit(1).get();
    expect(rd).toBeTruthy();
    await db.update(readings).set({ skipped: true }).where(eq(readings.id, rd!.id));
    await db.update(runs).set({ strategy: "order" }).where(eq(runs.id, some[4].id));
    await db
      .update(findings)
      .set({ fixKind: "reflow", outcome: "powers-on", partsUsed: ["U9", "C12"] })
      .where(eq(findings.runId, some[5].id));
    await db.delete(findings).where(eq(findings.runId, some[6].id));
    await db.delete(readings).where(eq(readings.runId, some[7].id));
    await db.delete(runs).where(and(eq(runs.id, some[8].id), eq(runs.shopId, SHOP)));
    await db.update(runs).set({ boardId: "demo-board-om5130" }).where(eq(runs.id, some[10].id));
    await db
      .update(findings)
      .set({ nodeId: "moved-node", kind: "short" })
      .where(eq(findings.runId, some[11].id));
    // A run whose finding counts as a hot spot's failure is reopened: the failure no longer counts.
    const failed = await db.get<{ run_id: string }>(
      sql`SELECT fd.run_id FROM findings fd WHERE fd.shop_id = ${SHOP} AND fd.kind IN ('part', 'short')
          AND fd.node_first = 1 AND fd.run_status <> 'open' ORDER BY fd.run_id DESC LIMIT 1`,
    );
    expect(failed).toBeTruthy();
    await db.update(runs).set({ status: "open", isolatedAt: null }).where(eq(runs.id, failed!.run_id));
    // A fix type only one finding ever had, changed again: its rollup row is left at zero fixes.
    await db
      .update(findings)
      .set({ fixKind: "one-off-kind", outcome: "powers-on" })
      .where(eq(findings.runId, some[9].id));
    await db.update(findings).set({ fixKind: "replace" }).where(eq(findings.runId, some[9].id));

    const kept = await rollupRows();
    // The writes moved counts (the test would prove nothing if they had not).
    expect(kept).not.toEqual(before);
    // Rows that moved away leave zero rows behind: the pages still show what the rows show.
    await expectSameFiguresBothWays();
    // Recount from scratch (what installing the triggers does), and compare.
    await db.transaction(async (tx) => {
      for (const stmt of ROLLUP_BACKFILL) await tx.run(sql.raw(stmt));
    });
    expect(await rollupRows()).toEqual(kept);
  });

  it("count a run started a fraction of a millisecond before midnight on its own day", async () => {
    const run = await db.select().from(runs).where(eq(runs.shopId, SHOP)).limit(1).get();
    const midnight = Math.floor(Date.now() / DAY_MS) * DAY_MS - 5 * DAY_MS;
    // Written as a real number, as a column default of unixepoch('subsec') * 1000 would store it.
    await db.run(sql`UPDATE runs SET created_at = ${midnight - 0.0002} WHERE id = ${run!.id}`);
    const day = (ms: number) => new Date(ms).toISOString().slice(0, 10);
    for (const q of [`from=${day(midnight)}&to=${day(Date.now())}`, `to=${day(midnight - DAY_MS)}`]) {
      const { rolled, raw } = await bothWays(q, Date.now());
      expect(rolled).toEqual(raw);
    }
    // Its day is a whole number, shared with the other runs of that day, not a fraction of its own.
    const [row] = await db.all<{ fractional: number; days: number }>(
      sql`SELECT SUM(day <> CAST(day AS INTEGER)) AS fractional, COUNT(*) AS days FROM rollup_day_strategies`,
    );
    expect(row.days).toBeGreaterThan(0);
    expect(Number(row.fractional)).toBe(0);
  });

  it("leave a filtered view to the rows", async () => {
    const now = Date.now();
    const board = await bothWays("board=demo-board-om5150", now);
    expect(board.rolled).toEqual(board.raw);
    const whole = await bothWays("", now);
    // Spoiling the rollups changes an unfiltered view and not a filtered one: only the former reads them.
    await db.run(sql`UPDATE rollup_day_strategies SET runs = runs + 1000 WHERE shop_id = ${SHOP}`);
    const f = (q: string) => parseInsightsFilter(new URLSearchParams(q), now).filter;
    expect(await getStrategyStats(db, SHOP, f(""))).not.toEqual(whole.raw.strategies);
    expect(await getStrategyStats(db, SHOP, f("board=demo-board-om5150"))).toEqual(board.raw.strategies);
  });

  it("are recounted when the server starts after a migration (which may have rebuilt a rollup table)", async () => {
    const counted = await rollupRows();
    expect(counted.rollup_day_node_fails.length).toBeGreaterThan(0);
    // As a migration that rebuilt the table would leave it: empty, its triggers unchanged.
    await db.run(sql`DELETE FROM rollup_day_node_fails`);
    await installRollupTriggers(client, false);
    expect((await rollupRows()).rollup_day_node_fails).toEqual([]);
    await installRollupTriggers(client, true);
    expect((await rollupRows()).rollup_day_node_fails).toEqual(counted.rollup_day_node_fails);
  });
});
