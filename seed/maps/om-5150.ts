import type { Fix, MapDocument, MapEdge, MapNode, PartNode, Range, Stage } from "~/lib/engine";
import { DEMO_PHOTO_ID, DEMO_PHOTO_MARKERS } from "../demo-photo-layout";

// Demo map, invented: Orrin Computing "Marlow 15", board OM-5150 rev C (USB-C PD 20 V, 3-cell pack).

type NetOpts = {
  v?: Range;
  ohm?: Range;
  probe: string;
  s?: number;
  open?: boolean;
  stage?: Stage;
  notes?: string;
  safety?: string;
  shared?: true;
  /** Marker on the demo's probe photo (seed/demo-photo-layout.ts), 0..1 of the picture. */
  photo?: { x: number; y: number };
};

const probe = (o: NetOpts, seconds: number) => ({
  text: o.probe,
  seconds: o.s ?? seconds,
  needsDisassembly: o.open ?? false,
  ...(o.photo ? { photo: { uploadId: DEMO_PHOTO_ID, ...o.photo } } : {}),
});

const rail = (id: string, name: string, nominalV: number, tolerancePct: number, o: NetOpts): MapNode => ({
  id,
  kind: "rail",
  name,
  nominalV,
  tolerancePct,
  expected: { voltage: o.v ?? { nominal: nominalV, tolerancePct }, ...(o.ohm ? { resistance: o.ohm } : {}) },
  probe: probe(o, 20),
  ...(o.stage ? { stage: o.stage } : {}),
  ...(o.shared ? { sharedDrivers: true as const } : {}),
  ...(o.notes ? { notes: o.notes } : {}),
  ...(o.safety ? { safetyNotes: o.safety } : {}),
});

const signal = (id: string, name: string, o: NetOpts): MapNode => ({
  id,
  kind: "signal",
  name,
  highV: 3.3,
  expected: { voltage: o.v ?? { min: 2.9, max: 3.5 }, ...(o.ohm ? { resistance: o.ohm } : {}) },
  probe: probe(o, 25),
  ...(o.stage ? { stage: o.stage } : {}),
  ...(o.notes ? { notes: o.notes } : {}),
});

const replace = (label: string): Fix => ({ id: "replace", kind: "replace", label });
const reflow: Fix = { id: "reflow", kind: "reflow", label: "Reflow with flux and re-test" };
const clean: Fix = {
  id: "clean",
  kind: "clean-corrosion",
  label: "Clean corrosion with isopropyl alcohol, dry, re-test",
};

const part = (
  id: string,
  partType: PartNode["partType"],
  refdes: string,
  name: string,
  extra: Partial<Pick<PartNode, "value" | "package" | "notes">> & { fixes: Fix[] },
): MapNode => ({ id, kind: "part", partType, refdes, name, ...extra });

const link = (kind: MapEdge["kind"], from: string, to: string): MapEdge => ({
  id: `${from}--${to}`,
  from,
  to,
  kind,
});
const feeds = (part: string, ...nets: string[]) => nets.map((n) => link("feeds", n, part));
const drives = (part: string, ...nets: string[]) => nets.map((n) => link("drives", part, n));

const nodes: MapNode[] = [
  {
    id: "src-charger",
    kind: "source",
    name: "USB-C PD charger (20 V contract)",
    sourceKind: "charger",
    safetyNotes: "Never probe the mains side of the adapter.",
  },
  {
    id: "src-battery",
    kind: "source",
    name: "3-cell battery pack",
    sourceKind: "battery",
    safetyNotes: "Disconnect the battery before any rework; set swollen packs aside.",
  },
  { id: "src-button", kind: "source", name: "Power button pressed", sourceKind: "button" },

  rail("vbus-in", "VBUS_IN", 20, 5, {
    ohm: { min: 20e3, max: 2e6 },
    probe: "C118 pad, charger side",
    s: 15,
    stage: "G3",
    notes: "20 V after the PD contract; 5 V before it.",
  }),
  rail("vbat", "BATT_PACK", 12.6, 0, {
    v: { min: 9.0, max: 12.7 },
    ohm: { min: 10e3, max: 5e6 },
    probe: "Battery connector J201 pin 1",
    s: 20,
    stage: "G3",
    safety: "Live whenever the pack is connected.",
  }),
  part("u-chg", "charger", "U201", "Battery charger", {
    value: "Buck-boost charger",
    package: "QFN-32",
    fixes: [replace("Replace U201 charger IC"), reflow, clean],
  }),
  part("q-batfet", "mosfet", "Q205", "Battery FET", {
    package: "PQFN 3x3",
    fixes: [replace("Replace Q205 battery FET")],
  }),
  rail("vsys", "SYS_IN", 12.6, 0, {
    v: { min: 11.0, max: 13.2 },
    ohm: { min: 5e3, max: 2e6 },
    probe: "TP14",
    s: 15,
    stage: "G3",
    shared: true,
    notes: "Sits near 12.6 V idle and dips to about 12.55 V once the board draws current.",
  }),
  part("u-aon", "regulator", "U310", "Always-on 3.3 V LDO", {
    package: "SOT-23-5",
    fixes: [replace("Replace U310 LDO"), clean],
  }),
  rail("v3p3-aon", "AON_3V3", 3.3, 5, {
    ohm: { min: 2e3, max: 500e3 },
    probe: "C312 pad",
    s: 20,
    stage: "G3",
  }),
  part("r-en5", "resistor", "R352", "5 V standby enable resistor", {
    value: "10K",
    package: "0201",
    fixes: [replace("Replace R352 (10K)")],
  }),
  signal("en-5v-stby", "EN_5V_STBY", { ohm: { min: 8e3, max: 2e6 }, probe: "R352 pad 2", stage: "S5" }),
  part("u-5v-stby", "regulator", "U401", "5 V standby buck", {
    package: "QFN-16",
    fixes: [
      { id: "check-en", kind: "check-series-resistor", label: "Check R352 on EN_5V_STBY" },
      replace("Replace U401 buck"),
      reflow,
    ],
  }),
  rail("v5-stby", "5V_STBY", 5, 5, {
    ohm: { min: 200, max: 100e3 },
    probe: "L401 output pad",
    s: 20,
    stage: "S5",
    photo: DEMO_PHOTO_MARKERS["v5-stby"],
  }),
  signal("pg-5v-stby", "PG_5V_STBY", { probe: "TP41", stage: "S5" }),
  part("r-en3", "resistor", "R362", "3.3 V standby enable resistor", {
    value: "4K7",
    package: "0201",
    fixes: [replace("Replace R362 (4K7)")],
    notes: "Series resistor from PG_5V_STBY to the 3.3 V standby enable.",
  }),
  signal("en-3v3-stby", "EN_3V3_STBY", {
    ohm: { min: 8e3, max: 2e6 },
    probe: "R362 pad 2",
    stage: "S5",
    photo: DEMO_PHOTO_MARKERS["en-3v3-stby"],
  }),
  part("u-3v3-stby", "regulator", "U402", "3.3 V standby buck", {
    package: "QFN-16",
    fixes: [
      { id: "check-en", kind: "check-series-resistor", label: "Check R362 on EN_3V3_STBY" },
      replace("Replace U402 buck"),
      reflow,
    ],
  }),
  rail("v3p3-stby", "3V3_STBY", 3.3, 5, {
    ohm: { min: 150, max: 100e3 },
    probe: "C415 pad",
    s: 20,
    stage: "S5",
    photo: DEMO_PHOTO_MARKERS["v3p3-stby"],
  }),
  signal("pg-3v3-stby", "PG_3V3_STBY", { probe: "TP42", stage: "S5" }),
  signal("pwr-req", "PWR_REQ", {
    probe: "Power button connector J301 pin 2",
    s: 15,
    notes: "High while the button is pressed.",
  }),
  part("u-ec", "controller", "U500", "Always-on controller", {
    package: "LQFP-64",
    fixes: [
      reflow,
      { id: "reflash", kind: "other", label: "Reflash controller firmware" },
      replace("Replace U500 controller"),
    ],
  }),
  signal("sleep-s5-n", "MEM_PWR_EN", { probe: "TP51", stage: "S4" }),
  signal("sleep-s3-n", "MAIN_PWR_EN", { probe: "TP52", stage: "S0" }),
  part("r-s5", "resistor", "R531", "Memory rail enable resistor", {
    value: "1K0",
    package: "0201",
    fixes: [replace("Replace R531 (1K0)")],
  }),
  signal("en-vddq", "EN_VDDQ", { ohm: { min: 1e3, max: 2e6 }, probe: "R531 pad 2", stage: "S4" }),
  part("u-vddq", "regulator", "U610", "Memory 1.2 V buck", {
    package: "QFN-20",
    fixes: [replace("Replace U610 buck"), reflow],
  }),
  rail("v1p2-mem", "VDDQ_1V2", 1.2, 5, { ohm: { min: 8, max: 2e3 }, probe: "C622 pad", s: 25, stage: "S3" }),
  signal("pg-vddq", "PG_VDDQ", { probe: "TP61", stage: "S3" }),
  part("u-1v8", "regulator", "U620", "1.8 V main buck", {
    package: "DFN-10",
    fixes: [replace("Replace U620 buck"), reflow],
  }),
  rail("v1p8", "1V8_MAIN", 1.8, 5, { ohm: { min: 20, max: 5e3 }, probe: "C631 pad", s: 25, stage: "S0" }),
  signal("pg-1v8", "PG_1V8", { probe: "TP62", stage: "S0" }),
  part("q-5v-main", "load-switch", "U630", "5 V main load switch", {
    package: "SOT-23-6",
    fixes: [replace("Replace U630 load switch")],
  }),
  rail("v5-main", "5V_MAIN", 5, 5, { ohm: { min: 100, max: 100e3 }, probe: "C640 pad", s: 25, stage: "S0" }),
  part("q-3v3-main", "load-switch", "U631", "3.3 V main load switch", {
    package: "SOT-23-6",
    fixes: [replace("Replace U631 load switch")],
  }),
  rail("v3p3-main", "3V3_MAIN", 3.3, 5, {
    ohm: { min: 80, max: 50e3 },
    probe: "C645 pad",
    s: 25,
    stage: "S0",
  }),
  part("u-pgand", "other", "U650", "Power-good combiner", {
    value: "3-input AND",
    package: "SC-70",
    fixes: [replace("Replace U650")],
  }),
  signal("sys-pg", "SYS_PG_OK", { probe: "TP65", stage: "S0" }),
  part("r-vcore-en", "resistor", "R705", "Core enable resistor", {
    value: "10K",
    package: "0201",
    fixes: [replace("Replace R705 (10K)")],
  }),
  signal("en-vcore", "EN_VCORE", {
    ohm: { min: 8e3, max: 2e6 },
    probe: "R705 pad 2",
    stage: "S0",
    open: true,
  }),
  part("u-vcore", "regulator", "U700", "1.0 V core regulator", {
    package: "QFN-40",
    fixes: [replace("Replace U700 core regulator"), reflow],
    notes: "Last regulator in the power-up.",
  }),
  rail("v1p0-core", "VCORE_1V0", 1.0, 5, {
    ohm: { min: 1.5, max: 50 },
    probe: "TP71 under the CPU shield",
    s: 40,
    open: true,
    stage: "S0",
    notes: "Reads only a few ohms to ground when healthy; below 1 Ω is a short.",
  }),
  signal("pg-vcore", "PG_VCORE", { probe: "TP72 under the CPU shield", s: 40, open: true, stage: "S0" }),
];

const edges: MapEdge[] = [
  link("supplies", "src-charger", "vbus-in"),
  link("supplies", "src-battery", "vbat"),
  link("supplies", "src-button", "pwr-req"),
  ...feeds("u-chg", "vbus-in"),
  ...drives("u-chg", "vsys"),
  ...feeds("q-batfet", "vbat"),
  ...drives("q-batfet", "vsys"),
  ...feeds("u-aon", "vsys"),
  ...drives("u-aon", "v3p3-aon"),
  ...feeds("r-en5", "v3p3-aon"),
  ...drives("r-en5", "en-5v-stby"),
  ...feeds("u-5v-stby", "vsys", "en-5v-stby"),
  ...drives("u-5v-stby", "v5-stby", "pg-5v-stby"),
  ...feeds("r-en3", "pg-5v-stby"),
  ...drives("r-en3", "en-3v3-stby"),
  ...feeds("u-3v3-stby", "vsys", "en-3v3-stby"),
  ...drives("u-3v3-stby", "v3p3-stby", "pg-3v3-stby"),
  ...feeds("u-ec", "v3p3-stby", "pg-3v3-stby", "pwr-req"),
  ...drives("u-ec", "sleep-s5-n", "sleep-s3-n"),
  ...feeds("r-s5", "sleep-s5-n"),
  ...drives("r-s5", "en-vddq"),
  ...feeds("u-vddq", "vsys", "en-vddq"),
  ...drives("u-vddq", "v1p2-mem", "pg-vddq"),
  ...feeds("u-1v8", "vsys", "sleep-s3-n"),
  ...drives("u-1v8", "v1p8", "pg-1v8"),
  ...feeds("q-5v-main", "v5-stby", "sleep-s3-n"),
  ...drives("q-5v-main", "v5-main"),
  ...feeds("q-3v3-main", "v3p3-stby", "sleep-s3-n"),
  ...drives("q-3v3-main", "v3p3-main"),
  ...feeds("u-pgand", "v3p3-main", "pg-1v8", "pg-vddq"),
  ...drives("u-pgand", "sys-pg"),
  ...feeds("r-vcore-en", "sys-pg"),
  ...drives("r-vcore-en", "en-vcore"),
  ...feeds("u-vcore", "vsys", "en-vcore", "v5-main"),
  ...drives("u-vcore", "v1p0-core", "pg-vcore"),
];

export const OM_5150_MAP: MapDocument = {
  format: "railwise.map",
  version: 1,
  board: {
    maker: "Orrin Computing",
    model: "Marlow 15",
    boardNumber: "OM-5150",
    revision: "C",
    input: { kind: "usb-c-pd", volts: 20 },
    batteryCells: 3,
  },
  settings: { strategy: "best" },
  nodes,
  edges,
};
