import { z } from "zod";
import { windowOf } from "./judge";
import {
  MODES,
  type Mode,
  ModeSchema,
  type NetNode,
  NodeIdSchema,
  type ProbePoint,
  type Strategy,
  StrategySchema,
} from "./map-document";
import { type CompiledMap, type Candidate, netOf, partOf, type Scenario } from "./model";
import { fail, guard, ok, type Result } from "./result";
import { type CostModel, type Priors, priorWeights, runStates } from "./run-state";
import { formatQuantity, unitForMode } from "./units";

/** One-off cost of opening the board / removing a shield, in seconds (common practice estimate). */
export const DISASSEMBLY_SECONDS = 300;
/** `best` refines its greedy choice by a one-step rollout when this few suspects remain. */
export const ROLLOUT_MAX_SUSPECTS = 24;
const ROLLOUT_TOP = 4;

export type NextStep = {
  netId: string;
  netName: string;
  mode: Mode;
  why: string;
  probe: ProbePoint;
  expected: { min: number; max: number } | null;
  cost: number;
  /** Share of the remaining likelihood on the smaller side of this reading's outcomes. */
  separates: number;
};

/** A check the tech cannot take (e.g. a point they cannot reach): never proposed as the next reading. */
export type ExcludedCheck = { netId: string; mode: Mode };
/** Every net has at most three modes and a map at most 2,000 nodes. */
export const ExcludeSchema = z.array(z.object({ netId: NodeIdSchema, mode: ModeSchema })).max(6_000);

const exKey = (net: number, mode: Mode) => net * 3 + MODES.indexOf(mode);

/** Excluded checks as net-index keys; ids that are not nets of this map are ignored. Undefined when empty. */
export function excludedSet(
  m: CompiledMap,
  list: readonly ExcludedCheck[] | undefined,
): Set<number> | undefined {
  if (!list?.length) return undefined;
  const out = new Set<number>();
  for (const x of list) {
    const i = m.index.get(x.netId);
    if (i !== undefined && m.isNet[i]) out.add(exKey(i, x.mode));
  }
  return out.size ? out : undefined;
}

export type ChooseContext = {
  m: CompiledMap;
  s: Scenario;
  suspects: number[];
  weights: Float64Array;
  disassembled: boolean;
  costs: CostModel;
  strategy: Strategy;
  /** Turn off the small-set rollout of `best` (used to measure the bare heuristic). */
  noRollout?: boolean;
  /** Checks never to propose (see `excludedSet`). */
  excluded?: Set<number>;
};

type Test = { net: number; mode: Mode; kind: "v" | "r"; mass: number; cost: number };

const h2 = (q: number) => (q <= 0 || q >= 1 ? 0 : -(q * Math.log2(q) + (1 - q) * Math.log2(1 - q)));

function testCost(ctx: ChooseContext, net: number, mode: Mode): number {
  if (ctx.costs === "uniform") return 1;
  const node = netOf(ctx.m, net);
  if (typeof ctx.costs === "object") {
    const c = ctx.costs[`${node.id}:${mode}`] ?? ctx.costs[node.id];
    if (typeof c === "number" && Number.isFinite(c) && c > 0) return c;
  }
  const base = Math.max(1, node.probe.seconds);
  return base + (node.probe.needsDisassembly && !ctx.disassembled ? DISASSEMBLY_SECONDS : 0);
}

const isExcluded = (ctx: ChooseContext, net: number, mode: Mode) => !!ctx.excluded?.has(exKey(net, mode));

/** How to test a net for a short: resistance, else diode mode (skipping excluded checks). */
function shortMode(ctx: ChooseContext, net: number, node: NetNode): Mode | null {
  if (node.expected.resistance && !isExcluded(ctx, net, "resistance")) return "resistance";
  if (node.expected.diode && !isExcluded(ctx, net, "diode")) return "diode";
  return null;
}

/** Every reading that would split `members` (candidate indices), with the mass on its missing/shorted side. */
function tests(ctx: ChooseContext, members: number[], w: ArrayLike<number>): { list: Test[]; total: number } {
  const { m, s } = ctx;
  const acc = new Float64Array(m.ids.length);
  let total = 0;
  const list: Test[] = [];
  for (let i = 0; i < members.length; i++) {
    const c = s.candidates[members[i]];
    total += w[i];
    for (const v of c.missList) acc[v] += w[i];
  }
  const eps = total * 1e-12;
  for (const v of m.nets) {
    if (!s.baseline[v]) continue;
    const node = netOf(m, v);
    if (node.expected.voltage && acc[v] > eps && acc[v] < total - eps && !isExcluded(ctx, v, "voltage"))
      list.push({ net: v, mode: "voltage", kind: "v", mass: acc[v], cost: testCost(ctx, v, "voltage") });
  }
  if (members.length > 1)
    for (let i = 0; i < members.length; i++) {
      const c = s.candidates[members[i]];
      if (c.kind !== "short") continue;
      const mode = shortMode(ctx, c.node, netOf(m, c.node));
      if (mode && w[i] > eps && w[i] < total - eps)
        list.push({ net: c.node, mode, kind: "r", mass: w[i], cost: testCost(ctx, c.node, mode) });
    }
  return { list, total };
}

const byOrder = (m: CompiledMap) => (a: Test, b: Test) =>
  m.orderPos[a.net] - m.orderPos[b.net] || (a.kind === b.kind ? 0 : a.kind === "v" ? -1 : 1);

function greedyPick(ctx: ChooseContext, list: Test[], total: number): Test | null {
  let best: Test | null = null;
  let bestScore = -1;
  const cmp = byOrder(ctx.m);
  for (const t of list) {
    const score = h2(t.mass / total) / t.cost;
    if (score > bestScore + 1e-12 || (Math.abs(score - bestScore) <= 1e-12 && best && cmp(t, best) < 0)) {
      best = t;
      bestScore = score;
    }
  }
  return best;
}

function splitMembers(ctx: ChooseContext, members: number[], w: ArrayLike<number>, t: Test) {
  const a: number[] = [];
  const aw: number[] = [];
  const b: number[] = [];
  const bw: number[] = [];
  for (let i = 0; i < members.length; i++) {
    const c = ctx.s.candidates[members[i]];
    const side = t.kind === "v" ? c.miss[t.net] === 1 : c.kind === "short" && c.node === t.net;
    if (side) {
      a.push(members[i]);
      aw.push(w[i]);
    } else {
      b.push(members[i]);
      bw.push(w[i]);
    }
  }
  return [
    [a, aw],
    [b, bw],
  ] as const;
}

/** Expected (mass-weighted, unnormalised) cost of isolating with the greedy rule from `members`. */
function greedyCost(ctx: ChooseContext, members: number[], w: ArrayLike<number>, depth: number): number {
  if (members.length <= 1 || depth > 64) return 0;
  const { list, total } = tests(ctx, members, w);
  const t = greedyPick(ctx, list, total);
  if (!t) return 0;
  const [[a, aw], [b, bw]] = splitMembers(ctx, members, w, t);
  return t.cost * total + greedyCost(ctx, a, aw, depth + 1) + greedyCost(ctx, b, bw, depth + 1);
}

function pickBest(ctx: ChooseContext, list: Test[], total: number): Test | null {
  const greedy = greedyPick(ctx, list, total);
  if (!greedy || ctx.noRollout || ctx.suspects.length > ROLLOUT_MAX_SUSPECTS || list.length < 2)
    return greedy;
  const ranked = [...list].sort(
    (x, y) => h2(y.mass / total) / y.cost - h2(x.mass / total) / x.cost || byOrder(ctx.m)(x, y),
  );
  let best = greedy;
  let bestJ = Number.POSITIVE_INFINITY;
  for (const t of [greedy, ...ranked.slice(0, ROLLOUT_TOP).filter((x) => x !== greedy)]) {
    const [[a, aw], [b, bw]] = splitMembers(ctx, ctx.suspects, ctx.weights, t);
    const j = t.cost * total + greedyCost(ctx, a, aw, 1) + greedyCost(ctx, b, bw, 1);
    if (j < bestJ - 1e-9 * total) {
      bestJ = j;
      best = t;
    }
  }
  return best;
}

/** Voltage signature of a candidate (which nets it takes down), computed once per candidate. */
const signatures = new WeakMap<Candidate, string>();
function signature(c: Candidate): string {
  let sig = signatures.get(c);
  if (sig === undefined) {
    sig = c.missList.join(",");
    signatures.set(c, sig);
  }
  return sig;
}

function pickSplit(ctx: ChooseContext, list: Test[]): Test | null {
  const { s } = ctx;
  const classes = new Map<string, Candidate>();
  for (const k of ctx.suspects) {
    const c = s.candidates[k];
    const key = signature(c);
    if (!classes.has(key)) classes.set(key, c);
  }
  const K = classes.size;
  const vt = list.filter((t) => t.kind === "v");
  if (K > 1 && vt.length) {
    const cnt = new Int32Array(ctx.m.ids.length);
    for (const c of classes.values()) for (const v of c.missList) cnt[v]++;
    let best: Test | null = null;
    let bestGap = Number.POSITIVE_INFINITY;
    for (const t of [...vt].sort(byOrder(ctx.m))) {
      if (cnt[t.net] === 0 || cnt[t.net] === K) continue;
      const gap = Math.abs(2 * cnt[t.net] - K);
      if (gap < bestGap) {
        bestGap = gap;
        best = t;
      }
    }
    if (best) return best;
  }
  return [...list].sort(byOrder(ctx.m))[0] ?? null;
}

/** A check as the walker shows it: the reason, with the expected window and probe point for a live reading. */
function stepFor(node: NetNode, t: Test, why: string, separates: number): NextStep {
  const range = node.expected[t.mode];
  const win = range ? windowOf(range) : null;
  const where =
    win && t.kind === "v"
      ? ` Expect ${formatQuantity(win.min, unitForMode(t.mode))}–${formatQuantity(win.max, unitForMode(t.mode))} at ${node.probe.text}.`
      : "";
  return {
    netId: node.id,
    netName: node.name,
    mode: t.mode,
    why: why + where,
    probe: node.probe,
    expected: win,
    cost: t.cost,
    separates,
  };
}

function explain(ctx: ChooseContext, t: Test, total: number, strategy: Strategy): NextStep {
  const { m, s } = ctx;
  const node = netOf(m, t.net);
  const q = t.mass / total;
  const separates = Math.min(q, 1 - q);
  const pct = `${Math.round(separates * 100)}%`;
  let why: string;
  if (t.kind === "v") {
    why = `If ${node.name} is present, the fault is after it; if missing, it is at or before it.`;
    if (strategy === "order") why = `Next in power-up order. ${why}`;
    else if (strategy === "split") why = `${why} Halves the remaining suspects along the power-up order.`;
    else why = `${why} Separates ${pct} of the remaining likelihood.`;
  } else {
    const thr = node.shortedThresholdOhm ?? m.doc.settings.shortedThresholdOhm ?? 1;
    const others = ctx.suspects
      .map((k) => s.candidates[k])
      .filter((c) => !(c.kind === "short" && c.node === t.net));
    const limit = t.mode === "diode" ? "a diode drop near 0 V" : `below ${formatQuantity(thr, "ohm")}`;
    if (others.length === 1 && others[0].kind === "part") {
      const p = partOf(m, others[0].node);
      why = `Everything feeding ${p.refdes} is present, so either ${p.refdes} or a short on ${node.name} keeps ${node.name} down: measure ${t.mode === "diode" ? "the diode drop" : "resistance to ground"} with the board unpowered. ${limit[0].toUpperCase()}${limit.slice(1)} means a short on ${node.name}; otherwise ${p.refdes} is the suspect.`;
    } else {
      why = `With the board unpowered, ${limit} on ${node.name} means it is shorted; otherwise a short there is ruled out.${strategy === "best" ? ` Separates ${pct} of the remaining likelihood.` : ""}`;
    }
  }
  return stepFor(node, t, why, separates);
}

/**
 * With one suspect left while every reading still matches a board with no fault in this map, the check that
 * tells the two apart: the cheapest net the suspect takes down, read live (for a short, its resistance or
 * diode check first, which proves the short itself). Null when every such check is excluded.
 */
export function confirmingStep(ctx: ChooseContext, k: number): NextStep | null {
  const { m, s } = ctx;
  const c = s.candidates[k];
  let t: Test | null = null;
  if (c.kind === "short") {
    const mode = shortMode(ctx, c.node, netOf(m, c.node));
    if (mode) t = { net: c.node, mode, kind: "r", mass: 1, cost: testCost(ctx, c.node, mode) };
  }
  if (!t)
    for (const v of c.missList) {
      if (!s.baseline[v] || !netOf(m, v).expected.voltage || isExcluded(ctx, v, "voltage")) continue;
      const cost = testCost(ctx, v, "voltage");
      if (!t || cost < t.cost || (cost === t.cost && m.orderPos[v] < m.orderPos[t.net]))
        t = { net: v, mode: "voltage", kind: "v", mass: 1, cost };
    }
  if (!t) return null;
  const node = netOf(m, t.net);
  const suspect =
    c.kind === "part" ? `${partOf(m, c.node).refdes} ${partOf(m, c.node).name}` : `a short on ${node.name}`;
  const outcome =
    t.kind === "v"
      ? `If ${node.name} is missing, ${suspect} is the fault; if it is present, the fault lies outside this map.`
      : `A short there confirms it; otherwise the fault lies outside this map.`;
  const why = `Only ${suspect} is left, but every reading so far is also what a board with no fault in this map shows. ${outcome}`;
  return stepFor(node, t, why, 0.5);
}

/** Chooses the next reading for the suspects in `ctx`, or null when nothing left would split them. */
export function chooseNext(ctx: ChooseContext): NextStep | null {
  if (ctx.suspects.length <= 1) return null;
  const { list, total } = tests(ctx, ctx.suspects, ctx.weights);
  if (!list.length) return null;
  let t: Test | null;
  if (ctx.strategy === "order") t = [...list].sort(byOrder(ctx.m))[0];
  else if (ctx.strategy === "split") t = pickSplit(ctx, list);
  else t = pickBest(ctx, list, total);
  return t ? explain(ctx, t, total, ctx.strategy) : null;
}

/**
 * The checks that could split the suspects but are excluded (empty when nothing is excluded or another
 * check is left): what a stuck analysis names.
 */
export function blockedChecks(ctx: ChooseContext): Array<{ netId: string; netName: string; mode: Mode }> {
  if (!ctx.excluded || ctx.suspects.length <= 1) return [];
  if (tests(ctx, ctx.suspects, ctx.weights).list.length) return [];
  const { list } = tests({ ...ctx, excluded: undefined }, ctx.suspects, ctx.weights);
  return list.sort(byOrder(ctx.m)).map((t) => {
    const node = netOf(ctx.m, t.net);
    return { netId: node.id, netName: node.name, mode: t.mode };
  });
}

const OptionsSchema = z.object({
  strategy: StrategySchema.optional(),
  priors: z.record(z.string(), z.number()).optional(),
  costs: z
    .union([z.literal("probe-time"), z.literal("uniform"), z.record(z.string(), z.number())])
    .optional(),
  options: z.object({ exclude: ExcludeSchema.optional() }).optional(),
});

/**
 * Recomputes the next reading of an analysis with another strategy, priors, costs or excluded checks
 * (`options.exclude`; by default the analysis's own, `[]` to lift them).
 */
export const nextReading = guard(
  (
    analysis: object,
    strategy?: Strategy,
    priors?: Priors,
    costs?: CostModel,
    options?: { exclude?: ExcludedCheck[] },
  ): Result<NextStep | null> => {
    const st = analysis && typeof analysis === "object" ? runStates.get(analysis) : undefined;
    if (!st) return fail("invalid-input", "Pass an analysis returned by analyse() or startRun().");
    const o = OptionsSchema.safeParse({ strategy, priors, costs, options });
    if (!o.success)
      return fail(
        "invalid-input",
        "Strategy must be order, split or best; priors and costs are maps of numbers; exclude is a list of { netId, mode }.",
      );
    const ex = o.data.options?.exclude;
    const p = priors ?? st.priors;
    return ok(
      chooseNext({
        m: st.m,
        s: st.s,
        suspects: st.suspects,
        weights: priorWeights(st.s, st.suspects, p),
        disassembled: st.disassembled,
        costs: costs ?? st.costs,
        strategy: strategy ?? st.strategy,
        noRollout: st.noRollout,
        excluded: ex ? excludedSet(st.m, ex) : st.excluded,
      }),
    );
  },
);
