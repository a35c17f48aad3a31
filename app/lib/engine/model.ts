import { isNet, type MapDocument, type NetNode, type PartNode } from "./map-document";
import { fail, guard, ok, type Result } from "./result";
import { buildGraph, levelsOf } from "./sequence";
import { validateMap } from "./validate";

/** A validated map turned into index arrays for fast simulation. Treat the document as immutable. */
export type CompiledMap = {
  doc: MapDocument;
  ids: string[];
  index: Map<string, number>;
  isNet: Uint8Array;
  isPart: Uint8Array;
  isSource: Uint8Array;
  suppliers: number[][];
  drivers: number[][];
  feeds: number[][];
  outputs: number[][];
  order: number[];
  orderPos: Int32Array;
  /** Net node indices in power-up order. */
  nets: number[];
  scenarios: Map<string, Scenario>;
};

export type Candidate = {
  /** Part id, or `short:<netId>`. */
  id: string;
  kind: "part" | "short";
  /** The part node index, or the shorted net's index. */
  node: number;
  /** The net the fault shows at first (the part's first output, or the shorted net). */
  net: number;
  /** 1 where the net is present when healthy but missing under this fault. */
  miss: Uint8Array;
  missList: number[];
};

export type Scenario = {
  attached: Uint8Array;
  baseline: Uint8Array;
  candidates: Candidate[];
  candidateIndex: Map<string, number>;
  symptomNets: number[];
  symptomMatch: "any" | "all";
  downCache: Map<number, Uint8Array>;
};

const cache = new WeakMap<object, CompiledMap>();

/** Validates and compiles a map (cached per document object). */
export const compileMap = guard((doc: MapDocument): Result<CompiledMap> => {
  if (doc && typeof doc === "object") {
    const hit = cache.get(doc);
    if (hit) return ok(hit);
  }
  const report = validateMap(doc);
  if (!report.ok) return report;
  if (!report.value.ok || !report.value.doc) {
    const errors = report.value.issues.filter((i) => i.severity === "error");
    return fail(
      "invalid-map",
      `The map has ${errors.length} problem(s): ${errors
        .slice(0, 3)
        .map((i) => i.message)
        .join(" ")}`,
      report.value.issues,
    );
  }
  const d = report.value.doc;
  const g = buildGraph(d);
  const n = d.nodes.length;
  const { order } = levelsOf(g);
  const isNetA = new Uint8Array(n);
  const isPart = new Uint8Array(n);
  const isSource = new Uint8Array(n);
  d.nodes.forEach((node, i) => {
    if (isNet(node)) isNetA[i] = 1;
    else if (node.kind === "part") isPart[i] = 1;
    else isSource[i] = 1;
  });
  const suppliers: number[][] = [];
  const drivers: number[][] = [];
  const feeds: number[][] = [];
  const outputs: number[][] = [];
  for (let i = 0; i < n; i++) {
    suppliers.push(isNetA[i] ? g.inn[i].filter((j) => isSource[j]) : []);
    drivers.push(isNetA[i] ? g.inn[i].filter((j) => isPart[j]) : []);
    feeds.push(isPart[i] ? g.inn[i].filter((j) => isNetA[j]) : []);
    outputs.push(isPart[i] ? g.out[i].filter((j) => isNetA[j]) : []);
  }
  const orderPos = new Int32Array(n);
  order.forEach((v, k) => {
    orderPos[v] = k;
  });
  const compiled: CompiledMap = {
    doc: d,
    ids: g.ids,
    index: g.index,
    isNet: isNetA,
    isPart,
    isSource,
    suppliers,
    drivers,
    feeds,
    outputs,
    order,
    orderPos,
    nets: order.filter((v) => isNetA[v]),
    scenarios: new Map(),
  };
  cache.set(doc, compiled);
  if (d !== doc) cache.set(d, compiled);
  return ok(compiled);
});

/** Entries kept by `compileMapCached`. */
export const COMPILE_CACHE_SIZE = 32;
const keyed = new Map<string, CompiledMap>();

/**
 * Like `compileMap`, but also keyed by a string that names this exact document (e.g. the map version id),
 * in a small LRU of `COMPILE_CACHE_SIZE` entries. A document parsed afresh from the database per request
 * misses the per-object cache; under its version id it reuses the compiled map and its computed scenarios.
 * The key must change whenever the document does (version ids are immutable, so they qualify).
 */
export const compileMapCached = guard((key: string, doc: MapDocument): Result<CompiledMap> => {
  if (typeof key !== "string" || !key || key.length > 200)
    return fail("invalid-input", "The cache key must be a non-empty string of at most 200 characters.");
  const hit = keyed.get(key);
  if (hit) {
    keyed.delete(key);
    keyed.set(key, hit);
    return ok(hit);
  }
  const c = compileMap(doc);
  if (!c.ok) return c;
  keyed.set(key, c.value);
  while (keyed.size > COMPILE_CACHE_SIZE) keyed.delete(keyed.keys().next().value as string);
  return c;
});

/** Clears the keyed compile cache (tests, or after a bulk map migration). */
export function clearCompileCache(): void {
  keyed.clear();
}

/**
 * Which nets are present under a single fault. A net is present when an attached source supplies it,
 * or a healthy driving part has every feeding net present. `downNets` are forced missing (a short).
 */
export function simulate(
  m: CompiledMap,
  attached: Uint8Array,
  faultPart: number,
  downNets: number[],
): Uint8Array {
  const present = new Uint8Array(m.ids.length);
  const down = new Set(downNets);
  for (const v of m.order) {
    if (m.isSource[v]) present[v] = attached[v];
    else if (m.isPart[v]) {
      if (v === faultPart) continue;
      let okAll = 1;
      for (const f of m.feeds[v])
        if (!present[f]) {
          okAll = 0;
          break;
        }
      present[v] = okAll;
    } else if (!down.has(v)) {
      let p = 0;
      for (const s of m.suppliers[v]) if (present[s]) p = 1;
      if (!p) for (const d of m.drivers[v]) if (present[d]) p = 1;
      present[v] = p;
    }
  }
  return present;
}

/** Nets a short on `net` takes down directly: the net and the other outputs of its sole driver (e.g. its power-good). */
function shortedNets(m: CompiledMap, net: number): number[] {
  const node = m.doc.nodes[net] as NetNode;
  if (node.sharedDrivers || m.drivers[net].length !== 1) return [net];
  return [net, ...m.outputs[m.drivers[net][0]].filter((o) => o !== net)];
}

export const hasShortCandidate = (node: NetNode) => !!(node.expected.resistance || node.expected.diode);

export function scenarioFor(
  m: CompiledMap,
  attachedIds: string[],
  symptomIds: string[],
  match: "any" | "all",
): Scenario {
  const key = `${[...attachedIds].sort().join(",")}|${symptomIds.join(",")}|${match}`;
  const hit = m.scenarios.get(key);
  if (hit) return hit;
  const attached = new Uint8Array(m.ids.length);
  for (const id of attachedIds) {
    const i = m.index.get(id);
    if (i !== undefined && m.isSource[i]) attached[i] = 1;
  }
  const baseline = simulate(m, attached, -1, []);
  const symptomNets = symptomIds.map((id) => m.index.get(id)!).filter((i) => i !== undefined && baseline[i]);
  const candidates: Candidate[] = [];
  const consider = (c: Omit<Candidate, "miss" | "missList">, present: Uint8Array) => {
    const miss = new Uint8Array(m.ids.length);
    const missList: number[] = [];
    for (const v of m.nets)
      if (baseline[v] && !present[v]) {
        miss[v] = 1;
        missList.push(v);
      }
    if (!missList.length) return;
    if (symptomNets.length) {
      const hits = symptomNets.filter((s) => miss[s]).length;
      if (match === "any" ? hits === 0 : hits < symptomNets.length) return;
    }
    candidates.push({ ...c, miss, missList });
  };
  for (const v of m.order) {
    if (m.isPart[v] && m.outputs[v].length) {
      consider({ id: m.ids[v], kind: "part", node: v, net: m.outputs[v][0] }, simulate(m, attached, v, []));
    } else if (m.isNet[v] && baseline[v] && hasShortCandidate(m.doc.nodes[v] as NetNode)) {
      consider(
        { id: `short:${m.ids[v]}`, kind: "short", node: v, net: v },
        simulate(m, attached, -1, shortedNets(m, v)),
      );
    }
  }
  const candidateIndex = new Map(candidates.map((c, i) => [c.id, i]));
  const s: Scenario = {
    attached,
    baseline,
    candidates,
    candidateIndex,
    symptomNets,
    symptomMatch: match,
    downCache: new Map(),
  };
  if (m.scenarios.size > 64) m.scenarios.clear();
  m.scenarios.set(key, s);
  return s;
}

/** Nets that go missing when `net` is missing (the nets that depend on it). */
export function dependents(m: CompiledMap, s: Scenario, net: number): Uint8Array {
  let d = s.downCache.get(net);
  if (!d) {
    d = simulate(m, s.attached, -1, [net]);
    s.downCache.set(net, d);
  }
  return d;
}

export const partOf = (m: CompiledMap, i: number) => m.doc.nodes[i] as PartNode;
export const netOf = (m: CompiledMap, i: number) => m.doc.nodes[i] as NetNode;

/** Default symptom: the last-stage rails (nets that feed nothing) that are powered under the condition. */
export function defaultSymptom(m: CompiledMap, attachedIds: string[]): string[] {
  const s = scenarioFor(m, attachedIds, [], "any");
  const fedSomething = new Uint8Array(m.ids.length);
  for (let p = 0; p < m.ids.length; p++) for (const f of m.feeds[p]) fedSomething[f] = 1;
  const sinks = m.nets.filter((v) => s.baseline[v] && !fedSomething[v]);
  const rails = sinks.filter((v) => m.doc.nodes[v].kind === "rail");
  return (rails.length ? rails : sinks).map((v) => m.ids[v]);
}
