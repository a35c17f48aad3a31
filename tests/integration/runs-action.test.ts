import { eq } from "drizzle-orm";
import { beforeAll, describe, expect, it } from "vitest";
import { OM_5150_MAP } from "../../seed/maps/om-5150";
import * as mapEditor from "~/routes/map-editor";
import * as reportRoute from "~/routes/run-report";
import { db } from "~/server/db.server";
import { findings, notices, outbox, readings, runs } from "~/server/schema.server";
import { simulateBoard } from "../support/bench-sim";
import { createShopWithRoles } from "../support/fixtures";
import { call, formRequest, getRequest } from "../support/requests";
import { type Loaded, loadRun, postRun, publishDemoMap, readingId, startRun } from "../support/runs";

const BOTH = ["src-charger", "src-battery", "src-button"];

type Shop = Awaited<ReturnType<typeof createShopWithRoles>>;
let shop: Shop;
let versionId: string;

beforeAll(async () => {
  shop = await createShopWithRoles("Walker Shop");
  ({ versionId } = await publishDemoMap(shop.shopId, shop.boardId));
});

async function newRun(strategy?: string) {
  return startRun(shop.cookies.tech, { boardId: shop.boardId, mapVersionId: versionId, strategy });
}

async function view(runId: string, cookie = shop.cookies.tech): Promise<Loaded> {
  const res = await loadRun(cookie, runId);
  expect(res.status).toBe(200);
  return (res.data as Loaded).view;
}

/** Takes the reading the walker asks for, with the simulated board's true value. */
async function takeStep(runId: string, sim: ReturnType<typeof simulateBoard>) {
  const v = await view(runId);
  expect(v.step).not.toBeNull();
  const res = await postRun(shop.cookies.tech, runId, {
    intent: "reading",
    id: readingId(),
    netId: v.step.netId,
    mode: v.step.mode,
    text: sim.readingText(v.step.netId, v.step.mode),
    expectedSeq: String(v.nextSeq),
    ...(v.step.leadStepId ? { leadStepId: v.step.leadStepId } : {}),
  });
  expect(res.status).toBe(200);
  return res;
}

async function walkToFinding(runId: string, sim: ReturnType<typeof simulateBoard>, max = 30) {
  for (let i = 0; i < max; i++) {
    const v = await view(runId);
    if (!v.step) return v;
    await takeStep(runId, sim);
  }
  throw new Error("the walker did not reach a finding");
}

const rowsOf = (runId: string) => db.select().from(readings).where(eq(readings.runId, runId)).all();

describe("starting a run", () => {
  it("pins the published version, the map's strategy and the sources of the condition", async () => {
    const runId = await startRun(shop.cookies.tech, {
      boardId: shop.boardId,
      mapVersionId: versionId,
      condition: "charger",
    });
    const run = await db.select().from(runs).where(eq(runs.id, runId)).get();
    expect(run?.mapVersionId).toBe(versionId);
    expect(run?.strategy).toBe(OM_5150_MAP.settings.strategy);
    expect(run?.condition.sourcesAttached.sort()).toEqual(["src-button", "src-charger"]);
    const v = await view(runId);
    expect(v.step.mode).toBe("voltage");
    expect(v.step.why.length).toBeGreaterThan(10);
  });
});

describe("the run action", () => {
  it("saves a reading with its verdict and margin", async () => {
    const runId = await newRun("order");
    const v = await view(runId);
    const id = readingId();
    const res = await postRun(shop.cookies.tech, runId, {
      intent: "reading",
      id,
      netId: v.step.netId,
      mode: "voltage",
      text: "12.4",
      expectedSeq: "1",
    });
    expect(res.status).toBe(200);
    const answer = res.data as { ok: boolean; reading: { verdict: string; marginText: string } };
    expect(answer.ok).toBe(true);
    // SYS_IN window is 11.0..13.2 V in the demo map: 12.4 V is in range, 0.8 V below the upper edge.
    expect(v.step.netId).toBe("vsys");
    expect(answer.reading.verdict).toBe("in range");
    expect(answer.reading.marginText).toBe("800 mV inside the window");
    const rows = await rowsOf(runId);
    expect(rows).toHaveLength(1);
    expect(rows[0]).toMatchObject({
      id,
      seq: 1,
      netId: "vsys",
      text: "12.4",
      value: "12.4",
      verdict: "in range",
    });
  });

  it("stores a replayed reading once and answers the same", async () => {
    const runId = await newRun("order");
    const fields = {
      intent: "reading",
      id: readingId(),
      netId: "vsys",
      mode: "voltage",
      text: "450mV",
      expectedSeq: "1",
    };
    const first = await postRun(shop.cookies.tech, runId, fields);
    const second = await postRun(shop.cookies.tech, runId, fields);
    expect(first.status).toBe(200);
    expect(second.status).toBe(200);
    const a = first.data as { reading: unknown; replay: boolean };
    const b = second.data as { reading: unknown; replay: boolean };
    expect(b.reading).toEqual(a.reading);
    expect(a.replay).toBe(false);
    expect(b.replay).toBe(true);
    expect(await rowsOf(runId)).toHaveLength(1);
  });

  it("refuses an unparseable reading with a message and writes nothing", async () => {
    const runId = await newRun("order");
    const res = await postRun(shop.cookies.tech, runId, {
      intent: "reading",
      id: readingId(),
      netId: "vsys",
      mode: "voltage",
      text: "twelve volts",
      expectedSeq: "1",
    });
    expect(res.status).toBe(400);
    expect((res.data as { message: string }).message).toMatch(/Could not read "twelve volts"/);
    expect(await rowsOf(runId)).toHaveLength(0);
    // A resistance unit on a voltage check is named as such.
    const wrongUnit = await postRun(shop.cookies.tech, runId, {
      intent: "reading",
      id: readingId(),
      netId: "vsys",
      mode: "voltage",
      text: "4k7 ohm",
      expectedSeq: "1",
    });
    expect(wrongUnit.status).toBe(400);
    expect(await rowsOf(runId)).toHaveLength(0);
  });

  it("keeps a corrected reading in the history and judges with the correction", async () => {
    const runId = await newRun("order");
    const first = readingId();
    await postRun(shop.cookies.tech, runId, {
      intent: "reading",
      id: first,
      netId: "vsys",
      mode: "voltage",
      text: "0",
      expectedSeq: "1",
    });
    let v = await view(runId);
    expect(v.nets.find((n: { id: string }) => n.id === "vsys").state).toBe("missing");
    const fix = readingId();
    const res = await postRun(shop.cookies.tech, runId, {
      intent: "reading",
      id: fix,
      netId: "vsys",
      mode: "voltage",
      text: "12.5",
      expectedSeq: "2",
      replacesId: first,
    });
    expect(res.status).toBe(200);
    const rows = await rowsOf(runId);
    expect(rows.map((r) => [r.id, r.text, r.replacesId])).toEqual([
      [first, "0", null],
      [fix, "12.5", first],
    ]);
    v = await view(runId);
    expect(v.nets.find((n: { id: string }) => n.id === "vsys").state).toBe("present");
    expect(v.readings).toHaveLength(2);
  });

  it("refuses a correction of another net", async () => {
    const runId = await newRun("order");
    const first = readingId();
    await postRun(shop.cookies.tech, runId, {
      intent: "reading",
      id: first,
      netId: "vsys",
      mode: "voltage",
      text: "12",
      expectedSeq: "1",
    });
    const res = await postRun(shop.cookies.tech, runId, {
      intent: "reading",
      id: readingId(),
      netId: "v3p3-aon",
      mode: "voltage",
      text: "3.3",
      expectedSeq: "2",
      replacesId: first,
    });
    expect(res.status).toBe(400);
    expect(await rowsOf(runId)).toHaveLength(1);
  });

  it("answers 409 when another technician already took this step", async () => {
    const runId = await newRun("order");
    await postRun(shop.cookies.tech, runId, {
      intent: "reading",
      id: readingId(),
      netId: "vsys",
      mode: "voltage",
      text: "12.6",
      expectedSeq: "1",
    });
    // The lead, on a screen that still shows step 1, submits too.
    const res = await postRun(shop.cookies.lead, runId, {
      intent: "reading",
      id: readingId(),
      netId: "vsys",
      mode: "voltage",
      text: "12.6",
      expectedSeq: "1",
    });
    expect(res.status).toBe(409);
    expect((res.data as { message: string }).message).toMatch(/Another technician saved a reading/);
    expect(await rowsOf(runId)).toHaveLength(1);
  });

  it("lets the front desk follow a run but not write readings", async () => {
    const runId = await newRun("order");
    expect((await loadRun(shop.cookies.desk, runId)).status).toBe(200);
    const res = await postRun(shop.cookies.desk, runId, {
      intent: "reading",
      id: readingId(),
      netId: "vsys",
      mode: "voltage",
      text: "12.6",
      expectedSeq: "1",
    });
    expect(res.status).toBe(403);
    expect(await rowsOf(runId)).toHaveLength(0);
  });

  it("answers 404 for another shop's run, reading or not", async () => {
    const runId = await newRun("order");
    const other = await createShopWithRoles("Other Shop");
    expect((await loadRun(other.cookies.tech, runId)).status).toBe(404);
    const res = await postRun(other.cookies.tech, runId, {
      intent: "reading",
      id: readingId(),
      netId: "vsys",
      mode: "voltage",
      text: "12.6",
      expectedSeq: "1",
    });
    expect(res.status).toBe(404);
    expect(await rowsOf(runId)).toHaveLength(0);
  });

  it("skips a point the tech cannot reach and asks for another one", async () => {
    const runId = await newRun("order");
    const v = await view(runId);
    const res = await postRun(shop.cookies.tech, runId, {
      intent: "skip",
      id: readingId(),
      netId: v.step.netId,
      mode: v.step.mode,
      expectedSeq: "1",
    });
    expect(res.status).toBe(200);
    const after = await view(runId);
    expect(after.readings[0]).toMatchObject({ skipped: true, verdict: "skipped" });
    expect(`${after.step.netId}:${after.step.mode}`).not.toBe(`${v.step.netId}:${v.step.mode}`);
  });
});

describe("finding, fix and outcome", () => {
  // Injected fault: R362, the series resistor on the 3.3 V standby enable, is open.
  const sim = simulateBoard(OM_5150_MAP, BOTH, { part: "r-en3" });

  it("answers each reading with the run as a fresh load shows it, the isolating reading included", async () => {
    // The answer's view is built from what the save itself read and wrote (no second read of the run and its
    // readings), so it must match the loader's view exactly, status and isolation time included.
    const runId = await newRun();
    let sawIsolation = false;
    for (let i = 0; i < 30; i++) {
      const before = await view(runId);
      if (!before.step) break;
      const res = await takeStep(runId, sim);
      const answered = (res.data as { view: Loaded["view"] }).view;
      const fresh = await view(runId);
      expect(answered).toEqual(fresh);
      if (fresh.run.status === "isolated") sawIsolation = true;
    }
    expect(sawIsolation).toBe(true);
  });

  it("isolates the open resistor, records the finding and closes on 'powers on'", async () => {
    const runId = await newRun();
    const v = await walkToFinding(runId, sim);
    expect(v.isolated).toBe(true);
    expect(v.finding.kind).toBe("part");
    expect(v.finding.nodeId).toBe("r-en3");
    expect(v.finding.message).toContain("R362");
    expect(v.finding.proving.length).toBeGreaterThan(0);
    expect(v.finding.part.fixes.map((f: { id: string }) => f.id)).toEqual(["replace"]);
    const row = await db.select().from(findings).where(eq(findings.runId, runId)).get();
    expect(row).toMatchObject({
      kind: "part",
      nodeId: "r-en3",
      boardId: shop.boardId,
      mapVersionId: versionId,
      outcome: null,
    });
    expect((await db.select().from(runs).where(eq(runs.id, runId)).get())?.status).toBe("isolated");

    const bad = await postRun(shop.cookies.tech, runId, {
      intent: "outcome",
      round: "1",
      fixId: "replace",
      partsUsed: "R362, not a part!",
      outcome: "powers-on",
    });
    expect(bad.status).toBe(400);
    const res = await postRun(shop.cookies.tech, runId, {
      intent: "outcome",
      round: "1",
      fixId: "replace",
      partsUsed: "r362",
      outcome: "powers-on",
    });
    expect(res.status).toBe(302);
    expect(res.response?.headers.get("Location")).toBe(`/runs/${runId}/report`);
    const done = await db.select().from(findings).where(eq(findings.runId, runId)).get();
    expect(done).toMatchObject({ fixKind: "replace", partsUsed: ["R362"], outcome: "powers-on" });
    const run = await db.select().from(runs).where(eq(runs.id, runId)).get();
    expect(run).toMatchObject({ status: "closed", outcome: "powers-on" });
    // A closed run takes no more readings.
    const more = await postRun(shop.cookies.tech, runId, {
      intent: "reading",
      id: readingId(),
      netId: "vsys",
      mode: "voltage",
      text: "12",
      expectedSeq: String((await rowsOf(runId)).length + 1),
    });
    expect(more.status).toBe(409);
  });

  it("continues a 'still dead' run in a new round from the new state, keeping the history", async () => {
    const runId = await newRun("split");
    await walkToFinding(runId, sim);
    const before = (await rowsOf(runId)).length;
    const res = await postRun(shop.cookies.tech, runId, {
      intent: "outcome",
      round: "1",
      fixId: "replace",
      partsUsed: "R362",
      outcome: "still-dead",
    });
    expect(res.status).toBe(302);
    const run = await db.select().from(runs).where(eq(runs.id, runId)).get();
    expect(run).toMatchObject({ status: "open", round: 2 });
    const v = await view(runId);
    expect(v.readings).toHaveLength(before);
    expect(v.step).not.toBeNull();
    expect(v.isolated).toBe(false);
    // The second fault on the reworked board: the 1.8 V main buck.
    const sim2 = simulateBoard(OM_5150_MAP, BOTH, { part: "u-1v8" });
    const end = await walkToFinding(runId, sim2);
    expect(end.finding.nodeId).toBe("u-1v8");
    const rows = await db.select().from(findings).where(eq(findings.runId, runId)).all();
    expect(rows.map((r) => [r.round, r.nodeId, r.outcome])).toEqual([
      [1, "r-en3", "still-dead"],
      [2, "u-1v8", null],
    ]);

    // The report's cautions come from every fix of the run: round 1's replacement (hot air, flux and
    // solvent) still counts after round 2's "something else".
    const closing = await postRun(shop.cookies.tech, runId, {
      intent: "outcome",
      round: "2",
      fixId: "other",
      partsUsed: "",
      outcome: "powers-on",
    });
    expect(closing.status).toBe(302);
    const report = await call(reportRoute.loader, {
      request: getRequest(`/runs/${runId}/report`, shop.cookies.tech),
      params: { runId },
    });
    expect(report.status).toBe(200);
    const { cautions } = report.data as { cautions: Array<{ id: string }> };
    expect(cautions.map((c) => c.id)).toEqual(["battery", "hot-air", "solvents", "esd", "mains"]);
  });

  it("uses past findings on the board as priors and says how many", async () => {
    const runId = await newRun("best");
    const v = await view(runId);
    // Two findings above count (one powers-on; the still-dead one is left out); the open u-1v8 counts.
    expect(v.learnedFrom).toBeGreaterThanOrEqual(2);
  });
});

describe("help and lead steps", () => {
  it("e-mails and notifies leads, and a lead's extra check becomes the tech's next step", async () => {
    const runId = await newRun("order");
    const res = await postRun(shop.cookies.tech, runId, { intent: "help", text: "SYS_IN reads 6 V, odd" });
    expect(res.status).toBe(302);
    const mail = await db.select().from(outbox).all();
    expect(
      mail.some((m) => m.to === `lead-${shop.shopId}@fixture.test` && m.text.includes(`/runs/${runId}`)),
    ).toBe(true);
    const leadNotices = await db.select().from(notices).where(eq(notices.userId, shop.userIds.lead)).all();
    expect(leadNotices.some((n) => n.runId === runId && n.readAt === null)).toBe(true);
    expect((await db.select().from(runs).where(eq(runs.id, runId)).get())?.escalatedAt).not.toBeNull();

    const techTry = await postRun(shop.cookies.tech, runId, {
      intent: "lead-step",
      netId: "vbat",
      mode: "voltage",
      text: "check the pack",
    });
    expect(techTry.status).toBe(403);
    const step = await postRun(shop.cookies.lead, runId, {
      intent: "lead-step",
      netId: "vbat",
      mode: "voltage",
      text: "Check the pack first",
    });
    expect(step.status).toBe(200);
    const v = await view(runId);
    expect(v.step.netId).toBe("vbat");
    expect(v.step.leadStepId).toBeTruthy();
    expect(v.step.why).toContain("Check the pack first");
    // The map's own safety note on the battery pack's rail comes with the check.
    expect(v.step.safetyNotes).toBe("Live whenever the pack is connected.");
    // Opening the run marks the lead's notice read.
    await loadRun(shop.cookies.lead, runId);
    const after = await db.select().from(notices).where(eq(notices.userId, shop.userIds.lead)).all();
    expect(after.filter((n) => n.runId === runId).every((n) => n.readAt !== null)).toBe(true);
    // Taking the lead's check clears it.
    await postRun(shop.cookies.tech, runId, {
      intent: "reading",
      id: readingId(),
      netId: "vbat",
      mode: "voltage",
      text: "11.1",
      expectedSeq: "1",
      leadStepId: v.step.leadStepId,
    });
    const next = await view(runId);
    expect(next.step.leadStepId).toBeNull();
  });
});

describe("extending the map from a no-fault run", () => {
  // A fault outside the map: every net reads as it should, so every suspect is cleared.
  const healthy = simulateBoard(OM_5150_MAP, BOTH, { part: "not-on-this-map" });

  async function editorFor(cookie: string, mapId: string, runId: string) {
    const res = await call(mapEditor.loader, {
      request: getRequest(`/maps/${mapId}?fromRun=${runId}`, cookie),
      params: { mapId },
    });
    expect(res.status).toBe(200);
    return (res.data as Loaded).fromRun;
  }

  it("opens the map's draft with the run's readings and notes, for leads only", async () => {
    const { mapId, versionId: v } = await publishDemoMap(shop.shopId, shop.boardId);
    const runId = await startRun(shop.cookies.tech, { boardId: shop.boardId, mapVersionId: v });
    await postRun(shop.cookies.tech, runId, { intent: "note", text: "Fan spins, no picture" });
    const end = await walkToFinding(runId, healthy);
    expect(end.finding.kind).toBe("no-fault-found");
    const taken = await rowsOf(runId);
    expect(taken.length).toBeGreaterThan(3);

    const fromRun = await editorFor(shop.cookies.lead, mapId, runId);
    expect(fromRun.ok).toBe(true);
    expect(fromRun.evidence.noFaultFound).toBe(true);
    expect(fromRun.evidence.boardNumber).toBe("FX-100");
    expect(fromRun.evidence.readings.map((r: { id: string }) => r.id).sort()).toEqual(
      taken.map((r) => r.id).sort(),
    );
    expect(fromRun.evidence.readings.every((r: { verdict: string }) => r.verdict === "in range")).toBe(true);
    expect(fromRun.evidence.notes.map((n: { text: string }) => n.text)).toContain("Fan spins, no picture");

    // A tech can read the map but is not offered the run beside the editor.
    expect(await editorFor(shop.cookies.tech, mapId, runId)).toBeNull();
    // Another map of the same shop, or another shop's run, is refused with a message.
    const other = await publishDemoMap(shop.shopId, shop.boardId);
    expect((await editorFor(shop.cookies.lead, other.mapId, runId)).message).toContain("used another map");
    const elsewhere = await createShopWithRoles("Elsewhere Bench");
    const theirs = await publishDemoMap(elsewhere.shopId, elsewhere.boardId);
    expect((await editorFor(elsewhere.cookies.lead, theirs.mapId, runId)).message).toBe(
      "That run was not found in your shop.",
    );
  });

  it("tells the run's technician when the extended map is published", async () => {
    const { mapId, versionId: v } = await publishDemoMap(shop.shopId, shop.boardId);
    const runId = await startRun(shop.cookies.tech, { boardId: shop.boardId, mapVersionId: v });
    await walkToFinding(runId, healthy);
    const res = await call(mapEditor.action, {
      request: formRequest(
        `/maps/${mapId}`,
        { intent: "publish", revision: "1", note: "Added the backlight boost stage", fromRun: runId },
        shop.cookies.lead,
      ),
      params: { mapId },
    });
    expect(res.status).toBe(200);
    expect((res.data as Loaded).message).toContain("The run's technician was told");
    const notes = (await view(runId)).notes;
    expect(notes.at(-1)).toMatchObject({ kind: "lead-note" });
    expect(notes.at(-1).text).toContain("published as version 2: Added the backlight boost stage");
    const told = await db.select().from(notices).where(eq(notices.userId, shop.userIds.tech)).all();
    expect(told.some((n) => n.runId === runId && n.text.includes("published as version 2"))).toBe(true);
  });
});
