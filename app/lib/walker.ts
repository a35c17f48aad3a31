import type { MapDocument, Mode, Stage } from "~/lib/engine";

// Pure helpers for the bench walker: the board condition, power-up stages, wording, safety cautions.
// Type-only engine imports keep the engine (and zod) out of the walker's browser bundle; the server formats
// quantities.

const STAGE_RANK: Record<Stage, number> = { G3: 0, S5: 1, S4: 2, S3: 3, S0: 4 };
/** ACPI states in power-up order (G3 mechanical off first, S0 working last). */
export const STAGES_IN_ORDER: Stage[] = ["G3", "S5", "S4", "S3", "S0"];

export const CONDITIONS = ["charger", "battery", "both"] as const;
export type BoardCondition = (typeof CONDITIONS)[number];
export const CONDITION_LABELS: Record<BoardCondition, string> = {
  charger: "Charger only",
  battery: "Battery only",
  both: "Charger and battery",
};

export const STRATEGY_LABELS = {
  order: "Power-up order",
  split: "Split the suspects in half",
  best: "Best next (history and probe time)",
} as const;

export const OUTCOME_LABELS = {
  "powers-on": "Powers on",
  "still-dead": "Still dead",
  "new-symptom": "New symptom",
} as const;

/**
 * The map's source nodes attached under a board condition. Chargers and bench supplies count as the charger;
 * button sources (the power button pressed during the check) are attached when `pressButton` is set.
 */
export function sourcesForCondition(
  doc: MapDocument,
  condition: BoardCondition,
  pressButton = true,
): string[] {
  const out: string[] = [];
  for (const n of doc.nodes) {
    if (n.kind !== "source") continue;
    const kind = n.sourceKind ?? "other";
    if ((kind === "charger" || kind === "bench-supply") && condition !== "battery") out.push(n.id);
    else if (kind === "battery" && condition !== "charger") out.push(n.id);
    else if (kind === "button" && pressButton) out.push(n.id);
  }
  return out;
}

/** Reads the board condition back from the attached source ids of a run. */
export function conditionOf(doc: MapDocument, attached: string[]): BoardCondition {
  const kinds = new Set(
    doc.nodes
      .filter((n) => n.kind === "source" && attached.includes(n.id))
      .map((n) => (n.kind === "source" ? n.sourceKind : undefined)),
  );
  const charger = kinds.has("charger") || kinds.has("bench-supply");
  const battery = kinds.has("battery");
  return charger && battery ? "both" : battery ? "battery" : "charger";
}

export const powerClass = (mode: Mode) => (mode === "voltage" ? "live" : "unpowered");

/**
 * Stage of each net: its own tag, else the latest stage tagged before it in power-up order (G3 first).
 * Order is the engine's power-up order of net ids.
 */
export function stagesOf(doc: MapDocument, netOrder: string[]): Map<string, Stage> {
  const byId = new Map(doc.nodes.map((n) => [n.id, n]));
  const out = new Map<string, Stage>();
  let current: Stage = "G3";
  for (const id of netOrder) {
    const n = byId.get(id);
    const tag = n && (n.kind === "rail" || n.kind === "signal") ? n.stage : undefined;
    if (tag && STAGE_RANK[tag] > STAGE_RANK[current]) current = tag;
    out.set(id, tag ?? current);
  }
  return out;
}

export type NetState = "present" | "missing" | "suspect" | "unpowered";

export type StageSummary = {
  stage: Stage;
  nets: number;
  present: number;
  missing: number;
  state: "ok" | "fault" | "open" | "off";
};

/** Where the run stands in the power-up: per stage, how many nets are proven present or missing. */
export function stageStrip(stages: Map<string, Stage>, state: Map<string, NetState>): StageSummary[] {
  return STAGES_IN_ORDER.map((stage) => {
    const ids = [...stages].filter(([, s]) => s === stage).map(([id]) => id);
    const powered = ids.filter((id) => state.get(id) !== "unpowered");
    const present = powered.filter((id) => state.get(id) === "present").length;
    const missing = powered.filter((id) => state.get(id) === "missing").length;
    const s: StageSummary["state"] = !powered.length
      ? "off"
      : missing
        ? "fault"
        : present === powered.length
          ? "ok"
          : "open";
    return { stage, nets: ids.length, present, missing, state: s };
  }).filter((s) => s.nets > 0);
}

export const VERDICT_TONE: Record<string, "ok" | "warn" | "bad" | "info"> = {
  "in range": "ok",
  low: "warn",
  high: "warn",
  missing: "bad",
  shorted: "bad",
  open: "warn",
  skipped: "info",
};

export const MODE_LABELS: Record<Mode, string> = {
  voltage: "Voltage, board powered",
  resistance: "Resistance to ground, power removed",
  diode: "Diode drop to ground, power removed",
};

export type Caution = { id: string; title: string; text: string };

export const SAFETY_CAUTIONS: Record<string, Caution> = {
  battery: {
    id: "battery",
    title: "Lithium battery",
    text: "Disconnect the battery before any rework or resistance reading. Set swollen or damaged packs aside in a fire-safe container; never puncture or charge them.",
  },
  "hot-air": {
    id: "hot-air",
    title: "Hot air and soldering",
    text: "Hot-air stations and irons burn skin and board; let parts cool, keep the work area clear and ventilate flux fumes.",
  },
  solvents: {
    id: "solvents",
    title: "Isopropyl alcohol and solvents",
    text: "Isopropyl alcohol is flammable: keep it away from hot air and open flames, use small amounts, and let the board dry fully before power.",
  },
  ultrasonic: {
    id: "ultrasonic",
    title: "Ultrasonic cleaning",
    text: "Clean ultrasonically only with the battery removed and the board unpowered.",
  },
  esd: {
    id: "esd",
    title: "Static discharge",
    text: "Work on a grounded mat with a wrist strap; handle boards by their edges.",
  },
  mains: {
    id: "mains",
    title: "Mains adapters",
    text: "Never open or probe the mains side of a power adapter; test the board from its charger or a current-limited bench supply.",
  },
};

export const LOCAL_CODES_LINE =
  "These cautions are reminders, not a safety programme: local codes, the equipment makers' instructions and licensed practice always come first.";

/** The fix kinds a map can list (the engine's FIX_KINDS, repeated here to keep zod out of the browser). */
export type FixKind = "replace" | "reflow" | "clean-corrosion" | "check-series-resistor" | "other";

// What each kind of work puts in front of the tech. "other" is left to the general cautions: the map's
// label says what it is (e.g. reflashing firmware) and guessing a soldering job would only add noise.
const FIX_CAUTIONS: Record<FixKind, string[]> = {
  replace: ["hot-air", "solvents"],
  reflow: ["hot-air", "solvents"],
  "clean-corrosion": ["solvents", "ultrasonic"],
  "check-series-resistor": ["hot-air"],
  other: [],
};
const CAUTION_ORDER = ["battery", "hot-air", "solvents", "ultrasonic", "esd", "mains"];

const isFixKind = (k: string): k is FixKind => Object.hasOwn(FIX_CAUTIONS, k);

/**
 * Cautions relevant to a run: always ESD and adapters; the battery when one is attached, when a reading was
 * taken unpowered or when any fix was done (it comes off before rework); then the cautions of every fix.
 */
export function cautionsFor(input: {
  batteryAttached: boolean;
  resistanceReadings: boolean;
  fixKinds: ReadonlyArray<string | null | undefined>;
}): Caution[] {
  const fixes = input.fixKinds.filter((k): k is FixKind => !!k && isFixKind(k));
  const ids = new Set<string>(["esd", "mains"]);
  if (input.batteryAttached || input.resistanceReadings || fixes.length) ids.add("battery");
  for (const k of fixes) for (const id of FIX_CAUTIONS[k]) ids.add(id);
  return CAUTION_ORDER.filter((id) => ids.has(id)).map((id) => SAFETY_CAUTIONS[id]);
}

/**
 * The kind of work behind each recorded fix of a run, in order. The walker stores the map's fix id; it is
 * looked up in the part's fixes of that finding. A finding with parts used but no listed fix (a shorted net,
 * whose part is found on the bench) counts as a replacement.
 */
export function fixKindsOfRun(
  rows: ReadonlyArray<{
    fixKind: string | null;
    partsUsed: readonly string[];
    part: { fixes: ReadonlyArray<{ id: string; kind: string }> } | null;
  }>,
): FixKind[] {
  const out: FixKind[] = [];
  for (const row of rows) {
    const listed = row.fixKind ? row.part?.fixes.find((f) => f.id === row.fixKind)?.kind : undefined;
    const kind = listed ?? row.fixKind ?? (row.partsUsed.length ? "replace" : null);
    if (kind && isFixKind(kind)) out.push(kind);
    else if (row.partsUsed.length) out.push("replace");
  }
  return out;
}

/** Parts used, typed as "R362, U402": reference designators, upper-cased, de-duplicated. */
export function parseRefdesList(
  text: string,
): { ok: true; value: string[] } | { ok: false; message: string } {
  const items = text
    .split(/[\s,;]+/)
    .map((s) => s.trim())
    .filter(Boolean);
  const bad = items.find((s) => !/^[A-Za-z]{1,4}[0-9]{1,5}[A-Za-z]?$/.test(s));
  if (bad) return { ok: false, message: `"${bad}" is not a reference designator (e.g. R362, U402, C415).` };
  if (items.length > 50) return { ok: false, message: "At most 50 parts per fix." };
  return { ok: true, value: [...new Set(items.map((s) => s.toUpperCase()))] };
}

/** Below this many ended runs on the version, priors widen (PRIOR_MIN_RUNS in app/server/priors.server.ts). */
export const PRIORS_WIDEN_BELOW = 20;

/** "Learned from N ended runs": N is the run count of app/server/priors.server.ts, said as it is counted. */
export const learnedFromText = (n: number) =>
  n
    ? `Learned from ${n} ended run${n === 1 ? "" : "s"} in this shop.`
    : "No ended runs to learn from yet: every suspect weighs the same.";

export const LEARNED_FROM_COUNTS = `Counted: runs that ended (fault isolated, no fault found, or closed) on this map version; while there are fewer than ${PRIORS_WIDEN_BELOW}, also those on the board's other map versions, then on other revisions of the same model. Open runs are not counted; a fix that left the board still dead counts as a run, not as a fault.`;
