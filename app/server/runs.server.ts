import { and, asc, desc, eq, inArray, isNull, like, or, sql } from "drizzle-orm";
import {
  type Analysis,
  analyse,
  failureRate,
  formatQuantity,
  judgeReading,
  type MapDocument,
  MeterProfileSchema,
  type MeterProfile,
  type Mode,
  type NextStep,
  nextReading,
  parseMapDocument,
  parseQuantity,
  powerUpSequence,
  type Reading,
  type Strategy,
  unitForMode,
  windowOf,
} from "~/lib/engine";
import {
  type BoardCondition,
  conditionOf,
  type NetState,
  sourcesForCondition,
  stagesOf,
  stageStrip,
} from "~/lib/walker";
import { db } from "./db.server";
import { getFindingPriors } from "./priors.server";
import { newId } from "./ids.server";
import { type CheckedPhoto, putPhoto } from "./photos.server";
import {
  boards,
  findings,
  jobs,
  maps,
  mapVersions,
  members,
  meterProfiles,
  notices,
  readings,
  runNotes,
  runs,
  uploads,
  users,
} from "./schema.server";

// Server side of guided runs: the run pins a published map version; every reading is stored once under its
// client-generated id; the engine (app/lib/engine) judges readings, narrows suspects and picks the next check.

export class RunError extends Error {
  constructor(
    public status: 400 | 403 | 404 | 409,
    message: string,
  ) {
    super(message);
  }
}

// ---------------------------------------------------------------------------------------------------------
// Published map versions (immutable, so their parsed documents are cached by id)

const docCache = new Map<string, { shopId: string; doc: MapDocument }>();

export async function getVersionDoc(shopId: string, mapVersionId: string): Promise<MapDocument | null> {
  const hit = docCache.get(mapVersionId);
  if (hit) return hit.shopId === shopId ? hit.doc : null;
  const row = await db
    .select({ document: mapVersions.document, shopId: mapVersions.shopId })
    .from(mapVersions)
    .where(and(eq(mapVersions.id, mapVersionId), eq(mapVersions.shopId, shopId)))
    .get();
  if (!row) return null;
  const parsed = parseMapDocument(row.document);
  if (!parsed.ok) return null;
  if (docCache.size > 200) docCache.clear();
  docCache.set(mapVersionId, { shopId, doc: parsed.value });
  return parsed.value;
}

/** Published versions of a board's maps, newest first. */
export function listPublishedVersions(shopId: string, boardId: string) {
  return db
    .select({
      id: mapVersions.id,
      number: mapVersions.number,
      mapId: maps.id,
      mapName: maps.name,
      note: mapVersions.note,
      publishedAt: mapVersions.publishedAt,
    })
    .from(mapVersions)
    .innerJoin(maps, eq(maps.id, mapVersions.mapId))
    .where(and(eq(maps.boardId, boardId), eq(maps.shopId, shopId), eq(mapVersions.shopId, shopId)))
    .orderBy(desc(mapVersions.publishedAt), desc(mapVersions.number))
    .all();
}

export function searchBoards(shopId: string, q: string) {
  const pattern = `%${q.replace(/[%_]/g, "")}%`;
  return db
    .select()
    .from(boards)
    .where(
      and(
        eq(boards.shopId, shopId),
        isNull(boards.archivedAt),
        or(like(boards.boardNumber, pattern), like(boards.model, pattern)),
      ),
    )
    .orderBy(asc(boards.boardNumber))
    .limit(20)
    .all();
}

export function listBoards(shopId: string) {
  return db
    .select()
    .from(boards)
    .where(and(eq(boards.shopId, shopId), isNull(boards.archivedAt)))
    .orderBy(asc(boards.boardNumber))
    .all();
}

/** A job by its id or its number in the shop. */
export function findJob(shopId: string, idOrNumber: string) {
  const n = /^\d{1,9}$/.test(idOrNumber) ? Number(idOrNumber) : -1;
  return db
    .select()
    .from(jobs)
    .where(and(eq(jobs.shopId, shopId), or(eq(jobs.id, idOrNumber), eq(jobs.number, n))))
    .get();
}

// ---------------------------------------------------------------------------------------------------------
// History: priors for `best` and fix success rates

/** For each fix of a part: how often the shop tried it on this board and how often the board then powered on. */
export async function getFixSuccess(shopId: string, boardId: string, nodeId: string) {
  const rows = await db
    .select({ fixKind: findings.fixKind, outcome: findings.outcome, n: sql<number>`count(*)` })
    .from(findings)
    .where(
      and(
        eq(findings.shopId, shopId),
        eq(findings.boardId, boardId),
        eq(findings.nodeId, nodeId),
        sql`${findings.outcome} is not null`,
      ),
    )
    .groupBy(findings.fixKind, findings.outcome)
    .all();
  const out: Record<string, { tries: number; successes: number; low: number; high: number }> = {};
  for (const r of rows) {
    const key = r.fixKind ?? "";
    out[key] ??= { tries: 0, successes: 0, low: 0, high: 1 };
    out[key].tries += Number(r.n);
    if (r.outcome === "powers-on") out[key].successes += Number(r.n);
  }
  for (const v of Object.values(out)) {
    const fr = failureRate(v.successes, v.tries);
    if (fr.ok) Object.assign(v, { low: fr.value.low, high: fr.value.high });
  }
  return out;
}

// Short-lived per-process caches: priors and the shop's meter change rarely, and every reading reads both.
// Writes in this module forget them at once; another process sees a change within CACHE_MS.
const CACHE_MS = 5000;
const priorsCache = new Map<
  string,
  { at: number; value: { priors: Record<string, number>; runs: number } }
>();
const meterCache = new Map<string, { at: number; value: MeterProfile | undefined }>();

function forgetShopCaches(shopId: string) {
  meterCache.delete(shopId);
  for (const k of priorsCache.keys()) if (k.startsWith(`${shopId}|`)) priorsCache.delete(k);
}

async function cachedPriors(shopId: string, boardId: string, mapVersionId: string) {
  const key = `${shopId}|${boardId}|${mapVersionId}`;
  const hit = priorsCache.get(key);
  if (hit && Date.now() - hit.at < CACHE_MS) return hit.value;
  // This version's findings first, widening to the board's other versions and the model's other revisions.
  const found = await getFindingPriors(shopId, boardId, mapVersionId);
  const value = { priors: found.counts, runs: found.runs };
  if (priorsCache.size > 1000) priorsCache.clear();
  priorsCache.set(key, { at: Date.now(), value });
  return value;
}

async function getMeter(shopId: string): Promise<MeterProfile | undefined> {
  const hit = meterCache.get(shopId);
  if (hit && Date.now() - hit.at < CACHE_MS) return hit.value;
  const value = await readMeter(shopId);
  if (meterCache.size > 1000) meterCache.clear();
  meterCache.set(shopId, { at: Date.now(), value });
  return value;
}

async function readMeter(shopId: string): Promise<MeterProfile | undefined> {
  const row = await db
    .select({ profile: meterProfiles.profile })
    .from(meterProfiles)
    .where(and(eq(meterProfiles.shopId, shopId), eq(meterProfiles.isDefault, true)))
    .get();
  if (!row) return undefined;
  const p = MeterProfileSchema.safeParse(row.profile);
  return p.success ? p.data : undefined;
}

// ---------------------------------------------------------------------------------------------------------
// Starting a run

export async function createRun(input: {
  shopId: string;
  techId: string;
  boardId: string;
  mapVersionId: string;
  jobId: string | null;
  strategy: Strategy | null;
  condition: BoardCondition;
  pressButton: boolean;
}) {
  const board = await db
    .select({ id: boards.id })
    .from(boards)
    .where(and(eq(boards.id, input.boardId), eq(boards.shopId, input.shopId)))
    .get();
  if (!board) throw new RunError(404, "That board was not found in your shop.");
  const version = (await listPublishedVersions(input.shopId, input.boardId)).find(
    (v) => v.id === input.mapVersionId,
  );
  if (!version) throw new RunError(400, "Pick a published version of this board's map.");
  const doc = await getVersionDoc(input.shopId, version.id);
  if (!doc) throw new RunError(400, "That map version cannot be read; ask a lead to publish it again.");
  if (input.jobId) {
    const job = await db
      .select({ id: jobs.id })
      .from(jobs)
      .where(and(eq(jobs.id, input.jobId), eq(jobs.shopId, input.shopId)))
      .get();
    if (!job) throw new RunError(400, "That job was not found in your shop.");
  }
  const sourcesAttached = sourcesForCondition(doc, input.condition, input.pressButton);
  const id = newId();
  await db.insert(runs).values({
    id,
    shopId: input.shopId,
    boardId: input.boardId,
    mapVersionId: version.id,
    jobId: input.jobId,
    techId: input.techId,
    strategy: input.strategy ?? doc.settings.strategy,
    condition: { sourcesAttached },
  });
  return id;
}

// ---------------------------------------------------------------------------------------------------------
// Reading a run

type RunRow = typeof runs.$inferSelect;
type ReadingRow = typeof readings.$inferSelect;

// The walker's hot path (a reading and the revalidation after it) runs these on every request: prepared
// once, so the SQL is not rebuilt per call.
const hot = {
  run: db
    .select()
    .from(runs)
    .where(and(eq(runs.id, sql.placeholder("runId")), eq(runs.shopId, sql.placeholder("shopId"))))
    .prepare(),
  readings: db
    .select()
    .from(readings)
    .where(eq(readings.runId, sql.placeholder("runId")))
    .orderBy(asc(readings.seq))
    .prepare(),
  readingById: db
    .select()
    .from(readings)
    .where(eq(readings.id, sql.placeholder("id")))
    .prepare(),
  lastReading: db
    .select({ seq: readings.seq, takenBy: readings.takenBy })
    .from(readings)
    .where(eq(readings.runId, sql.placeholder("runId")))
    .orderBy(desc(readings.seq))
    .limit(1)
    .prepare(),
  notes: db
    .select()
    .from(runNotes)
    .where(eq(runNotes.runId, sql.placeholder("runId")))
    .orderBy(asc(runNotes.createdAt))
    .prepare(),
  findings: db
    .select()
    .from(findings)
    .where(eq(findings.runId, sql.placeholder("runId")))
    .orderBy(asc(findings.round))
    .prepare(),
  findingById: db
    .select()
    .from(findings)
    .where(eq(findings.id, sql.placeholder("id")))
    .prepare(),
  board: db
    .select()
    .from(boards)
    .where(and(eq(boards.id, sql.placeholder("boardId")), eq(boards.shopId, sql.placeholder("shopId"))))
    .prepare(),
  version: db
    .select({ number: mapVersions.number, mapId: maps.id, mapName: maps.name })
    .from(mapVersions)
    .innerJoin(maps, eq(maps.id, mapVersions.mapId))
    .where(eq(mapVersions.id, sql.placeholder("versionId")))
    .prepare(),
};

export async function getRunRow(shopId: string, runId: string) {
  return hot.run.get({ runId, shopId });
}

function engineValue(r: ReadingRow): number | "OL" {
  return r.value === "OL" ? "OL" : Number(r.value);
}

/** The readings that count now: this round's, not skipped, not corrected by a later reading. */
function effectiveReadings(rows: ReadingRow[], round: number): Reading[] {
  const replaced = new Set(rows.map((r) => r.replacesId).filter(Boolean));
  // The engine lets the latest reading of a net (live, or unpowered) stand for it; passing only those keeps a
  // long run's analysis as fast as a short one's, with the same result.
  const latest = new Map<string, ReadingRow>();
  for (const r of rows)
    if (r.round === round && !r.skipped && !replaced.has(r.id)) {
      const key = `${r.netId}|${r.mode === "voltage" ? "v" : "r"}`;
      latest.delete(key);
      latest.set(key, r);
    }
  return [...latest.values()].map((r) => ({
    id: r.id,
    netId: r.netId,
    mode: r.mode,
    value: engineValue(r),
    text: r.text,
  }));
}

/** Points the tech skipped ("can't reach") this round: the engine never proposes them again. */
function skippedChecks(rows: ReadingRow[], round: number): Array<{ netId: string; mode: Mode }> {
  const seen = new Map<string, { netId: string; mode: Mode }>();
  for (const r of rows)
    if (r.round === round && r.skipped) seen.set(`${r.netId}:${r.mode}`, { netId: r.netId, mode: r.mode });
  return [...seen.values()].sort((a, b) => (`${a.netId}:${a.mode}` < `${b.netId}:${b.mode}` ? -1 : 1));
}

// A reading's request analyses the same readings twice (the run's new status, then the answer's view), and a
// page load right after does again: keep recent analyses by content. Few: an analysis holds every suspect's
// probability, and the hits come within moments (500 kept took ~50 MB per process under load).
const ANALYSES_KEPT = 64;
const analysisCache = new Map<string, Analysis>();

async function analyseRun(shopId: string, run: RunRow, doc: MapDocument, rows: ReadingRow[]) {
  const [{ priors, runs: learnedFrom }, meter] = await Promise.all([
    run.strategy === "best" ? cachedPriors(shopId, run.boardId, run.mapVersionId) : { priors: {}, runs: 0 },
    getMeter(shopId),
  ]);
  const setup = { condition: run.condition, ...(meter ? { meter } : {}) };
  const effective = effectiveReadings(rows, run.round);
  const exclude = skippedChecks(rows, run.round);
  const key = JSON.stringify([
    run.mapVersionId,
    run.condition.sourcesAttached,
    run.strategy,
    priors,
    meter ?? null,
    effective.map((r) => [r.id, r.netId, r.mode, r.value]),
    exclude.map((x) => `${x.netId}:${x.mode}`),
  ]);
  let analysis = analysisCache.get(key);
  if (!analysis) {
    // The map version id names one immutable document: the engine keeps its compiled map under it.
    const a = analyse(doc, setup, effective, {
      strategy: run.strategy,
      priors,
      cacheKey: run.mapVersionId,
      exclude,
      // At the bench a part is named only on a reading that shows something wrong (see AnalyseOptions).
      confirm: true,
    });
    if (!a.ok) throw new RunError(400, a.error.message);
    analysis = a.value;
    if (analysisCache.size >= ANALYSES_KEPT)
      analysisCache.delete(analysisCache.keys().next().value as string);
    analysisCache.set(key, analysis);
  }
  return { analysis, priors, learnedFrom, meter };
}

export type Step = {
  netId: string;
  netName: string;
  mode: Mode;
  why: string;
  probeText: string;
  probeSeconds: number;
  needsDisassembly: boolean;
  photo: { uploadId: string; x: number; y: number } | null;
  expectedText: string;
  unit: string;
  leadStepId: string | null;
  skippedBefore: boolean;
  replacesId: string | null;
  /** The author's notes and safety notes on this net, shown with the check. */
  notes: string | null;
  safetyNotes: string | null;
};

function stepFrom(
  doc: MapDocument,
  next: Pick<NextStep, "netId" | "mode" | "why">,
  extra: Partial<Step> = {},
): Step {
  const node = doc.nodes.find((n) => n.id === next.netId);
  if (!node || (node.kind !== "rail" && node.kind !== "signal")) throw new RunError(400, "Unknown net.");
  const range = node.expected[next.mode];
  const unit = unitForMode(next.mode);
  return {
    netId: node.id,
    netName: node.name,
    mode: next.mode,
    why: next.why,
    probeText: node.probe.text,
    probeSeconds: node.probe.seconds,
    needsDisassembly: node.probe.needsDisassembly,
    photo: node.probe.photo ?? null,
    expectedText: range
      ? `${formatQuantity(windowOf(range).min, unit)} to ${formatQuantity(windowOf(range).max, unit)}`
      : next.mode === "voltage"
        ? "no expected voltage in the map"
        : "not shorted (no window in the map)",
    unit: unit === "ohm" ? "Ω" : unit,
    leadStepId: null,
    skippedBefore: false,
    replacesId: null,
    notes: node.notes ?? null,
    safetyNotes: node.safetyNotes ?? null,
    ...extra,
  };
}

/** The reading's verdict, margin and window, recomputed from what was stored (so a replay answers the same). */
function judged(doc: MapDocument, r: ReadingRow) {
  if (r.skipped) return { verdict: "skipped", marginText: "", windowText: "" };
  // The verdict was judged once when saved (meter accuracy included); margin and window come from the map.
  const node = doc.nodes.find((n) => n.id === r.netId);
  const range = node && (node.kind === "rail" || node.kind === "signal") ? node.expected[r.mode] : undefined;
  if (!range) return { verdict: r.verdict, marginText: "", windowText: "" };
  const unit = unitForMode(r.mode);
  const window = windowOf(range);
  const value = engineValue(r);
  const margin = value === "OL" ? 0 : Math.min(value - window.min, window.max - value);
  return {
    verdict: r.verdict,
    marginText:
      value === "OL"
        ? "meter reads open (OL)"
        : margin >= 0
          ? `${formatQuantity(margin, unit)} inside the window`
          : `${formatQuantity(-margin, unit)} outside the window`,
    windowText: `${formatQuantity(window.min, unit)} to ${formatQuantity(window.max, unit)}`,
  };
}

function readingView(doc: MapDocument, r: ReadingRow, names: Map<string, string>) {
  const node = doc.nodes.find((n) => n.id === r.netId);
  const j = judged(doc, r);
  return {
    id: r.id,
    seq: r.seq,
    round: r.round,
    netId: r.netId,
    netName: node?.name ?? r.netId,
    mode: r.mode,
    text: r.text,
    valueText: r.skipped ? "skipped" : formatQuantity(engineValue(r), unitForMode(r.mode)),
    verdict: j.verdict,
    marginText: j.marginText,
    windowText: j.windowText,
    skipped: r.skipped,
    note: r.note,
    replacesId: r.replacesId,
    takenBy: names.get(r.takenBy) ?? "",
    takenAt: r.takenAt.getTime(),
  };
}

export type ReadingView = ReturnType<typeof readingView>;

/** A run as a reading just left it: its row, map document and readings, read inside that save. */
export type LoadedRun = { run: RunRow; doc: MapDocument; rows: ReadingRow[] };

/**
 * Everything the walker, the report and the bench need about one run. `loaded` is what a save of a reading
 * has just read and written (the walker's answer to that reading), so they are not read a second time.
 */
export async function getRunView(shopId: string, runId: string, loaded?: LoadedRun) {
  const run = loaded?.run ?? (await getRunRow(shopId, runId));
  if (!run) return null;
  const doc = loaded?.doc ?? (await getVersionDoc(shopId, run.mapVersionId));
  if (!doc) throw new RunError(400, "The run's map version cannot be read.");
  const [board, version, rows, notes, findingRows, job] = await Promise.all([
    hot.board.get({ boardId: run.boardId, shopId }),
    hot.version.get({ versionId: run.mapVersionId }),
    loaded?.rows ?? hot.readings.all({ runId: run.id }),
    hot.notes.all({ runId: run.id }),
    hot.findings.all({ runId: run.id }),
    run.jobId
      ? db
          .select({ id: jobs.id, number: jobs.number, complaint: jobs.complaint })
          .from(jobs)
          .where(and(eq(jobs.id, run.jobId), eq(jobs.shopId, shopId)))
          .get()
      : undefined,
  ]);
  const userIds = [
    ...new Set([
      run.techId,
      ...rows.map((r) => r.takenBy),
      ...notes.map((n) => n.authorId),
      ...findingRows.map((f) => f.recordedBy ?? ""),
    ]),
  ].filter(Boolean);
  const names = new Map(
    (userIds.length
      ? await db
          .select({ id: users.id, name: users.name })
          .from(users)
          .where(inArray(users.id, userIds))
          .all()
      : []
    ).map((u) => [u.id, u.name]),
  );
  const { analysis, learnedFrom } = await analyseRun(shopId, run, doc, rows);
  const step = run.status === "closed" ? null : chooseStep(doc, notes, analysis);
  const seq = powerUpSequence(doc);
  const netOrder = seq.ok
    ? seq.value.nets
    : doc.nodes.filter((n) => n.kind === "rail" || n.kind === "signal").map((n) => n.id);
  const state = netStates(analysis, netOrder);
  const stages = stagesOf(doc, netOrder);
  const current = findingRows.find((f) => f.round === run.round) ?? null;
  const fixRates =
    analysis.finding?.nodeId && analysis.finding.kind === "part"
      ? await getFixSuccess(shopId, run.boardId, analysis.finding.nodeId)
      : {};
  const readingViews = rows.map((r) => readingView(doc, r, names));
  const byId = new Map(readingViews.map((r) => [r.id, r]));
  return {
    run: {
      id: run.id,
      status: run.status,
      outcome: run.outcome,
      strategy: run.strategy,
      round: run.round,
      techId: run.techId,
      techName: names.get(run.techId) ?? "",
      startedAt: run.startedAt.getTime(),
      isolatedAt: run.isolatedAt?.getTime() ?? null,
      closedAt: run.closedAt?.getTime() ?? null,
      escalatedAt: run.escalatedAt?.getTime() ?? null,
      sourcesAttached: run.condition.sourcesAttached,
      condition: conditionOf(doc, run.condition.sourcesAttached),
    },
    board: board
      ? {
          id: board.id,
          label: `${board.maker} ${board.model}`,
          boardNumber: board.boardNumber,
          revision: board.revision,
        }
      : null,
    job: job ?? null,
    version: {
      id: run.mapVersionId,
      number: version?.number ?? 0,
      mapId: version?.mapId ?? "",
      mapName: version?.mapName ?? "",
    },
    nextSeq: (rows.at(-1)?.seq ?? 0) + 1,
    readings: readingViews,
    lastReading: readingViews.filter((r) => r.round === run.round).at(-1) ?? null,
    step,
    finding: analysis.finding
      ? {
          ...analysis.finding,
          proving: analysis.finding.provingReadingIds
            .map((id) => byId.get(id))
            .filter((r): r is ReadingView => !!r),
          part: analysis.finding.nodeId ? partInfo(doc, analysis.finding.nodeId) : null,
        }
      : null,
    isolated: analysis.isolated,
    contradictions: analysis.contradictions.map((c) => ({ kind: c.kind, message: c.message })),
    suspects: analysis.suspects
      .slice(0, 12)
      .map((s) => ({ id: s.id, label: s.label, probability: s.probability })),
    suspectCount: analysis.suspects.length,
    nets: netOrder.map((id) => {
      const n = doc.nodes.find((x) => x.id === id);
      return { id, name: n?.name ?? id, state: state.get(id) ?? "suspect", stage: stages.get(id) ?? "G3" };
    }),
    stages: stageStrip(stages, state),
    learnedFrom,
    fixRates,
    findingRows: findingRows.map((f) => ({
      id: f.id,
      round: f.round,
      kind: f.kind,
      nodeId: f.nodeId,
      fixKind: f.fixKind,
      partsUsed: f.partsUsed ?? [],
      outcome: f.outcome,
      recordedBy: names.get(f.recordedBy ?? "") ?? "",
      createdAt: f.createdAt.getTime(),
      part: f.nodeId ? partInfo(doc, f.nodeId) : null,
    })),
    currentFinding: current ? { outcome: current.outcome, fixKind: current.fixKind } : null,
    notes: notes.map((n) => ({
      id: n.id,
      kind: n.kind,
      text: n.text,
      netId: n.netId,
      mode: n.mode,
      done: !!n.doneReadingId,
      photoId: n.uploadId,
      author: names.get(n.authorId) ?? "",
      at: n.createdAt.getTime(),
    })),
    measurableNets: doc.nodes
      .filter((n) => n.kind === "rail" || n.kind === "signal")
      .map((n) => ({
        id: n.id,
        name: n.name,
        modes: (["voltage", "resistance", "diode"] as const).filter(
          (m) => (n.kind === "rail" || n.kind === "signal") && !!n.expected[m],
        ),
      })),
  };
}

export type RunView = NonNullable<Awaited<ReturnType<typeof getRunView>>>;

function partInfo(doc: MapDocument, nodeId: string) {
  const n = doc.nodes.find((x) => x.id === nodeId);
  if (!n) return null;
  if (n.kind === "part")
    return {
      id: n.id,
      refdes: n.refdes,
      name: n.name,
      value: n.value ?? null,
      fixes: n.fixes,
      safetyNotes: n.safetyNotes ?? null,
    };
  const safetyNotes = n.kind === "rail" || n.kind === "signal" ? (n.safetyNotes ?? null) : null;
  return { id: n.id, refdes: "", name: n.name, value: null, fixes: [], safetyNotes };
}

function netStates(a: Analysis, netOrder: string[]): Map<string, NetState> {
  const present = new Set(a.present);
  const missing = new Set(a.missing);
  const unpowered = new Set(a.unpowered);
  const out = new Map<string, NetState>();
  for (const id of netOrder)
    out.set(
      id,
      unpowered.has(id) ? "unpowered" : present.has(id) ? "present" : missing.has(id) ? "missing" : "suspect",
    );
  return out;
}

function chooseStep(
  doc: MapDocument,
  notes: Array<typeof runNotes.$inferSelect>,
  analysis: Analysis,
): Step | null {
  const leadStep = notes.find((n) => n.kind === "lead-step" && !n.doneReadingId && n.netId && n.mode);
  if (leadStep?.netId && leadStep.mode)
    return stepFrom(
      doc,
      { netId: leadStep.netId, mode: leadStep.mode, why: `A lead asked for this check: ${leadStep.text}` },
      { leadStepId: leadStep.id },
    );
  if (analysis.isolated) return null;
  // Skipped points are excluded in the analysis, so `next` already keeps the run's own strategy around them.
  if (analysis.next) return stepFrom(doc, analysis.next);
  if (!analysis.stuck) return null;
  // Only skipped points could still tell the suspects apart: offer the engine's choice among them again.
  const again = nextReading(analysis, undefined, undefined, undefined, { exclude: [] });
  if (!again.ok || !again.value) return null;
  return stepFrom(doc, again.value, {
    skippedBefore: true,
    why: `${again.value.why} You skipped this point before. ${analysis.stuckMessage ?? ""}`.trim(),
  });
}

// ---------------------------------------------------------------------------------------------------------
// Writing readings

export type SaveReadingInput = {
  shopId: string;
  userId: string;
  runId: string;
  id: string;
  netId: string;
  mode: Mode;
  text: string;
  expectedSeq: number;
  replacesId: string | null;
  leadStepId: string | null;
  skip: boolean;
  note: string | null;
};

export type SaveReadingAnswer = {
  ok: true;
  replay: boolean;
  /** The run after a new reading (not on a replay): for getRunView, so the answer needs no second read. */
  loaded?: LoadedRun;
  reading: {
    id: string;
    seq: number;
    netName: string;
    valueText: string;
    verdict: string;
    marginText: string;
    windowText: string;
  };
  status: RunRow["status"];
};

function answerFor(
  doc: MapDocument,
  row: ReadingRow,
  replay: boolean,
  status: RunRow["status"],
): SaveReadingAnswer {
  const v = readingView(doc, row, new Map());
  return {
    ok: true,
    replay,
    reading: {
      id: v.id,
      seq: v.seq,
      netName: v.netName,
      valueText: v.valueText,
      verdict: v.verdict,
      marginText: v.marginText,
      windowText: v.windowText,
    },
    status,
  };
}

const isUniqueViolation = (e: unknown) =>
  /UNIQUE constraint failed|SQLITE_CONSTRAINT/i.test(String((e as { message?: string })?.message ?? e)) ||
  /UNIQUE constraint failed|SQLITE_CONSTRAINT/i.test(
    String((e as { cause?: { message?: string } })?.cause?.message ?? ""),
  );

/** Saves one reading (or a skip) exactly once. Replays of the same id return the first answer. */
export async function saveReading(input: SaveReadingInput): Promise<SaveReadingAnswer> {
  const run = await getRunRow(input.shopId, input.runId);
  if (!run) throw new RunError(404, "That run was not found in your shop.");
  const doc = await getVersionDoc(input.shopId, run.mapVersionId);
  if (!doc) throw new RunError(400, "The run's map version cannot be read.");
  const existing = await hot.readingById.get({ id: input.id });
  if (existing) {
    if (existing.runId !== run.id || existing.shopId !== input.shopId)
      throw new RunError(409, "That reading id is already used; reload the page and take the reading again.");
    return answerFor(doc, existing, true, run.status);
  }
  if (run.status === "closed")
    throw new RunError(409, "This run is closed; start a new run to take more readings.");
  const node = doc.nodes.find((n) => n.id === input.netId);
  if (!node || (node.kind !== "rail" && node.kind !== "signal"))
    throw new RunError(400, `There is no net "${input.netId}" in this map.`);
  const meter = await getMeter(input.shopId);
  let value = "";
  let verdict = "skipped";
  if (!input.skip) {
    const q = parseQuantity(input.text, unitForMode(input.mode));
    if (!q.ok) throw new RunError(400, q.error.message);
    const j = judgeReading(doc, { netId: node.id, mode: input.mode, value: q.value.value }, meter, {
      cacheKey: run.mapVersionId,
    });
    if (!j.ok) throw new RunError(400, j.error.message);
    value = q.value.value === "OL" ? "OL" : String(q.value.value);
    verdict = j.value.verdict;
  }
  if (input.replacesId) {
    const old = await db
      .select({ id: readings.id, netId: readings.netId, mode: readings.mode })
      .from(readings)
      .where(and(eq(readings.id, input.replacesId), eq(readings.runId, run.id)))
      .get();
    if (!old) throw new RunError(400, "The reading to correct is not part of this run.");
    if (old.netId !== input.netId || old.mode !== input.mode)
      throw new RunError(400, "A correction must measure the same net in the same mode.");
  }
  const last = await hot.lastReading.get({ runId: run.id });
  const nextSeq = (last?.seq ?? 0) + 1;
  if (input.expectedSeq !== nextSeq) throw conflict(last?.takenBy, input.userId);
  const row: ReadingRow = {
    id: input.id,
    shopId: input.shopId,
    runId: run.id,
    seq: nextSeq,
    netId: node.id,
    mode: input.mode,
    text: input.skip ? "" : input.text.trim(),
    value,
    verdict,
    replacesId: input.replacesId,
    skipped: input.skip,
    note: input.note,
    round: run.round,
    takenBy: input.userId,
    takenAt: new Date(),
  };
  try {
    await db.insert(readings).values(row);
  } catch (e) {
    if (!isUniqueViolation(e)) throw e;
    const again = await db.select().from(readings).where(eq(readings.id, input.id)).get();
    if (again && again.runId === run.id) return answerFor(doc, again, true, run.status);
    throw conflict(undefined, input.userId);
  }
  if (input.leadStepId)
    await db
      .update(runNotes)
      .set({ doneReadingId: input.id })
      .where(
        and(eq(runNotes.id, input.leadStepId), eq(runNotes.runId, run.id), isNull(runNotes.doneReadingId)),
      );
  const loaded = await refreshRun(input.shopId, run, doc);
  return { ...answerFor(doc, row, false, loaded.run.status), loaded };
}

function conflict(otherUser: string | undefined, me: string) {
  return new RunError(
    409,
    otherUser && otherUser !== me
      ? "Another technician saved a reading on this run a moment ago, so yours was not saved. The screen now shows their step: check it, then take your reading again."
      : "This run moved on in another tab or window, so this reading was not saved. The screen now shows the latest step.",
  );
}

/**
 * Recomputes status and the current round's finding row after the readings changed; answers the run as updated,
 * with the readings it was judged on.
 */
async function refreshRun(shopId: string, run: RunRow, doc: MapDocument): Promise<LoadedRun> {
  const rows = await hot.readings.all({ runId: run.id });
  const { analysis } = await analyseRun(shopId, run, doc, rows);
  const f = analysis.isolated ? analysis.finding : null;
  const status: RunRow["status"] =
    run.status === "closed"
      ? "closed"
      : f
        ? f.kind === "no-fault-found"
          ? "no-fault-found"
          : "isolated"
        : "open";
  const findingId = `${run.id}-r${run.round}`;
  const current = await hot.findingById.get({ id: findingId });
  const ops = [];
  let after = run;
  if (status !== run.status) {
    after = { ...run, status, isolatedAt: status === "open" ? null : (run.isolatedAt ?? new Date()) };
    ops.push(
      db.update(runs).set({ status: after.status, isolatedAt: after.isolatedAt }).where(eq(runs.id, run.id)),
    );
  }
  if (f && !current?.outcome && (current?.kind !== f.kind || current?.nodeId !== f.nodeId)) {
    const values = { kind: f.kind, nodeId: f.nodeId };
    ops.push(
      current
        ? db.update(findings).set(values).where(eq(findings.id, findingId))
        : db.insert(findings).values({
            id: findingId,
            shopId,
            runId: run.id,
            boardId: run.boardId,
            mapVersionId: run.mapVersionId,
            round: run.round,
            ...values,
          }),
    );
  } else if (!f && current && !current.outcome) {
    ops.push(db.delete(findings).where(eq(findings.id, findingId)));
  }
  if (ops.length) {
    await db.batch(ops as [(typeof ops)[number], ...typeof ops]);
    forgetShopCaches(shopId);
  }
  return { run: after, doc, rows };
}

// ---------------------------------------------------------------------------------------------------------
// Fix and outcome

export async function recordOutcome(input: {
  shopId: string;
  userId: string;
  runId: string;
  round: number;
  fixId: string | null;
  partsUsed: string[];
  outcome: "powers-on" | "still-dead" | "new-symptom";
}) {
  const run = await getRunRow(input.shopId, input.runId);
  if (!run) throw new RunError(404, "That run was not found in your shop.");
  if (run.round !== input.round)
    throw new RunError(409, "This run moved on in another window; the screen now shows its latest state.");
  if (run.status !== "isolated" && run.status !== "no-fault-found")
    throw new RunError(
      409,
      run.status === "closed" ? "This run is already closed." : "The fault is not isolated yet.",
    );
  const findingId = `${run.id}-r${run.round}`;
  const f = await db.select().from(findings).where(eq(findings.id, findingId)).get();
  if (!f) throw new RunError(409, "The finding is not recorded yet; reload the page.");
  let fixKind: string | null = null;
  if (input.fixId) {
    const doc = (await getVersionDoc(input.shopId, run.mapVersionId))!;
    const part = doc.nodes.find((n) => n.id === f.nodeId);
    const fix = part?.kind === "part" ? part.fixes.find((x) => x.id === input.fixId) : undefined;
    if (!fix && input.fixId !== "other")
      throw new RunError(400, "Pick one of the fixes the map lists for this part.");
    fixKind = input.fixId;
  }
  const now = new Date();
  const ops = [
    db
      .update(findings)
      .set({ fixKind, partsUsed: input.partsUsed, outcome: input.outcome, recordedBy: input.userId })
      .where(eq(findings.id, findingId)),
    input.outcome === "still-dead"
      ? // The board changed: a new round starts from the new state, earlier readings stay in the history.
        db
          .update(runs)
          .set({ outcome: "still-dead", round: run.round + 1, status: "open", isolatedAt: null })
          .where(eq(runs.id, run.id))
      : db
          .update(runs)
          .set({ outcome: input.outcome, status: "closed", closedAt: now })
          .where(eq(runs.id, run.id)),
  ];
  await db.batch(ops as [(typeof ops)[number], ...typeof ops]);
  forgetShopCaches(input.shopId);
}

// ---------------------------------------------------------------------------------------------------------
// Notes, help and notices

export async function addRunNote(input: {
  shopId: string;
  userId: string;
  runId: string;
  kind: "note" | "lead-note" | "lead-step";
  text: string;
  netId?: string | null;
  mode?: Mode | null;
  /** Already checked by `checkPhoto`; stored only once the run is known to be this shop's. */
  photo?: CheckedPhoto | null;
}) {
  const run = await getRunRow(input.shopId, input.runId);
  if (!run) throw new RunError(404, "That run was not found in your shop.");
  if (input.photo && input.kind !== "note") throw new RunError(400, "Photos go with a note.");
  if (input.kind === "lead-step") {
    const doc = (await getVersionDoc(input.shopId, run.mapVersionId))!;
    const node = doc.nodes.find((n) => n.id === input.netId);
    if (!node || (node.kind !== "rail" && node.kind !== "signal"))
      throw new RunError(400, "Pick a net of this map for the extra check.");
    if (!input.mode) throw new RunError(400, "Pick how to measure it.");
  }
  const id = newId();
  const upload = input.photo
    ? await putPhoto({
        shopId: input.shopId,
        actorId: input.userId,
        keyPrefix: `runs/${run.id}`,
        purpose: `run-note:${run.id}`,
        photo: input.photo,
      })
    : null;
  const note = db.insert(runNotes).values({
    id,
    shopId: input.shopId,
    runId: run.id,
    authorId: input.userId,
    kind: input.kind,
    text: input.text,
    netId: input.kind === "lead-step" ? input.netId : null,
    mode: input.kind === "lead-step" ? input.mode : null,
    uploadId: upload?.id ?? null,
  });
  // The note and its photo's row land together: a note never points at a photo that was not recorded.
  if (upload) await db.batch([db.insert(uploads).values(upload), note]);
  else await note;
  if (input.kind !== "note" && run.techId !== input.userId)
    await db.insert(notices).values({
      id: newId(),
      shopId: input.shopId,
      userId: run.techId,
      runId: run.id,
      text:
        input.kind === "lead-step"
          ? `A lead added a check to your run: ${input.text}`
          : `A lead left a note on your run: ${input.text}`,
    });
  return id;
}

/** The tech asks for help: a note on the run, an in-app notice and an e-mail to every lead and owner. */
export async function escalateRun(input: {
  shopId: string;
  userId: string;
  runId: string;
  text: string;
  runUrl: string;
  send: (mail: { to: string; subject: string; text: string }) => Promise<void>;
}) {
  const run = await getRunRow(input.shopId, input.runId);
  if (!run) throw new RunError(404, "That run was not found in your shop.");
  const [leads, me, board] = await Promise.all([
    db
      .select({ userId: users.id, email: users.email, name: users.name })
      .from(members)
      .innerJoin(users, eq(users.id, members.userId))
      .where(and(eq(members.shopId, input.shopId), inArray(members.role, ["lead", "owner"])))
      .all(),
    db.select({ name: users.name }).from(users).where(eq(users.id, input.userId)).get(),
    db.select().from(boards).where(eq(boards.id, run.boardId)).get(),
  ]);
  const who = me?.name ?? "A technician";
  const boardLabel = board ? `${board.maker} ${board.model} (${board.boardNumber})` : "a board";
  const now = new Date();
  const targets = leads.filter((l) => l.userId !== input.userId);
  await db.batch([
    db.insert(runNotes).values({
      id: newId(),
      shopId: input.shopId,
      runId: run.id,
      authorId: input.userId,
      kind: "help",
      text: input.text,
    }),
    db.update(runs).set({ escalatedAt: now }).where(eq(runs.id, run.id)),
    ...targets.map((l) =>
      db.insert(notices).values({
        id: newId(),
        shopId: input.shopId,
        userId: l.userId,
        runId: run.id,
        text: `${who} asks for help on ${boardLabel}: ${input.text}`,
      }),
    ),
  ]);
  for (const l of targets)
    await input.send({
      to: l.email,
      subject: `Help wanted on a run: ${boardLabel}`,
      text: `${who} asks for help on a run on ${boardLabel}.\n\n"${input.text}"\n\nOpen the run: ${input.runUrl}\n\nAdd a note or an extra check there; it appears on the technician's screen.`,
    });
  return targets.length;
}

export function countUnreadNotices(shopId: string, userId: string) {
  return db
    .select({ n: sql<number>`count(*)` })
    .from(notices)
    .where(and(eq(notices.shopId, shopId), eq(notices.userId, userId), isNull(notices.readAt)))
    .get()
    .then((r) => Number(r?.n ?? 0));
}

export function listNotices(shopId: string, userId: string, limit = 20) {
  return db
    .select()
    .from(notices)
    .where(and(eq(notices.shopId, shopId), eq(notices.userId, userId)))
    .orderBy(desc(notices.createdAt))
    .limit(limit)
    .all();
}

/** Marks a member's notices on a run read; reads first, so the walker's polling does not write every time. */
export async function markNoticesRead(shopId: string, userId: string, runId: string) {
  const where = and(
    eq(notices.shopId, shopId),
    eq(notices.userId, userId),
    eq(notices.runId, runId),
    isNull(notices.readAt),
  );
  const unread = await db.select({ id: notices.id }).from(notices).where(where).limit(1).get();
  if (unread) await db.update(notices).set({ readAt: new Date() }).where(where);
}

// ---------------------------------------------------------------------------------------------------------
// Lists

export function listRuns(shopId: string, opts: { limit?: number; boardId?: string } = {}) {
  return db
    .select({
      id: runs.id,
      status: runs.status,
      outcome: runs.outcome,
      strategy: runs.strategy,
      startedAt: runs.startedAt,
      escalatedAt: runs.escalatedAt,
      boardLabel: sql<string>`${boards.maker} || ' ' || ${boards.model}`,
      boardNumber: boards.boardNumber,
      techName: users.name,
      jobNumber: jobs.number,
      // The points probed (skips and corrected readings left out): the rollup the insights count too, so a
      // long run costs the list nothing more than a short one.
      readingCount: runs.readingCount,
    })
    .from(runs)
    .innerJoin(boards, eq(boards.id, runs.boardId))
    .leftJoin(users, eq(users.id, runs.techId))
    .leftJoin(jobs, eq(jobs.id, runs.jobId))
    .where(and(eq(runs.shopId, shopId), opts.boardId ? eq(runs.boardId, opts.boardId) : undefined))
    .orderBy(desc(runs.startedAt))
    .limit(opts.limit ?? 50)
    .all();
}

export type RunEvidence = {
  runId: string;
  boardNumber: string;
  versionNumber: number;
  techName: string;
  noFaultFound: boolean;
  findingMessage: string | null;
  readings: Array<{
    id: string;
    seq: number;
    netName: string;
    mode: Mode;
    valueText: string;
    verdict: string;
  }>;
  notes: Array<{ id: string; kind: string; author: string; text: string }>;
};

/**
 * What a lead needs beside the editor when extending a map from a run: the readings the tech took (current
 * ones, corrections applied) and what the tech wrote. Refused when the run used another map.
 */
export async function getRunEvidence(
  shopId: string,
  runId: string,
  mapId: string,
): Promise<{ ok: true; evidence: RunEvidence } | { ok: false; message: string }> {
  const view = await getRunView(shopId, runId);
  if (!view) return { ok: false, message: "That run was not found in your shop." };
  if (view.version.mapId !== mapId)
    return { ok: false, message: `That run used another map (${view.version.mapName}).` };
  const replaced = new Set(view.readings.map((r) => r.replacesId).filter(Boolean));
  return {
    ok: true,
    evidence: {
      runId: view.run.id,
      boardNumber: view.board?.boardNumber ?? "",
      versionNumber: view.version.number,
      techName: view.run.techName,
      noFaultFound: view.finding?.kind === "no-fault-found",
      findingMessage: view.finding?.message ?? null,
      readings: view.readings
        .filter((r) => !replaced.has(r.id))
        .map((r) => ({
          id: r.id,
          seq: r.seq,
          netName: r.netName,
          mode: r.mode,
          valueText: r.valueText,
          verdict: r.verdict,
        })),
      notes: view.notes
        .filter((n) => n.kind === "note" || n.kind === "help")
        .map((n) => ({ id: n.id, kind: n.kind, author: n.author, text: n.text })),
    },
  };
}
