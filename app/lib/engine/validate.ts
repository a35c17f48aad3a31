import {
  DEFAULT_MISSING_FRACTION,
  DEFAULT_MISSING_V,
  DEFAULT_SHORTED_OHM,
  DIODE_SHORTED_V,
  windowOf,
} from "./judge";
import { isNet, type MapDocument, type MapNode, parseMapDocument } from "./map-document";
import { guard, ok, type Result } from "./result";
import { buildGraph, findCyclePath, levelsOf, STAGE_RANK } from "./sequence";

export type IssueCode =
  | "schema"
  | "too-large"
  | "duplicate-id"
  | "dangling-edge"
  | "wrong-edge-kind"
  | "cycle"
  | "net-no-driver"
  | "multiple-drivers"
  | "part-no-output"
  | "part-no-input"
  | "net-no-expected"
  | "duplicate-refdes"
  | "stage-order"
  | "unreachable"
  | "source-no-output"
  | "nominal-outside-expected"
  | "duplicate-edge"
  | "window-below-threshold";

export type ValidationIssue = {
  code: IssueCode;
  severity: "error" | "warning";
  nodeIds: string[];
  edgeIds?: string[];
  message: string;
};

export type ValidationReport = {
  /** True when there is no error (warnings allowed). */
  ok: boolean;
  issues: ValidationIssue[];
  /** The parsed document when its shape is valid. */
  doc?: MapDocument;
};

const label = (n: MapNode) => (n.kind === "part" ? `${n.refdes || n.name} (${n.id})` : `${n.name} (${n.id})`);
const MAX_ISSUES = 500;

/** Checks a map's shape and graph; returns every problem with its node ids and a plain message. */
export const validateMap = guard((input: unknown): Result<ValidationReport> => {
  const parsed = parseMapDocument(input);
  if (!parsed.ok) {
    const code = parsed.error.code === "too-large" ? "too-large" : "schema";
    return ok({
      ok: false,
      issues: [{ code, severity: "error", nodeIds: [], message: parsed.error.message }],
    });
  }
  const doc = parsed.value;
  const issues: ValidationIssue[] = [];
  const add = (i: ValidationIssue) => {
    if (issues.length < MAX_ISSUES) issues.push(i);
  };
  const byId = new Map<string, MapNode>();
  for (const n of doc.nodes) {
    if (byId.has(n.id))
      add({
        code: "duplicate-id",
        severity: "error",
        nodeIds: [n.id],
        message: `Two nodes share the id "${n.id}".`,
      });
    else byId.set(n.id, n);
  }
  const edgeIds = new Set<string>();
  const links = new Map<string, string>();
  for (const e of doc.edges) {
    if (edgeIds.has(e.id))
      add({
        code: "duplicate-id",
        severity: "error",
        nodeIds: [],
        edgeIds: [e.id],
        message: `Two edges share the id "${e.id}".`,
      });
    edgeIds.add(e.id);
    const a = byId.get(e.from);
    const b = byId.get(e.to);
    if (!a || !b) {
      const missing = [!a ? e.from : null, !b ? e.to : null].filter(Boolean).join(" and ");
      add({
        code: "dangling-edge",
        severity: "error",
        nodeIds: [e.from, e.to].filter((id) => byId.has(id)),
        edgeIds: [e.id],
        message: `Edge ${e.id} points to ${missing}, which is not in the map.`,
      });
      continue;
    }
    const link = `${e.from}\u0000${e.to}`;
    const first = links.get(link);
    if (first !== undefined) {
      add({
        code: "duplicate-edge",
        severity: "warning",
        nodeIds: [a.id, b.id],
        edgeIds: [first, e.id],
        message: `Edge ${e.id} repeats edge ${first} from ${label(a)} to ${label(b)}; the repeat is ignored.`,
      });
      continue;
    }
    links.set(link, e.id);
    const okKind =
      (e.kind === "supplies" && a.kind === "source" && isNet(b)) ||
      (e.kind === "feeds" && isNet(a) && b.kind === "part") ||
      (e.kind === "drives" && a.kind === "part" && isNet(b));
    if (!okKind) {
      const what =
        isNet(a) && isNet(b)
          ? "a net cannot connect straight to another net; put the part between them"
          : `a "${e.kind}" edge must go ${e.kind === "supplies" ? "source → net" : e.kind === "feeds" ? "net → part" : "part → net"}`;
      add({
        code: "wrong-edge-kind",
        severity: "error",
        nodeIds: [a.id, b.id],
        edgeIds: [e.id],
        message: `Edge ${e.id} from ${label(a)} to ${label(b)} (${a.kind} → ${b.kind}): ${what}.`,
      });
    }
  }

  const g = buildGraph(doc);
  const { cyclic, order } = levelsOf(g);
  if (cyclic.length) {
    const path = findCyclePath(g, cyclic) ?? cyclic;
    add({
      code: "cycle",
      severity: "error",
      nodeIds: path.map((i) => g.ids[i]),
      message: `The map has a cycle: ${path.map((i) => g.ids[i]).join(" → ")}. A power-up map must not loop back.`,
    });
  }

  const refdes = new Map<string, string>();
  doc.nodes.forEach((n, i) => {
    if (g.index.get(n.id) !== i) return;
    const ins = g.inn[i].map((j) => doc.nodes[j]);
    const outs = g.out[i].map((j) => doc.nodes[j]);
    if (isNet(n)) {
      const drivers = ins.filter((m) => m.kind === "part");
      const sources = ins.filter((m) => m.kind === "source");
      if (!drivers.length && !sources.length)
        add({
          code: "net-no-driver",
          severity: "error",
          nodeIds: [n.id],
          message: `${label(n)} has no driving part and no source: nothing can make it present.`,
        });
      if (drivers.length > 1 && !n.sharedDrivers)
        add({
          code: "multiple-drivers",
          severity: "error",
          nodeIds: [n.id, ...drivers.map((d) => d.id)],
          message: `${label(n)} is driven by ${drivers.map(label).join(", ")}; mark it as shared by several drivers if that is intended (e.g. an OR-ed supply).`,
        });
      if (!n.expected.voltage && !n.expected.resistance && !n.expected.diode)
        add({
          code: "net-no-expected",
          severity: "error",
          nodeIds: [n.id],
          message: `${label(n)} has no expected range for any mode (voltage, resistance or diode).`,
        });
      if (n.expected.voltage) {
        const nominal = n.kind === "rail" ? n.nominalV : n.highV;
        const r = n.expected.voltage;
        const [lo, hi] =
          "nominal" in r
            ? [r.nominal * (1 - r.tolerancePct / 100), r.nominal * (1 + r.tolerancePct / 100)]
            : [r.min, r.max];
        if (nominal < Math.min(lo, hi) || nominal > Math.max(lo, hi))
          add({
            code: "nominal-outside-expected",
            severity: "warning",
            nodeIds: [n.id],
            message: `${label(n)}: its nominal ${nominal} V is outside its expected voltage window.`,
          });
        const missingV =
          n.missingThresholdV ??
          doc.settings.missingThresholdV ??
          Math.max(DEFAULT_MISSING_V, DEFAULT_MISSING_FRACTION * Math.abs(nominal));
        if (Math.min(lo, hi) < missingV)
          add({
            code: "window-below-threshold",
            severity: "warning",
            nodeIds: [n.id],
            message: `${label(n)}: its expected voltage window starts at ${Math.min(lo, hi)} V, below the missing threshold of ${missingV} V, so a healthy reading could look missing (readings inside the window count as in range).`,
          });
      }
      const shortedOhm = n.shortedThresholdOhm ?? doc.settings.shortedThresholdOhm ?? DEFAULT_SHORTED_OHM;
      if (n.expected.resistance) {
        const w = windowOf(n.expected.resistance);
        if (w.min < shortedOhm)
          add({
            code: "window-below-threshold",
            severity: "warning",
            nodeIds: [n.id],
            message: `${label(n)}: its expected resistance window starts at ${w.min} Ω, below the shorted threshold of ${shortedOhm} Ω, so a healthy reading could look shorted (readings inside the window count as in range).`,
          });
      }
      if (n.expected.diode) {
        const w = windowOf(n.expected.diode);
        if (w.min < DIODE_SHORTED_V)
          add({
            code: "window-below-threshold",
            severity: "warning",
            nodeIds: [n.id],
            message: `${label(n)}: its expected diode-mode window starts at ${w.min} V, below the ${DIODE_SHORTED_V} V that reads as a dead short, so a healthy reading could look shorted.`,
          });
      }
    } else if (n.kind === "part") {
      if (!outs.length)
        add({
          code: "part-no-output",
          severity: "error",
          nodeIds: [n.id],
          message: `${label(n)} drives no net, so its failure could never be seen.`,
        });
      if (!ins.length)
        add({
          code: "part-no-input",
          severity: "warning",
          nodeIds: [n.id],
          message: `${label(n)} is fed by no net; it will be treated as always powered.`,
        });
      const key = n.refdes.trim().toUpperCase();
      if (key) {
        const prev = refdes.get(key);
        if (prev)
          add({
            code: "duplicate-refdes",
            severity: "error",
            nodeIds: [prev, n.id],
            message: `Reference designator ${n.refdes} is used by both ${prev} and ${n.id}.`,
          });
        else refdes.set(key, n.id);
      }
    } else if (!outs.length) {
      add({
        code: "source-no-output",
        severity: "warning",
        nodeIds: [n.id],
        message: `${label(n)} supplies nothing.`,
      });
    }
  });

  // Stage tags: the deepest upstream tag must rank at or before each tagged net (propagated through untagged nodes).
  if (!cyclic.length) {
    const up = new Array<{ rank: number; from: number } | null>(doc.nodes.length).fill(null);
    for (const v of order) {
      let best: { rank: number; from: number } | null = null;
      for (const u of g.inn[v]) {
        const c = up[u];
        if (c && (!best || c.rank > best.rank)) best = c;
      }
      const n = doc.nodes[v];
      if (isNet(n) && n.stage) {
        const rank = STAGE_RANK[n.stage];
        if (best && best.rank > rank) {
          const from = doc.nodes[best.from] as MapNode & { stage?: string };
          add({
            code: "stage-order",
            severity: "error",
            nodeIds: [from.id, n.id],
            message: `${label(from)} is tagged ${from.stage} but feeds the path to ${label(n)}, tagged ${n.stage}: a net may only feed parts whose outputs rank the same or later (G3 < S5 < S4 < S3 < S0).`,
          });
        }
        best = { rank, from: v };
      }
      up[v] = best;
    }
  }

  // Reachability from sources and from input-less parts, which the simulation treats as always powered
  // (the part-no-input warning says so); a node nothing can power is unreachable.
  const reach = new Uint8Array(doc.nodes.length);
  const stack: number[] = [];
  doc.nodes.forEach((n, i) => {
    if (g.index.get(n.id) !== i) return;
    if (n.kind === "source" || (n.kind === "part" && g.inn[i].length === 0)) {
      reach[i] = 1;
      stack.push(i);
    }
  });
  while (stack.length) {
    const v = stack.pop()!;
    for (const w of g.out[v])
      if (!reach[w]) {
        reach[w] = 1;
        stack.push(w);
      }
  }
  doc.nodes.forEach((n, i) => {
    if (g.index.get(n.id) !== i || reach[i]) return;
    add({
      code: "unreachable",
      severity: "error",
      nodeIds: [n.id],
      message: `${label(n)} cannot be reached from any source: no power path leads to it.`,
    });
  });

  const hasError = issues.some((i) => i.severity === "error");
  return ok({ ok: !hasError, issues, doc });
});
