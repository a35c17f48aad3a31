import { z } from "zod";
import {
  type Fix,
  type MapDocument,
  type Mode,
  ModeSchema,
  NodeIdSchema,
  type NetNode,
  type Strategy,
  StrategySchema,
} from "./map-document";
import {
  isMeterProfile,
  isMode,
  isReadingValue,
  type Judgement,
  judgeValid,
  type MeterProfile,
  MeterProfileSchema,
  type Verdict,
} from "./judge";
import {
  type CompiledMap,
  compileMap,
  compileMapCached,
  defaultSymptom,
  dependents,
  netOf,
  partOf,
  type Scenario,
  scenarioFor,
} from "./model";
import {
  blockedChecks,
  chooseNext,
  confirmingStep,
  type ExcludedCheck,
  ExcludeSchema,
  excludedSet,
  type NextStep,
} from "./next-reading";
import { fail, guard, ok, type Result } from "./result";
import { type CostModel, type Priors, priorWeights, type RunState, runStates } from "./run-state";
import { formatQuantity, unitForMode } from "./units";

export const MAX_READINGS = 1000;

export const ReadingSchema = z.object({
  id: z.string().min(1).max(64),
  netId: NodeIdSchema,
  mode: ModeSchema,
  value: z.union([z.literal("OL"), z.number().finite()]),
  text: z.string().max(64).optional(),
  takenAt: z.string().max(40).optional(),
});
export type Reading = z.infer<typeof ReadingSchema>;
/** `ReadingSchema` narrowed to what judgeReading needs (built once: zod compiles a schema on first use). */
const ReadingPointSchema = ReadingSchema.pick({ netId: true, mode: true, value: true });
const NET_ID = /^[A-Za-z0-9_.-]{1,64}$/;

/** Plain-code twin of `ReadingSchema` (no zod per reading on the hot path); null when it does not fit. */
function plainReading(r: unknown): Reading | null {
  if (typeof r !== "object" || r === null || Array.isArray(r)) return null;
  const x = r as Record<string, unknown>;
  const { id, netId, mode, value, text, takenAt } = x;
  if (typeof id !== "string" || id.length < 1 || id.length > 64) return null;
  if (typeof netId !== "string" || !NET_ID.test(netId)) return null;
  if (!isMode(mode) || !isReadingValue(value)) return null;
  if (text !== undefined && (typeof text !== "string" || text.length > 64)) return null;
  if (takenAt !== undefined && (typeof takenAt !== "string" || takenAt.length > 40)) return null;
  // Same shape as zod's output: known keys only, in schema order.
  const out: Reading = { id, netId, mode, value };
  if ("text" in x) out.text = text as string | undefined;
  if ("takenAt" in x) out.takenAt = takenAt as string | undefined;
  return out;
}

export const RunSetupSchema = z.object({
  condition: z.object({ sourcesAttached: z.array(NodeIdSchema).max(100) }),
  symptom: z
    .object({ missingNetIds: z.array(NodeIdSchema).max(2000), match: z.enum(["any", "all"]).optional() })
    .optional(),
  meter: MeterProfileSchema.optional(),
});
export type RunSetup = z.infer<typeof RunSetupSchema>;

export type AnalyseOptions = {
  strategy?: Strategy;
  priors?: Priors;
  costs?: CostModel;
  /** `best` refines its greedy pick by a one-step rollout on small suspect sets (default true). */
  rollout?: boolean;
  /**
   * Stable key of this exact document (e.g. the map version id): the compiled map is kept in a small LRU
   * under it, so a document parsed afresh per request still reuses the compiled map and its scenarios.
   */
  cacheKey?: string;
  /**
   * Checks the tech cannot take ("can't reach"): an excluded net and mode is never proposed as `next`. When
   * only excluded checks could still separate the suspects, `next` is null and the analysis is `stuck`.
   */
  exclude?: ExcludedCheck[];
  /**
   * Confirm before naming a fault (default false, the plain single-fault search the published examples
   * assume): with one suspect left while every reading still matches a board with no fault in this map, `next`
   * is the reading that tells the two apart instead of a finding, so a fault outside the map ends as "no fault
   * found in this map" and a finding always rests on a reading that shows something wrong. The walker sets it.
   */
  confirm?: boolean;
};
const AnalyseOptionsSchema = z
  .object({
    strategy: StrategySchema.optional(),
    priors: z.record(z.string(), z.number()).optional(),
    costs: z
      .union([z.literal("probe-time"), z.literal("uniform"), z.record(z.string(), z.number())])
      .optional(),
    rollout: z.boolean().optional(),
    confirm: z.boolean().optional(),
    cacheKey: z.string().min(1).max(200).optional(),
    exclude: ExcludeSchema.optional(),
  })
  .optional();

export type Suspect = {
  id: string;
  kind: "part" | "short";
  nodeId: string;
  netId: string;
  label: string;
  probability: number;
};

export type Finding = {
  kind: "part" | "short" | "no-fault-found";
  nodeId: string | null;
  netId: string | null;
  message: string;
  provingReadingIds: string[];
  fixes: Fix[];
  /** Other suspects the map's readings cannot tell apart from this one. */
  ambiguousWith?: string[];
};

export type Contradiction = {
  kind: "depends-on-missing" | "short-but-present" | "not-powered" | "unmodelled-short" | "no-single-fault";
  readingIds: string[];
  netIds: string[];
  message: string;
};

export type JudgedReading = Reading & {
  verdict: Verdict | null;
  judgement: Judgement | null;
  /** A later reading of the same net and mode replaces this one. */
  superseded: boolean;
  error?: string;
};

export type Analysis = {
  strategy: Strategy;
  readings: JudgedReading[];
  present: string[];
  missing: string[];
  /** Nets with no power under this condition (supplied only by absent sources). */
  unpowered: string[];
  suspects: Suspect[];
  isolated: boolean;
  finding: Finding | null;
  /** At most MAX_CONTRADICTIONS (200) are listed. */
  contradictions: Contradiction[];
  /** How many further contradictions were found but not listed (absent when none). */
  contradictionsOmitted?: number;
  next: NextStep | null;
  /**
   * True when the suspects could still be told apart, but only by excluded (skipped) checks: `next` is null,
   * no finding is made, and `stuckMessage` says so.
   */
  stuck: boolean;
  stuckMessage?: string;
};

export type Run = {
  setup: Required<Pick<RunSetup, "condition" | "symptom">> & RunSetup;
  analysis: Analysis;
  warnings: string[];
};

type Obs = { readingId: string; net: number; kind: "v" | "r"; value: 0 | 1; reading: JudgedReading };

function thresholdsFor(doc: MapDocument, node: NetNode) {
  return {
    missingV: node.missingThresholdV ?? doc.settings.missingThresholdV,
    shortedOhm: node.shortedThresholdOhm ?? doc.settings.shortedThresholdOhm,
  };
}

/** Judges an already validated reading (mode, value) and meter against the map's net. */
function judgeOn(
  doc: MapDocument,
  node: NetNode,
  mode: Mode,
  value: number | "OL",
  meter?: MeterProfile,
): Result<Judgement> {
  const nominal = node.kind === "rail" ? node.nominalV : node.highV;
  const range = node.expected[mode];
  const t = thresholdsFor(doc, node);
  if (range) {
    const missingV = t.missingV ?? (mode === "voltage" ? Math.max(0.1, 0.05 * Math.abs(nominal)) : undefined);
    return ok(judgeValid(mode, value, range, meter, { missingV, shortedOhm: t.shortedOhm }));
  }
  if (mode === "voltage")
    return fail<Judgement>("no-expected", `${node.name} has no expected voltage in this map.`);
  // Without an expected window a resistance/diode reading still tells shorted from not shorted.
  return ok(judgeValid(mode, value, { min: 0, max: Number.MAX_VALUE }, meter, { shortedOhm: t.shortedOhm }));
}

/** Judges one reading against the map's expected window for its net and mode. */
export const judgeReading = guard(
  (
    doc: MapDocument | CompiledMap,
    reading: Pick<Reading, "netId" | "mode" | "value">,
    meter?: MeterProfile,
    options?: { cacheKey?: string },
  ): Result<Judgement> => {
    const key = options && typeof options === "object" ? options.cacheKey : undefined;
    if (key !== undefined && (typeof key !== "string" || !key || key.length > 200))
      return fail("invalid-input", "Options: cacheKey is a string.");
    const c = compileFor(doc, { cacheKey: key });
    if (!c.ok) return c;
    const r = ReadingPointSchema.safeParse(reading);
    if (!r.success) return fail("invalid-input", "A reading needs netId, mode and a number or 'OL'.");
    if (meter !== undefined && !isMeterProfile(meter) && !MeterProfileSchema.safeParse(meter).success)
      return fail("invalid-input", "The meter profile is not valid.");
    const i = c.value.index.get(r.data.netId);
    if (i === undefined || !c.value.isNet[i])
      return fail("unknown-net", `No net "${r.data.netId}" in this map.`);
    return judgeOn(c.value.doc, netOf(c.value, i), r.data.mode, r.data.value, meter);
  },
);

function candidateLabel(m: CompiledMap, s: Scenario, k: number): Suspect {
  const c = s.candidates[k];
  if (c.kind === "part") {
    const p = partOf(m, c.node);
    return {
      id: c.id,
      kind: "part",
      nodeId: p.id,
      netId: m.ids[c.net],
      label: `${p.refdes} ${p.name}`.trim(),
      probability: 0,
    };
  }
  const n = netOf(m, c.node);
  return { id: c.id, kind: "short", nodeId: n.id, netId: n.id, label: `Short on ${n.name}`, probability: 0 };
}

function predicts(s: Scenario, k: number, o: Obs): 0 | 1 {
  const c = s.candidates[k];
  if (o.kind === "v") return s.baseline[o.net] && !c.miss[o.net] ? 1 : 0;
  return c.kind === "short" && c.node === o.net ? 1 : 0;
}
const healthyPredicts = (s: Scenario, o: Obs): 0 | 1 => (o.kind === "v" ? (s.baseline[o.net] ? 1 : 0) : 0);

/** Fewest readings (kept in order) that still rule out every other candidate. */
function provingReadings(s: Scenario, obs: Obs[], target: number): string[] {
  const elim: number[][] = obs.map(() => []);
  // Index C stands for "no fault in this map": a finding also needs a reading that rules that out.
  const C = s.candidates.length;
  const count = new Int32Array(C + 1);
  obs.forEach((o, j) => {
    for (let k = 0; k < C; k++) {
      if (k === target) continue;
      if (predicts(s, k, o) !== o.value) {
        elim[j].push(k);
        count[k]++;
      }
    }
    if (target >= 0 && healthyPredicts(s, o) !== o.value) {
      elim[j].push(C);
      count[C]++;
    }
  });
  const keep = obs.map(() => true);
  for (let j = obs.length - 1; j >= 0; j--) {
    if (elim[j].every((k) => count[k] >= 2)) {
      keep[j] = false;
      for (const k of elim[j]) count[k]--;
    }
  }
  return obs.filter((_, j) => keep[j]).map((o) => o.readingId);
}

function analyseCore(
  m: CompiledMap,
  setup: RunSetup,
  readings: Reading[],
  options: AnalyseOptions | undefined,
): Result<Analysis> {
  const doc = m.doc;
  for (const id of setup.condition.sourcesAttached) {
    const i = m.index.get(id);
    if (i === undefined || !m.isSource[i]) return fail("unknown-source", `No source "${id}" in this map.`);
  }
  const symptomIds = setup.symptom?.missingNetIds ?? defaultSymptom(m, setup.condition.sourcesAttached);
  for (const id of symptomIds) {
    const i = m.index.get(id);
    if (i === undefined || !m.isNet[i])
      return fail("unknown-net", `The symptom names "${id}", which is not a net in this map.`);
  }
  const s = scenarioFor(m, setup.condition.sourcesAttached, symptomIds, setup.symptom?.match ?? "any");
  const strategy = options?.strategy ?? doc.settings.strategy;

  // Judge every reading; the latest reading of a net and mode is the one that counts.
  const judged: JudgedReading[] = readings.map((r) => {
    const i = m.index.get(r.netId);
    if (i === undefined || !m.isNet[i])
      return {
        ...r,
        verdict: null,
        judgement: null,
        superseded: false,
        error: `No net "${r.netId}" in this map.`,
      };
    const j = judgeOn(doc, netOf(m, i), r.mode, r.value, setup.meter);
    if (!j.ok) return { ...r, verdict: null, judgement: null, superseded: false, error: j.error.message };
    return { ...r, verdict: j.value.verdict, judgement: j.value, superseded: false };
  });
  const latest = new Map<string, number>();
  judged.forEach((r, idx) => {
    if (r.verdict === null) return;
    const key = `${r.netId}|${r.mode === "voltage" ? "v" : "r"}`;
    const prev = latest.get(key);
    if (prev !== undefined) judged[prev].superseded = true;
    latest.set(key, idx);
  });
  const obs: Obs[] = [];
  for (const r of judged) {
    if (r.verdict === null || r.superseded) continue;
    const net = m.index.get(r.netId)!;
    if (r.mode === "voltage")
      obs.push({ readingId: r.id, net, kind: "v", value: r.verdict === "missing" ? 0 : 1, reading: r });
    else obs.push({ readingId: r.id, net, kind: "r", value: r.verdict === "shorted" ? 1 : 0, reading: r });
  }

  // Eliminate: a candidate survives when it predicts every observation.
  const C = s.candidates.length;
  const mism = new Int32Array(C);
  for (const o of obs) for (let k = 0; k < C; k++) if (predicts(s, k, o) !== o.value) mism[k]++;
  const healthyOk = obs.every((o) => healthyPredicts(s, o) === o.value);
  let suspectsIdx: number[] = [];
  for (let k = 0; k < C; k++) if (mism[k] === 0) suspectsIdx.push(k);

  const found = findContradictions(m, s, obs);
  const contradictions = found.list;
  let fallback = false;
  if (!suspectsIdx.length && !healthyOk && C) {
    const least = Math.min(...Array.from(mism));
    suspectsIdx = [];
    for (let k = 0; k < C; k++) if (mism[k] === least) suspectsIdx.push(k);
    fallback = true;
    if (!contradictions.length)
      contradictions.push({
        kind: "no-single-fault",
        readingIds: obs.filter((o) => o.value === (o.kind === "v" ? 0 : 1)).map((o) => o.readingId),
        netIds: obs.filter((o) => o.value === (o.kind === "v" ? 0 : 1)).map((o) => m.ids[o.net]),
        message:
          "No single failed part or short in this map explains these readings together (two faults, a wrong reading, or a fault outside the map). Re-check the readings that disagree.",
      });
  }

  const weights = priorWeights(s, suspectsIdx, options?.priors);
  let total = 0;
  for (const w of weights) total += w;
  const suspects = suspectsIdx
    .map((k, i) => ({
      ...candidateLabel(m, s, k),
      probability: total ? weights[i] / total : 0,
      pos: m.orderPos[s.candidates[k].node],
    }))
    .sort((a, b) => b.probability - a.probability || a.pos - b.pos)
    .map(({ pos: _pos, ...rest }) => rest);

  const present: string[] = [];
  const missing: string[] = [];
  const unpowered: string[] = [];
  const missCount = new Int32Array(m.ids.length);
  for (const k of suspectsIdx) for (const v of s.candidates[k].missList) missCount[v]++;
  for (const v of m.nets) {
    if (!s.baseline[v]) {
      unpowered.push(m.ids[v]);
      continue;
    }
    if (suspectsIdx.length === 0) {
      if (healthyOk) present.push(m.ids[v]);
      continue;
    }
    if (missCount[v] === 0) present.push(m.ids[v]);
    else if (missCount[v] === suspectsIdx.length) missing.push(m.ids[v]);
  }
  if (!suspectsIdx.length && !healthyOk) {
    for (const o of obs) if (o.kind === "v") (o.value ? present : missing).push(m.ids[o.net]);
  }

  const disassembled = obs.some((o) => netOf(m, o.net).probe.needsDisassembly);
  const costs = options?.costs ?? "probe-time";
  const state: RunState = {
    m,
    s,
    suspects: suspectsIdx,
    disassembled,
    priors: options?.priors,
    costs,
    strategy,
    noRollout: options?.rollout === false,
    excluded: excludedSet(m, options?.exclude),
  };
  const ctx = {
    m,
    s,
    suspects: suspectsIdx,
    weights,
    disassembled,
    costs,
    strategy,
    noRollout: state.noRollout,
    excluded: state.excluded,
  };
  const next = chooseNext(ctx);
  // One suspect left is not yet a finding while a board with no fault in this map would read the same:
  // one more reading either proves the suspect or clears it ("no fault found in this map").
  const confirm =
    options?.confirm && !fallback && suspectsIdx.length === 1 && healthyOk
      ? confirmingStep(ctx, suspectsIdx[0])
      : null;
  // Only skipped checks could still tell the suspects apart: say so instead of guessing a finding.
  const blocked = next ? [] : blockedChecks(ctx);
  const stuck = blocked.length > 0;

  let finding: Finding | null = null;
  let isolated = false;
  if (!fallback && suspectsIdx.length === 1 && !confirm) {
    isolated = true;
    finding = findingFor(m, s, suspectsIdx[0], obs);
  } else if (!fallback && suspectsIdx.length === 0 && healthyOk) {
    isolated = true;
    finding = {
      kind: "no-fault-found",
      nodeId: null,
      netId: null,
      message: C
        ? "No fault found in this map: the readings cleared every suspect. The fault may lie outside the map."
        : "No fault found in this map: nothing in it explains the symptom under this condition.",
      provingReadingIds: provingReadings(s, obs, -1),
      fixes: [],
    };
  } else if (!fallback && suspectsIdx.length > 1 && !next && !stuck) {
    const top = s.candidateIndex.get(suspects[0].id)!;
    finding = { ...findingFor(m, s, top, obs), ambiguousWith: suspects.slice(1).map((x) => x.id) };
    finding.message += ` The map's readings cannot tell it apart from ${suspects
      .slice(1)
      .map((x) => x.label)
      .join(", ")}.`;
  }

  const analysis: Analysis = {
    strategy,
    readings: judged,
    present,
    missing,
    unpowered,
    suspects,
    isolated,
    finding,
    contradictions,
    ...(found.omitted ? { contradictionsOmitted: found.omitted } : {}),
    next: isolated ? null : (confirm ?? next),
    stuck,
    ...(stuck ? { stuckMessage: stuckMessage(blocked, suspectsIdx.length) } : {}),
  };
  runStates.set(analysis, state);
  return ok(analysis);
}

function stuckMessage(blocked: Array<{ netName: string; mode: Mode }>, suspects: number): string {
  const names = blocked.slice(0, 5).map((b) => `${b.netName} (${b.mode})`);
  const more = blocked.length > 5 ? ` and ${blocked.length - 5} more` : "";
  return `The remaining checks were skipped; ask a lead for help. Only ${names.join(", ")}${more} can still tell the ${suspects} remaining suspects apart.`;
}

function findingFor(m: CompiledMap, s: Scenario, k: number, obs: Obs[]): Finding {
  const c = s.candidates[k];
  const provingReadingIds = provingReadings(s, obs, k);
  if (c.kind === "part") {
    const p = partOf(m, c.node);
    const net = netOf(m, c.net);
    const feeders = m.feeds[c.node].map((f) => netOf(m, f).name);
    const shortChecked = obs.some((o) => o.kind === "r" && o.net === c.net && o.value === 0);
    return {
      kind: "part",
      nodeId: p.id,
      netId: net.id,
      message: `${p.refdes}${p.value ? ` (${p.value})` : ""} ${p.name} has failed: ${net.name} is missing while ${
        feeders.length
          ? `${feeders.join(", ")} ${feeders.length > 1 ? "are" : "is"} present`
          : "it has no inputs"
      }${shortChecked ? `, and ${net.name} is not shorted to ground` : ""}.`,
      provingReadingIds,
      fixes: p.fixes,
    };
  }
  const net = netOf(m, c.node);
  const r = obs.find((o) => o.kind === "r" && o.net === c.node);
  const val =
    r && typeof r.reading.value === "number"
      ? ` (${formatQuantity(r.reading.value, unitForMode(r.reading.mode))})`
      : "";
  return {
    kind: "short",
    nodeId: net.id,
    netId: net.id,
    message: `${net.name} is shorted to ground${val}: find the shorted part on it (commonly a capacitor) before replacing its driver.`,
    provingReadingIds,
    fixes: [],
  };
}

/** At most this many contradictions are listed; the rest are counted in `contradictionsOmitted`. */
export const MAX_CONTRADICTIONS = 200;

function findContradictions(
  m: CompiledMap,
  s: Scenario,
  obs: Obs[],
): { list: Contradiction[]; omitted: number } {
  const out: Contradiction[] = [];
  let omitted = 0;
  const push = (make: () => Contradiction) => {
    if (out.length < MAX_CONTRADICTIONS) out.push(make());
    else omitted++;
  };
  const name = (v: number) => netOf(m, v).name;
  const vPresent = obs.filter((o) => o.kind === "v" && o.value === 1);
  const vMissing = obs.filter((o) => o.kind === "v" && o.value === 0 && s.baseline[o.net]);
  for (const a of vPresent) {
    if (!s.baseline[a.net]) {
      push(() => ({
        kind: "not-powered",
        readingIds: [a.readingId],
        netIds: [m.ids[a.net]],
        message: `${name(a.net)} reads present, but no attached source powers it under this condition. Check the condition or the reading.`,
      }));
      continue;
    }
    for (const b of vMissing) {
      if (a.net === b.net) continue;
      if (!dependents(m, s, b.net)[a.net])
        push(() => ({
          kind: "depends-on-missing",
          readingIds: [a.readingId, b.readingId],
          netIds: [m.ids[a.net], m.ids[b.net]],
          message: `${name(a.net)} reads present but depends on ${name(b.net)}, which reads missing. One of the two readings is wrong: measure both again.`,
        }));
    }
  }
  const presentByNet = new Map<number, Obs>();
  for (const p of vPresent) if (!presentByNet.has(p.net)) presentByNet.set(p.net, p);
  for (const o of obs) {
    if (o.kind !== "r" || o.value !== 1) continue;
    if (!s.candidateIndex.has(`short:${m.ids[o.net]}`))
      push(() => ({
        kind: "unmodelled-short",
        readingIds: [o.readingId],
        netIds: [m.ids[o.net]],
        message: `${name(o.net)} reads shorted, but the map gives it no resistance-to-ground expectation; the lead should add one.`,
      }));
    const v = presentByNet.get(o.net);
    if (v)
      push(() => ({
        kind: "short-but-present",
        readingIds: [v.readingId, o.readingId],
        netIds: [m.ids[o.net]],
        message: `${name(o.net)} reads present live but shorted to ground unpowered. Measure it again.`,
      }));
  }
  return { list: out, omitted };
}

/** Analyses a run: suspects with probabilities, proven nets, the finding, contradictions and the next reading. */
export const analyse = guard(
  (
    doc: MapDocument | CompiledMap,
    setup: RunSetup,
    readings: Reading[],
    options?: AnalyseOptions,
  ): Result<Analysis> => {
    const o = parseOptions(options);
    if (!o.ok) return o;
    const c = compileFor(doc, o.value);
    if (!c.ok) return c;
    const st = RunSetupSchema.safeParse(setup);
    if (!st.success)
      return fail("invalid-input", `The run setup is not valid: ${st.error.issues[0]?.message ?? ""}`);
    if (!Array.isArray(readings)) return fail("invalid-input", "Readings must be an array.");
    if (readings.length > MAX_READINGS) return fail("too-large", `At most ${MAX_READINGS} readings per run.`);
    const rs: Reading[] = [];
    for (const [i, r] of readings.entries()) {
      const plain = plainReading(r);
      if (plain) {
        rs.push(plain);
        continue;
      }
      const p = ReadingSchema.safeParse(r);
      if (!p.success)
        return fail(
          "invalid-input",
          `Reading ${i + 1} is not valid: ${p.error.issues.map((x) => `${x.path.join(".")} ${x.message}`).join("; ")}`,
        );
      rs.push(p.data);
    }
    return analyseCore(c.value, st.data, rs, o.value);
  },
);

function parseOptions(options: unknown): Result<AnalyseOptions | undefined> {
  const o = AnalyseOptionsSchema.safeParse(options);
  if (!o.success)
    return fail(
      "invalid-input",
      "Options: strategy is order|split|best; priors and costs are maps of numbers; rollout is true|false; cacheKey is a string; exclude is a list of { netId, mode }.",
    );
  return ok(o.data);
}

function compileFor(doc: MapDocument | CompiledMap, options: AnalyseOptions | undefined) {
  if (isCompiled(doc)) return ok(doc);
  return options?.cacheKey
    ? compileMapCached(options.cacheKey, doc as MapDocument)
    : compileMap(doc as MapDocument);
}

function isCompiled(x: unknown): x is CompiledMap {
  return (
    !!x &&
    typeof x === "object" &&
    "scenarios" in x &&
    "orderPos" in x &&
    (x as CompiledMap).scenarios instanceof Map
  );
}

/** Starts a run: fills in the default symptom and returns the first analysis (with the first reading to take). */
export const startRun = guard((doc: MapDocument, setup: RunSetup, options?: AnalyseOptions): Result<Run> => {
  const o = parseOptions(options);
  if (!o.ok) return o;
  const c = compileFor(doc, o.value);
  if (!c.ok) return c;
  const st = RunSetupSchema.safeParse(setup);
  if (!st.success)
    return fail("invalid-input", `The run setup is not valid: ${st.error.issues[0]?.message ?? ""}`);
  for (const id of st.data.condition.sourcesAttached) {
    const i = c.value.index.get(id);
    if (i === undefined || !c.value.isSource[i])
      return fail("unknown-source", `No source "${id}" in this map.`);
  }
  const symptom = st.data.symptom ?? {
    missingNetIds: defaultSymptom(c.value, st.data.condition.sourcesAttached),
    match: "any" as const,
  };
  const full = { ...st.data, symptom };
  const a = analyse(c.value, full, [], o.value);
  if (!a.ok) return a;
  const warnings: string[] = [];
  const s = runStates.get(a.value)!.s;
  if (!s.symptomNets.length)
    warnings.push(
      "None of the symptom's nets is powered under this condition: attach the charger or press the button.",
    );
  if (!s.candidates.length)
    warnings.push("Nothing in this map can explain the symptom under this condition.");
  return ok({ setup: full, analysis: a.value, warnings });
});
