import {
  analyse,
  type MapDocument,
  type NetNode,
  type Priors,
  type RunSetup,
  type Strategy,
} from "../../app/lib/engine";
import { compileMap, scenarioFor } from "../../app/lib/engine/model";
import { optimalPolicyCost } from "./exact";
import { simulateRun } from "./simulate";

/** Candidate ids with their probabilities as the engine sees them at the start of a run. */
export function startingBeliefs(doc: MapDocument, setup: RunSetup, priors?: Priors) {
  const a = analyse(doc, setup, [], { priors });
  if (!a.ok) throw new Error(a.error.message);
  return a.value.suspects;
}

/** Exact expected readings of a strategy: every candidate fault walked without noise, weighted by its probability. */
export function expectedReadings(
  doc: MapDocument,
  setup: RunSetup,
  strategy: Strategy,
  priors?: Priors,
  extra: { noRollout?: boolean } = {},
): { mean: number; allCorrect: boolean } {
  const suspects = startingBeliefs(doc, setup, priors);
  let mean = 0;
  let allCorrect = true;
  for (const s of suspects) {
    const fault =
      s.kind === "part" ? { kind: "part" as const, id: s.nodeId } : { kind: "short" as const, net: s.netId };
    const out = simulateRun(() => 0.5, doc, setup, fault, strategy, {
      priors,
      costs: "uniform",
      noisy: false,
      ...extra,
    });
    mean += s.probability * out.readings;
    allCorrect &&= out.correct;
  }
  return { mean, allCorrect };
}

/** The exact optimum over the same candidates and readings (exhaustive search over suspect sets). */
export function optimalReadings(doc: MapDocument, setup: RunSetup, priors?: Priors): number {
  const m = compileMap(doc);
  if (!m.ok) throw new Error(m.error.message);
  const c = m.value;
  const suspects = startingBeliefs(doc, setup, priors);
  const symptom = setup.symptom ?? { missingNetIds: [], match: "any" as const };
  const s = scenarioFor(c, setup.condition.sourcesAttached, symptom.missingNetIds, symptom.match ?? "any");
  const order = suspects.map((x) => s.candidateIndex.get(x.id)!);
  const p = suspects.map((x) => x.probability);
  const sides: number[] = [];
  for (const v of c.nets) {
    if (!s.baseline[v] || !(c.doc.nodes[v] as NetNode).expected.voltage) continue;
    let mask = 0;
    order.forEach((k, bit) => {
      if (s.candidates[k].miss[v]) mask |= 1 << bit;
    });
    sides.push(mask);
  }
  order.forEach((k, bit) => {
    if (s.candidates[k].kind === "short") sides.push(1 << bit);
  });
  return optimalPolicyCost(p, sides);
}
