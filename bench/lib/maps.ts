import type { MapDocument, MapEdge, MapNode, Range } from "../../app/lib/engine";
import { pick } from "./rng";

const probe = { text: "pad", seconds: 20, needsDisassembly: false };

/** A chain: source → VIN → P1 → N1 → … → Pn → Nn. With `shorts`, every Nk has a resistance expectation. */
export function chainMap(n: number, opts: { shorts?: boolean } = {}): MapDocument {
  const nodes: MapNode[] = [
    { id: "src", kind: "source", name: "Charger" },
    {
      id: "vin",
      kind: "rail",
      name: "VIN",
      nominalV: 20,
      tolerancePct: 5,
      expected: { voltage: { nominal: 20, tolerancePct: 5 } },
      probe,
    },
  ];
  const edges: MapEdge[] = [{ id: "e-src", from: "src", to: "vin", kind: "supplies" }];
  let prev = "vin";
  for (let k = 1; k <= n; k++) {
    nodes.push({
      id: `p${k}`,
      kind: "part",
      partType: "regulator",
      refdes: `U${k}`,
      name: `Stage ${k}`,
      fixes: [],
    });
    nodes.push({
      id: `n${k}`,
      kind: "rail",
      name: `RAIL_${k}`,
      nominalV: 3.3,
      tolerancePct: 5,
      expected: {
        voltage: { nominal: 3.3, tolerancePct: 5 },
        ...(opts.shorts ? { resistance: { min: 100, max: 100e3 } } : {}),
      },
      probe,
    });
    edges.push({ id: `f${k}`, from: prev, to: `p${k}`, kind: "feeds" });
    edges.push({ id: `d${k}`, from: `p${k}`, to: `n${k}`, kind: "drives" });
    prev = `n${k}`;
  }
  return { format: "railwise.map", version: 1, settings: { strategy: "best" }, nodes, edges };
}

const logUniform = (rng: () => number, lo: number, hi: number) =>
  Math.exp(Math.log(lo) + rng() * (Math.log(hi) - Math.log(lo)));

/**
 * A random power-sequence map: charger → VIN → charger IC → SYS, an always-on LDO and controller, then
 * regulators fanning out with enable chains through series resistors, load switches and sequencers.
 */
export function randomPowerMap(rng: () => number, targetNodes: number): MapDocument {
  const nodes: MapNode[] = [];
  const edges: MapEdge[] = [];
  let e = 0;
  const edge = (kind: MapEdge["kind"], from: string, to: string) =>
    edges.push({ id: `e${e++}`, from, to, kind });
  const rails: string[] = [];
  const signals: string[] = [];
  let k = 0;
  const railRes = (): Range => {
    const r = logUniform(rng, 3, 50e3);
    return { min: Math.max(1.5, r / 2), max: r * 2 };
  };
  const addRail = (volts: number): string => {
    const id = `r${k++}`;
    nodes.push({
      id,
      kind: "rail",
      name: `RAIL_${id.toUpperCase()}`,
      nominalV: volts,
      tolerancePct: 5,
      expected: { voltage: { nominal: volts, tolerancePct: 5 }, resistance: railRes() },
      probe,
    });
    rails.push(id);
    return id;
  };
  const addSignal = (): string => {
    const id = `s${k++}`;
    nodes.push({
      id,
      kind: "signal",
      name: `SIG_${id.toUpperCase()}`,
      highV: 3.3,
      expected: {
        voltage: { min: 2.9, max: 3.5 },
        ...(rng() < 0.5 ? { resistance: { min: 5e3, max: 2e6 } } : {}),
      },
      probe,
    });
    signals.push(id);
    return id;
  };
  const addPart = (
    partType: "regulator" | "load-switch" | "resistor" | "controller" | "charger" | "mosfet" | "other",
    value?: string,
  ) => {
    const id = `p${k++}`;
    nodes.push({
      id,
      kind: "part",
      partType,
      refdes: `U${k}`,
      name: partType,
      ...(value ? { value } : {}),
      fixes: [],
    });
    return id;
  };
  nodes.push({ id: "chg", kind: "source", name: "Charger", sourceKind: "charger" });
  nodes.push({ id: "btn", kind: "source", name: "Button", sourceKind: "button" });
  nodes.push({ id: "bat", kind: "source", name: "Battery", sourceKind: "battery" });
  const vin = addRail(20);
  edge("supplies", "chg", vin);
  const vbat = addRail(12.6);
  edge("supplies", "bat", vbat);
  const chgIc = addPart("charger");
  edge("feeds", vin, chgIc);
  const sys = addRail(12.6);
  (nodes[nodes.length - 1] as { sharedDrivers?: true }).sharedDrivers = true;
  edge("drives", chgIc, sys);
  const batfet = addPart("mosfet");
  edge("feeds", vbat, batfet);
  edge("drives", batfet, sys);
  const ldo = addPart("regulator");
  edge("feeds", sys, ldo);
  const aon = addRail(3.3);
  edge("drives", ldo, aon);
  const req = addSignal();
  edge("supplies", "btn", req);
  const ec = addPart("controller");
  edge("feeds", aon, ec);
  edge("feeds", req, ec);
  const ecOut = [addSignal(), addSignal()];
  for (const s of ecOut) edge("drives", ec, s);
  const enableFrom = () =>
    pick(
      rng,
      signals.filter((s) => s !== req),
    );
  while (nodes.length < targetNodes) {
    const roll = rng();
    if (roll < 0.55) {
      // Regulator with an enable through a series resistor and a power-good output.
      let en = enableFrom();
      if (rng() < 0.7) {
        const r = addPart("resistor", pick(rng, ["10K", "4K7", "1K0", "100K", "0R"]));
        edge("feeds", en, r);
        en = addSignal();
        edge("drives", r, en);
      }
      const reg = addPart("regulator");
      edge(
        "feeds",
        rng() < 0.5
          ? sys
          : pick(
              rng,
              rails.filter((x) => x !== vin && x !== vbat),
            ),
        reg,
      );
      edge("feeds", en, reg);
      edge("drives", reg, addRail(pick(rng, [5, 3.3, 1.8, 1.2, 1.05, 0.9])));
      if (rng() < 0.6) edge("drives", reg, addSignal());
    } else if (roll < 0.8) {
      const sw = addPart("load-switch");
      edge(
        "feeds",
        pick(
          rng,
          rails.filter((x) => x !== vin && x !== vbat),
        ),
        sw,
      );
      edge("feeds", enableFrom(), sw);
      edge("drives", sw, addRail(pick(rng, [5, 3.3, 1.8])));
    } else {
      const seq = addPart("other");
      edge(
        "feeds",
        pick(
          rng,
          rails.filter((x) => x !== vin && x !== vbat),
        ),
        seq,
      );
      edge("feeds", enableFrom(), seq);
      const outs = 1 + Math.floor(rng() * 2);
      for (let i = 0; i < outs; i++) edge("drives", seq, addSignal());
    }
  }
  return { format: "railwise.map", version: 1, settings: { strategy: "best" }, nodes, edges };
}
