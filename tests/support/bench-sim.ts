import type { MapDocument, Mode } from "~/lib/engine";

// A simulated board on the bench for tests: which nets are truly powered under one injected fault, and what a
// meter would show on them. Written apart from the engine (plain fixed-point propagation over the map's edges)
// so the tests check the engine's conclusions against an independent ground truth.

export type InjectedFault = { part: string } | { shortedNet: string };

export function simulateBoard(doc: MapDocument, attached: string[], fault: InjectedFault) {
  const inputs = new Map<string, string[]>();
  for (const e of doc.edges) inputs.set(e.to, [...(inputs.get(e.to) ?? []), e.from]);
  const present = new Map<string, boolean>();
  for (const n of doc.nodes) present.set(n.id, n.kind === "source" && attached.includes(n.id));
  const forcedDown = new Set<string>("shortedNet" in fault ? [fault.shortedNet] : []);
  for (let changed = true; changed; ) {
    changed = false;
    for (const n of doc.nodes) {
      if (n.kind === "source") continue;
      const ins = inputs.get(n.id) ?? [];
      const v =
        n.kind === "part"
          ? !("part" in fault && fault.part === n.id) && ins.every((i) => present.get(i))
          : !forcedDown.has(n.id) && ins.some((i) => present.get(i));
      if (v !== present.get(n.id)) {
        present.set(n.id, v);
        changed = true;
      }
    }
  }

  /** What the tech types for a net and mode: nominal when present, 0 V when missing, mid-window ohms. */
  function readingText(netId: string, mode: Mode): string {
    const n = doc.nodes.find((x) => x.id === netId);
    if (!n || (n.kind !== "rail" && n.kind !== "signal")) throw new Error(`not a net: ${netId}`);
    if (mode === "voltage") {
      if (!present.get(netId)) return "0.00";
      const r = n.expected.voltage;
      const mid = r
        ? "nominal" in r
          ? r.nominal
          : (r.min + r.max) / 2
        : n.kind === "rail"
          ? n.nominalV
          : n.highV;
      return mid.toFixed(3);
    }
    if ("shortedNet" in fault && fault.shortedNet === netId) return mode === "diode" ? "0.005" : "0.4";
    const r = n.expected[mode];
    if (!r) return "OL";
    const lo = "nominal" in r ? r.nominal * (1 - r.tolerancePct / 100) : r.min;
    const hi = "nominal" in r ? r.nominal * (1 + r.tolerancePct / 100) : r.max;
    // Geometric middle of the window: resistance windows span decades.
    const v = Math.sqrt(Math.max(lo, 1e-3) * hi);
    return mode === "resistance" ? `${Math.round(v)}R` : v.toFixed(3);
  }

  return { present, readingText };
}
