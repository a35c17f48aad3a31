import { parse } from "csv-parse/sync";
import { beforeAll, describe, expect, it } from "vitest";
import { failureRate } from "~/lib/engine";
import { parseInsightsFilter } from "~/lib/insights-filters";
import * as apiRoute from "~/routes/api-v1-insights";
import * as exportRoute from "~/routes/insights-export";
import * as hotSpotsRoute from "~/routes/insights";
import * as mapRoute from "~/routes/insights-map";
import * as partsRoute from "~/routes/insights-parts";
import * as runsRoute from "~/routes/insights-runs";
import { db } from "~/server/db.server";
import {
  getEscalations,
  getFirstTimeFix,
  getHotSpots,
  getPartsUsage,
  getRepeatFailures,
  getStrategyStats,
  type HotSpot,
} from "~/server/insights.server";
import { toCsv } from "~/server/insights-tables.server";
import { getFindingPriors } from "~/server/priors.server";
import { newId } from "~/server/ids.server";
import { findings, maps, mapVersions, runs } from "~/server/schema.server";
import { createShopWithRoles } from "../support/fixtures";
import { at, createInsightsFixture, DOC_A } from "../support/insights-fixture";
import { call, getRequest } from "../support/requests";

// Every expected number below is counted by hand from tests/support/insights-fixture.ts.

let fx: Awaited<ReturnType<typeof createInsightsFixture>>;
const RANGE = "from=2026-01-01&to=2026-03-31";
const filterOf = (q: string) => parseInsightsFilter(new URLSearchParams(q)).filter;
const pick = (rows: HotSpot[], nodeId: string) => rows.find((r) => r.nodeId === nodeId);
const counts = (rows: HotSpot[]) =>
  Object.fromEntries(rows.map((r) => [r.nodeId, `${r.failures}/${r.runs}`]));

beforeAll(async () => {
  fx = await createInsightsFixture();
});

describe("hot spots", () => {
  it("counts runs ending at a node over runs on versions that contain it", async () => {
    const rows = await getHotSpots(db, fx.shopId, filterOf(`${RANGE}&board=${fx.boardId}`));
    // 15 ended runs in range (A1–A10, B1–B5); the open run A11 and the 2025 run are out. u3/v3 exist only in B.
    expect(counts(rows)).toEqual({
      u1: "5/15",
      u3: "2/5",
      v1: "1/15",
      vin: "0/15",
      u2: "0/15",
      v2: "0/15",
      v3: "0/5",
    });
    expect(rows.map((r) => r.nodeId).slice(0, 3)).toEqual(["u1", "u3", "v1"]);
    expect(pick(rows, "v1")?.findingKind).toBe("short");
    const u1 = pick(rows, "u1")!;
    const w = failureRate(5, 15);
    expect(w.ok && [u1.rate, u1.low, u1.high]).toEqual(w.ok && [w.value.rate, w.value.low, w.value.high]);
    expect(rows.every((r, i) => i === 0 || rows[i - 1].low >= r.low)).toBe(true);
  });

  it("filters by technician, outcome and date", async () => {
    const lead = await getHotSpots(
      db,
      fx.shopId,
      filterOf(`${RANGE}&board=${fx.boardId}&tech=${fx.userIds.lead}`),
    );
    expect(counts(lead)).toMatchObject({ u1: "1/5", u3: "2/5", vin: "0/5" });
    const tech = await getHotSpots(
      db,
      fx.shopId,
      filterOf(`${RANGE}&board=${fx.boardId}&tech=${fx.userIds.tech}`),
    );
    expect(counts(tech)).toEqual({ u1: "4/10", v1: "1/10", vin: "0/10", u2: "0/10", v2: "0/10" });
    const dead = await getHotSpots(
      db,
      fx.shopId,
      filterOf(`${RANGE}&board=${fx.boardId}&outcome=still-dead`),
    );
    expect(counts(dead)).toMatchObject({ u1: "1/1", v1: "0/1" });
    const feb = await getHotSpots(
      db,
      fx.shopId,
      filterOf(`from=2026-02-01&to=2026-03-31&board=${fx.boardId}`),
    );
    expect(counts(feb)).toMatchObject({ u1: "1/5", u3: "2/5" });
    const all = await getHotSpots(db, fx.shopId, filterOf("from=2025-01-01&to=2026-03-31"));
    // Without a board filter the other revision appears as its own board; the 2025 run now counts.
    expect(
      all
        .filter((r) => r.boardId === fx.board2)
        .map((r) => `${r.nodeId}:${r.failures}/${r.runs}`)
        .sort(),
    ).toEqual(["bin:0/3", "bx:2/3", "nv1:1/3"]);
    expect(
      pick(
        all.filter((r) => r.boardId === fx.boardId),
        "u2",
      )?.failures,
    ).toBe(1);
  });

  it("never shows another shop's runs", async () => {
    const other = await createShopWithRoles("Other Shop");
    expect(await getHotSpots(db, other.shopId, filterOf(RANGE))).toEqual([]);
  });
});

describe("runs", () => {
  it("gives time to isolation and readings per run by strategy (nearest-rank percentiles)", async () => {
    const rows = await getStrategyStats(db, fx.shopId, filterOf(`${RANGE}&board=${fx.boardId}`));
    const min = 60_000;
    expect(rows).toEqual([
      // order: isolated in 1, 2, 3, 4, 10 min with 3, 4, 5, 6, 7 readings (A3's skipped reading and correction left out)
      {
        strategy: "order",
        runs: 11,
        isolated: 5,
        medianMs: 3 * min,
        p90Ms: 10 * min,
        medianReadings: 5,
        meanReadings: 5,
      },
      // split: 2, 4, 6 min with 2, 3, 4 readings
      {
        strategy: "split",
        runs: 5,
        isolated: 3,
        medianMs: 4 * min,
        p90Ms: 6 * min,
        medianReadings: 3,
        meanReadings: 3,
      },
      {
        strategy: "all",
        runs: 16,
        isolated: 8,
        medianMs: 3 * min,
        p90Ms: 10 * min,
        medianReadings: 4,
        meanReadings: 4.25,
      },
    ]);
  });

  it("gives the escalation rate and the last net read before each escalation", async () => {
    const e = await getEscalations(db, fx.shopId, filterOf(`${RANGE}&board=${fx.boardId}`));
    expect([e.runs, e.escalated]).toEqual([16, 3]);
    expect(e.spots.map((s) => [s.netId, s.netName, s.escalations])).toEqual([
      [null, "Before the first reading", 1],
      ["v1", "V1", 1],
      ["vin", "VIN", 1],
    ]);
  });

  it("finds repeat failures within 30 days on the same serial number", async () => {
    const r = await getRepeatFailures(db, fx.shopId, filterOf(`${RANGE}&board=${fx.boardId}`));
    // SN-1 returned after 24 days (repeat); SN-2 after 49 days (not); SN-3's first job was not fixed (not).
    expect([r.fixedJobs, r.repeats]).toEqual([5, 1]);
    expect(r.list).toEqual([
      { serial: "SN-1", boardLabel: "FX-100 rev A", firstJob: 100, nextJob: 103, daysApart: 24 },
    ]);
  });

  it("gives the first-time-fix rate per fix type, a repeat failure not counting", async () => {
    const rows = await getFirstTimeFix(db, fx.shopId, filterOf(`${RANGE}&board=${fx.boardId}`));
    expect(rows.map((r) => [r.fixKind, r.fixes, r.firstTime])).toEqual([
      ["replace", 7, 5],
      ["reflow", 1, 1],
    ]);
  });
});

describe("parts to stock", () => {
  it("counts parts per month and forecasts the next month by exponential smoothing", async () => {
    const p = await getPartsUsage(
      db,
      fx.shopId,
      filterOf(`${RANGE}&board=${fx.boardId}`),
      Date.parse("2026-04-15"),
    );
    expect(p.months).toEqual(["2026-01", "2026-02", "2026-03"]);
    expect(p.nextMonth).toBe("2026-04");
    // α = 0.5: [4,0,0] → 4, 2, 1; [2,0,0] → 0.5; [0,2,0] → 0, 1, 0.5 (Hyndman & Athanasopoulos, FPP3 §8.1).
    const a = { boardId: fx.boardId, boardLabel: "FX-100 rev A" };
    expect(p.parts).toEqual([
      {
        ...a,
        refdes: "U1",
        name: "Main buck",
        value: "3 A buck",
        package: "QFN-16",
        perMonth: [4, 0, 0],
        total: 4,
        forecast: 1,
        stock: 1,
      },
      // Fitted twice in one fix (A5); not a node of the map, so no value or package to show.
      {
        ...a,
        refdes: "C12",
        name: null,
        value: null,
        package: null,
        perMonth: [2, 0, 0],
        total: 2,
        forecast: 0.5,
        stock: 1,
      },
      {
        ...a,
        refdes: "U3",
        name: "Aux switch",
        value: null,
        package: "SOT-23",
        perMonth: [0, 2, 0],
        total: 2,
        forecast: 0.5,
        stock: 1,
      },
    ]);
  });

  it("groups by board and reference designator, so the same designator on two boards is two rows", async () => {
    const p = await getPartsUsage(db, fx.shopId, filterOf(RANGE), Date.parse("2026-04-15"));
    // Board 2 (FX-101 rev B): U7 in C1 and C2, C12 in C3; the 2025 run (U2) is outside the range.
    expect(
      p.parts.map((x) => [
        x.boardLabel,
        x.refdes,
        x.value,
        x.package,
        x.perMonth.join(" "),
        x.forecast,
        x.stock,
      ]),
    ).toEqual([
      ["FX-100 rev A", "U1", "3 A buck", "QFN-16", "4 0 0", 1, 1],
      ["FX-100 rev A", "C12", null, null, "2 0 0", 0.5, 1],
      ["FX-100 rev A", "U3", null, "SOT-23", "0 2 0", 0.5, 1],
      ["FX-101 rev B", "U7", "3 A buck", "QFN-16", "2 0 0", 0.5, 1],
      ["FX-101 rev B", "C12", null, null, "1 0 0", 0.25, 1],
    ]);
  });

  it("keeps a designator whose value changed between map versions apart, counting each version's fixes", async () => {
    // Its own shop: R5 is 4K7 in version 1 and 10K in version 2, fitted in the same month under both.
    const shop = await createShopWithRoles("Parts Versions");
    const mapId = newId();
    await db.insert(maps).values({ id: mapId, shopId: shop.shopId, boardId: shop.boardId, name: "Power-up" });
    const doc = (value: string) => ({
      ...DOC_A,
      nodes: [
        ...DOC_A.nodes,
        {
          id: "r5",
          kind: "part",
          name: "Enable resistor",
          partType: "resistor",
          refdes: "R5",
          value,
          package: "0402",
          fixes: [],
        },
      ],
    });
    const v = [newId(), newId()];
    for (const [i, value] of ["4K7", "10K"].entries())
      await db
        .insert(mapVersions)
        .values({ id: v[i], shopId: shop.shopId, mapId, number: i + 1, document: doc(value) });
    // Version 1: two fixes with R5; version 2: three with R5 (one also with U1). All in February 2026.
    const fixes: Array<[string, string[]]> = [
      [v[0], ["R5"]],
      [v[0], ["R5"]],
      [v[1], ["R5"]],
      [v[1], ["R5"]],
      [v[1], ["r5", "U1"]],
    ];
    for (const [i, [version, parts]] of fixes.entries()) {
      const runId = newId();
      const started = at(`2026-02-${String(10 + i).padStart(2, "0")}`);
      await db.insert(runs).values({
        id: runId,
        shopId: shop.shopId,
        boardId: shop.boardId,
        mapVersionId: version,
        techId: shop.userIds.tech,
        strategy: "order",
        condition: { sourcesAttached: ["src-in"] },
        status: "closed",
        outcome: "powers-on",
        startedAt: started,
        closedAt: started,
      });
      await db.insert(findings).values({
        id: newId(),
        shopId: shop.shopId,
        runId,
        boardId: shop.boardId,
        mapVersionId: version,
        kind: "part",
        nodeId: "r5",
        fixKind: "replace",
        partsUsed: parts,
        outcome: "powers-on",
        createdAt: started,
      });
    }
    const p = await getPartsUsage(db, shop.shopId, filterOf(RANGE), Date.parse("2026-04-15"));
    expect(p.parts.map((x) => [x.refdes, x.value, x.package, x.perMonth.join(" ")])).toEqual([
      ["R5", "10K", "0402", "0 3 0"],
      ["R5", "4K7", "0402", "0 2 0"],
      ["U1", "3 A buck", "QFN-16", "0 1 0"],
    ]);
  });

  it("exports the same rows as CSV, ready to order from", async () => {
    const res = await call(exportRoute.loader, {
      request: getRequest(`/insights/export/parts.csv?${RANGE}&board=${fx.boardId}`, fx.cookies.lead),
      params: { table: "parts.csv" },
    });
    expect(res.status).toBe(200);
    const rows = parse(await res.response!.text(), { columns: true }) as Array<Record<string, string>>;
    expect(rows).toHaveLength(3);
    expect(rows[0]).toEqual({
      Board: "FX-100 rev A",
      Reference: "U1",
      Part: "Main buck",
      Value: "3 A buck",
      Package: "QFN-16",
      "2026-01": "4",
      "2026-02": "0",
      "2026-03": "0",
      Total: "4",
      "Forecast 2026-04": "1",
      "Stock to hold": "1",
    });
    expect(rows.map((r) => `${r.Reference} ${r.Package}`)).toEqual(["U1 QFN-16", "C12 ", "U3 SOT-23"]);
  });

  it("leaves the month still running out of the forecast", async () => {
    const p = await getPartsUsage(
      db,
      fx.shopId,
      filterOf(`${RANGE}&board=${fx.boardId}`),
      Date.parse("2026-03-15"),
    );
    expect(p.runningMonth).toBe("2026-03");
    expect(p.nextMonth).toBe("2026-03");
    expect(p.parts.find((x) => x.refdes === "U1")?.forecast).toBe(2);
  });
});

describe("priors for the best-next strategy", () => {
  it("widens from the version to the board's other versions to other revisions by node name", async () => {
    const b = await getFindingPriors(fx.shopId, fx.boardId, fx.versions.B, db);
    // version B: 5 runs (u1 1, u3 2); board's version A: 11 runs (u1 3 — A4 left the board dead, so not
    // counted — short v1 1, u2 1); revision B of the model: 3 runs ("Main buck" 2, short on "V1" 1).
    expect(b).toEqual({
      counts: { u1: 6, u3: 2, "short:v1": 2, u2: 1 },
      runs: 19,
      sources: ["version", "board", "model"],
    });
    const a = await getFindingPriors(fx.shopId, fx.boardId, fx.versions.A, db);
    // u3 is not in version A, so B's u3 findings do not count there.
    expect(a).toEqual({
      counts: { u1: 6, "short:v1": 2, u2: 1 },
      runs: 19,
      sources: ["version", "board", "model"],
    });
  });

  it("learns nothing from a version of another board or shop", async () => {
    expect(await getFindingPriors(fx.shopId, fx.board2, fx.versions.A, db)).toEqual({
      counts: {},
      runs: 0,
      sources: [],
    });
    const other = await createShopWithRoles("Prior Thief");
    expect((await getFindingPriors(other.shopId, fx.boardId, fx.versions.A, db)).runs).toBe(0);
  });
});

describe("insights pages", () => {
  it("are for owners and leads; technicians and the desk get 403", async () => {
    for (const [route, path] of [
      [hotSpotsRoute, "/insights"],
      [runsRoute, "/insights/runs"],
      [partsRoute, "/insights/parts"],
    ] as const) {
      for (const role of ["owner", "lead"] as const)
        expect(
          (await call(route.loader, { request: getRequest(`${path}?${RANGE}`, fx.cookies[role]) })).status,
        ).toBe(200);
      for (const role of ["tech", "desk"] as const)
        expect((await call(route.loader, { request: getRequest(path, fx.cookies[role]) })).status).toBe(403);
    }
    const csv = await call(exportRoute.loader, {
      request: getRequest(`/insights/export/hot-spots.csv?${RANGE}`, fx.cookies.tech),
      params: { table: "hot-spots.csv" },
    });
    expect(csv.status).toBe(403);
  });

  it("loads hot spots filtered by board, reporting a bad filter instead of guessing", async () => {
    const ok = await call(hotSpotsRoute.loader, {
      request: getRequest(`/insights?${RANGE}&board=${fx.boardId}`, fx.cookies.lead),
    });
    const data = ok.data as { hotSpots: HotSpot[]; errors: Record<string, string> };
    expect(data.hotSpots).toHaveLength(7);
    expect(data.errors).toEqual({});
    const bad = await call(hotSpotsRoute.loader, {
      request: getRequest(`/insights?from=2026-13-45&outcome=exploded&board=${fx.boardId}`, fx.cookies.lead),
    });
    expect(Object.keys((bad.data as { errors: object }).errors).sort()).toEqual(["from", "outcome"]);
  });

  it("filters hot spots by one map version, and reports a version of another board or shop", async () => {
    const load = async (q: string) =>
      (await call(hotSpotsRoute.loader, { request: getRequest(`/insights?${RANGE}&${q}`, fx.cookies.lead) }))
        .data as { hotSpots: HotSpot[]; errors: Record<string, string>; query: string };
    // Version B: its 5 ended runs (B1–B5): u1 once (B1), u3 twice (B2, B3).
    const b = await load(`board=${fx.boardId}&version=${fx.versions.B}`);
    expect(b.errors).toEqual({});
    expect(counts(b.hotSpots)).toEqual({
      u3: "2/5",
      u1: "1/5",
      vin: "0/5",
      v1: "0/5",
      u2: "0/5",
      v2: "0/5",
      v3: "0/5",
    });
    // The query the page's links (tabs, shaded map, CSV) carry names the version.
    expect(b.query).toContain(`version=${fx.versions.B}`);
    const otherBoard = await load(`board=${fx.boardId}&version=${fx.versions.C}`);
    expect(otherBoard.errors).toEqual({
      version:
        "That map version belongs to another board: pick one of this board's versions, or all versions.",
    });
    expect(otherBoard.hotSpots).toHaveLength(7);
    expect(otherBoard.query).not.toContain("version=");
    const unknown = await load("version=not-a-version");
    expect(unknown.errors).toEqual({ version: "That map version is not in this shop." });
  });

  it("draws a version of the shop's own map and 404s another shop's", async () => {
    const own = await call(mapRoute.loader, {
      request: getRequest(`/insights/map/${fx.versions.B}?${RANGE}`, fx.cookies.lead),
      params: { versionId: fx.versions.B },
    });
    const nodes = (
      own.data as {
        nodes: Array<{ id: string; data: { rate: number | null; failures: number; runs: number } }>;
      }
    ).nodes;
    expect(nodes.find((n) => n.id === "u3")?.data).toMatchObject({ failures: 2, runs: 5 });
    expect(nodes.find((n) => n.id === "src-in")?.data.rate).toBeNull();
    const other = await createShopWithRoles("Map Peeker");
    const res = await call(mapRoute.loader, {
      request: getRequest(`/insights/map/${fx.versions.B}`, other.cookies.lead),
      params: { versionId: fx.versions.B },
    });
    expect(res.status).toBe(404);
  });
});

describe("CSV export", () => {
  it("downloads the filtered hot spots as CSV", async () => {
    const res = await call(exportRoute.loader, {
      request: getRequest(`/insights/export/hot-spots.csv?${RANGE}&board=${fx.boardId}`, fx.cookies.lead),
      params: { table: "hot-spots.csv" },
    });
    expect(res.status).toBe(200);
    expect(res.response!.headers.get("Content-Type")).toBe("text/csv; charset=utf-8");
    expect(res.response!.headers.get("Content-Disposition")).toContain("attachment;");
    const rows = parse(await res.response!.text(), { columns: true }) as Array<Record<string, string>>;
    expect(rows).toHaveLength(7);
    expect(rows[0]).toMatchObject({
      Board: "FX-100 rev A",
      "Node id": "u1",
      "Runs ending here": "5",
      "Runs on versions with the node": "15",
    });
  });

  it("quotes commas, quotes and line breaks, and defuses spreadsheet formulas", () => {
    const csv = toCsv({
      columns: [
        { key: "a", header: "Name, full" },
        { key: "b", header: "Note" },
        { key: "c", header: "n" },
      ],
      rows: [
        { a: 'Buck "main", 1 V', b: "line 1\nline 2", c: -3 },
        { a: "=HYPERLINK(1)", b: "@risk", c: null },
      ],
    });
    expect(csv).toBe(
      '"Name, full",Note,n\r\n"Buck ""main"", 1 V","line 1\nline 2",-3\r\n\'=HYPERLINK(1),\'@risk,\r\n',
    );
    expect(parse(csv, { columns: true })).toEqual([
      { "Name, full": 'Buck "main", 1 V', Note: "line 1\nline 2", n: "-3" },
      { "Name, full": "'=HYPERLINK(1)", Note: "'@risk", n: "" },
    ]);
  });

  it("answers 404 for an unknown table and 400 for bad filters", async () => {
    const unknown = await call(exportRoute.loader, {
      request: getRequest("/insights/export/salaries.csv", fx.cookies.lead),
      params: { table: "salaries.csv" },
    });
    expect(unknown.status).toBe(404);
    const bad = await call(exportRoute.loader, {
      request: getRequest("/insights/export/parts.csv?to=yesterday", fx.cookies.lead),
      params: { table: "parts.csv" },
    });
    expect(bad.status).toBe(400);
    expect(String(bad.data)).toContain("Use a date like");
  });
});

describe("JSON API", () => {
  it("needs a bearer token; cookies alone do not work", async () => {
    const res = await call(apiRoute.loader, {
      request: getRequest("/api/v1/insights/hot-spots", fx.cookies.lead),
      params: { table: "hot-spots" },
    });
    expect(res.status).toBe(401);
    expect(res.response!.headers.get("WWW-Authenticate")).toContain("Bearer");
  });

  it("refuses POST", async () => {
    const res = await apiRoute.action();
    expect(res.status).toBe(405);
  });
});
