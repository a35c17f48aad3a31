import type { Mode, Strategy } from "./map-document";
import type { CompiledMap, Scenario } from "./model";

/** Prior counts per candidate id (part id or `short:<netId>`), e.g. past findings on this board. */
export type Priors = Record<string, number>;
/**
 * Reading costs: `probe-time` (probe seconds plus a one-off disassembly penalty), `uniform` (every reading
 * costs 1), or explicit costs keyed by `netId:mode` or `netId` (falling back to probe time).
 */
export type CostModel = "probe-time" | "uniform" | Record<string, number>;

/** Internal state behind an Analysis, kept out of the (serialisable) analysis object. */
export type RunState = {
  m: CompiledMap;
  s: Scenario;
  /** Candidate indices still suspected. */
  suspects: number[];
  disassembled: boolean;
  priors?: Priors;
  costs: CostModel;
  strategy: Strategy;
  noRollout?: boolean;
  /** Excluded checks (net index × 3 + mode index), see next-reading's `excludedSet`. */
  excluded?: Set<number>;
};

export const runStates = new WeakMap<object, RunState>();

/** Laplace-smoothed prior weight: (count + 1). */
export function priorWeights(s: Scenario, suspects: number[], priors?: Priors): Float64Array {
  const w = new Float64Array(suspects.length);
  suspects.forEach((k, i) => {
    const raw = priors ? priors[s.candidates[k].id] : undefined;
    const count = typeof raw === "number" && Number.isFinite(raw) && raw > 0 ? raw : 0;
    w[i] = count + 1;
  });
  return w;
}

export type ObsKind = "v" | "r";
export const obsKind = (mode: Mode): ObsKind => (mode === "voltage" ? "v" : "r");
