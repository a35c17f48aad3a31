import {
  analyse,
  type AnalyseOptions,
  type MapDocument,
  type MeterProfile,
  type NetNode,
  type Reading,
  type RunSetup,
  type Strategy,
  windowOf,
} from "../../app/lib/engine";
import { gaussian } from "./rng";

/** A typical handheld meter, accuracy ±(0.5 % + 2 counts) on every range. */
export const METER: MeterProfile = {
  name: "bench meter ±(0.5 % + 2)",
  voltage: [
    { fullScale: 6, resolution: 0.001, pctOfReading: 0.5, counts: 2 },
    { fullScale: 60, resolution: 0.01, pctOfReading: 0.5, counts: 2 },
    { fullScale: 600, resolution: 0.1, pctOfReading: 0.5, counts: 2 },
  ],
  resistance: [
    { fullScale: 600, resolution: 0.1, pctOfReading: 0.5, counts: 2 },
    { fullScale: 6e3, resolution: 1, pctOfReading: 0.5, counts: 2 },
    { fullScale: 60e3, resolution: 10, pctOfReading: 0.5, counts: 2 },
    { fullScale: 600e3, resolution: 100, pctOfReading: 0.5, counts: 2 },
    { fullScale: 6e6, resolution: 1e3, pctOfReading: 0.5, counts: 2 },
    { fullScale: 60e6, resolution: 10e3, pctOfReading: 0.5, counts: 2 },
  ],
};

export type Fault = { kind: "part"; id: string } | { kind: "short"; net: string };
export const faultId = (f: Fault) => (f.kind === "part" ? f.id : `short:${f.net}`);

/** Ground truth written independently of the engine: fixed-point propagation of presence. */
export function truePresence(doc: MapDocument, attached: string[], fault: Fault): Map<string, boolean> {
  const kind = new Map(doc.nodes.map((n) => [n.id, n.kind]));
  const present = new Map<string, boolean>(
    doc.nodes.map((n) => [n.id, n.kind === "source" && attached.includes(n.id)]),
  );
  const inputs = new Map<string, string[]>();
  for (const e of doc.edges) inputs.set(e.to, [...(inputs.get(e.to) ?? []), e.from]);
  const down = new Set<string>();
  if (fault.kind === "short") {
    down.add(fault.net);
    const node = doc.nodes.find((n) => n.id === fault.net) as NetNode;
    const drivers = (inputs.get(fault.net) ?? []).filter((i) => kind.get(i) === "part");
    if (!node.sharedDrivers && drivers.length === 1)
      for (const e of doc.edges) if (e.from === drivers[0] && e.kind === "drives") down.add(e.to);
  }
  for (let changed = true; changed; ) {
    changed = false;
    for (const n of doc.nodes) {
      if (n.kind === "source") continue;
      const ins = inputs.get(n.id) ?? [];
      let v: boolean;
      if (n.kind === "part")
        v = !(fault.kind === "part" && fault.id === n.id) && ins.every((i) => present.get(i));
      else v = !down.has(n.id) && ins.some((i) => present.get(i));
      if (v !== present.get(n.id)) {
        present.set(n.id, v);
        changed = true;
      }
    }
  }
  return present;
}

function meterNoise(rng: () => number, value: number, ranges: MeterProfile["voltage"]): number {
  if (!ranges) return 0;
  const abs = Math.abs(value);
  const r = ranges.find((x) => abs <= x.fullScale) ?? ranges[ranges.length - 1];
  const acc = (abs * r.pctOfReading) / 100 + r.counts * r.resolution;
  // The stated accuracy is treated as about two standard deviations.
  return (gaussian(rng) * acc) / 2;
}

/** A simulated meter value for the true state of a net. */
export function simulateValue(
  rng: () => number,
  node: NetNode,
  mode: "voltage" | "resistance" | "diode",
  present: boolean,
  shorted: boolean,
  noisy: boolean,
): number | "OL" {
  let v: number;
  if (mode === "voltage") {
    if (!present) v = rng() * 0.04;
    else {
      const w = windowOf(node.expected.voltage!);
      v = w.min + (0.1 + 0.8 * rng()) * (w.max - w.min);
    }
    if (noisy) v = Math.max(0, v + meterNoise(rng, v, METER.voltage));
  } else {
    if (shorted) v = 0.02 + rng() * 0.88;
    else {
      const range = node.expected.resistance ?? node.expected.diode;
      const w = range ? windowOf(range) : { min: 1e3, max: 1e6 };
      v = w.min * (w.max / w.min) ** (0.1 + 0.8 * rng());
    }
    if (noisy) v = Math.max(0, v + meterNoise(rng, v, METER.resistance));
    if (v > 60e6) return "OL";
  }
  return v;
}

export type RunOutcome = { readings: number; correct: boolean; nextMs: number[]; findingId: string | null };

/** Walks one simulated diagnosis to its finding. */
export function simulateRun(
  rng: () => number,
  doc: MapDocument,
  setup: RunSetup,
  fault: Fault,
  strategy: Strategy,
  opts: {
    priors?: AnalyseOptions["priors"];
    costs?: AnalyseOptions["costs"];
    noisy: boolean;
    maxReadings?: number;
    noRollout?: boolean;
  },
): RunOutcome {
  const truth = truePresence(doc, setup.condition.sourcesAttached, fault);
  const byId = new Map(doc.nodes.map((n) => [n.id, n]));
  const readings: Reading[] = [];
  const nextMs: number[] = [];
  const limit = opts.maxReadings ?? 400;
  const runSetup = opts.noisy ? { ...setup, meter: METER } : setup;
  for (;;) {
    const t0 = performance.now();
    const a = analyse(doc, runSetup, readings, {
      strategy,
      priors: opts.priors,
      costs: opts.costs,
      rollout: !opts.noRollout,
    });
    nextMs.push(performance.now() - t0);
    if (!a.ok) throw new Error(a.error.message);
    const an = a.value;
    if (an.isolated || !an.next || readings.length >= limit) {
      const f = an.finding;
      const findingId =
        !f || f.kind === "no-fault-found" ? null : f.kind === "part" ? f.nodeId : `short:${f.nodeId}`;
      return {
        readings: readings.length,
        correct: an.isolated && findingId === faultId(fault),
        nextMs,
        findingId,
      };
    }
    const node = byId.get(an.next.netId) as NetNode;
    const shorted = fault.kind === "short" && fault.net === node.id;
    const value = simulateValue(rng, node, an.next.mode, !!truth.get(node.id), shorted, opts.noisy);
    readings.push({ id: `r${readings.length + 1}`, netId: node.id, mode: an.next.mode, value });
  }
}
