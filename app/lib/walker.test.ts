import { describe, expect, it } from "vitest";
import { FIX_KINDS } from "~/lib/engine";
import { PRIOR_MIN_RUNS } from "~/server/priors.server";
import {
  cautionsFor,
  type FixKind,
  fixKindsOfRun,
  LEARNED_FROM_COUNTS,
  LOCAL_CODES_LINE,
  learnedFromText,
  PRIORS_WIDEN_BELOW,
  SAFETY_CAUTIONS,
} from "./walker";

// Which cautions go with which work follows PRODUCT.md's safety list (common practice at the bench).
const ids = (input: Parameters<typeof cautionsFor>[0]) => cautionsFor(input).map((c) => c.id);
const quiet = { batteryAttached: false, resistanceReadings: false };

describe("cautionsFor", () => {
  it("always names static discharge and the mains side of adapters, and nothing else without work", () => {
    expect(ids({ ...quiet, fixKinds: [] })).toEqual(["esd", "mains"]);
  });

  it("adds the battery when one is attached or a reading was taken with power removed", () => {
    expect(ids({ ...quiet, batteryAttached: true, fixKinds: [] })).toEqual(["battery", "esd", "mains"]);
    expect(ids({ ...quiet, resistanceReadings: true, fixKinds: [] })).toEqual(["battery", "esd", "mains"]);
  });

  it.each([
    ["replace", ["battery", "hot-air", "solvents", "esd", "mains"]],
    ["reflow", ["battery", "hot-air", "solvents", "esd", "mains"]],
    ["clean-corrosion", ["battery", "solvents", "ultrasonic", "esd", "mains"]],
    ["check-series-resistor", ["battery", "hot-air", "esd", "mains"]],
    ["other", ["battery", "esd", "mains"]],
  ] as const)("a %s fix brings its own cautions and the battery off before rework", (kind, expected) => {
    expect(ids({ ...quiet, fixKinds: [kind] })).toEqual(expected);
  });

  it("covers every fix kind the map format allows", () => {
    for (const kind of FIX_KINDS) expect(ids({ ...quiet, fixKinds: [kind] })).toContain("battery");
  });

  it("joins the cautions of every fix, each once, in a fixed order", () => {
    expect(ids({ ...quiet, fixKinds: ["check-series-resistor", "clean-corrosion", "replace"] })).toEqual([
      "battery",
      "hot-air",
      "solvents",
      "ultrasonic",
      "esd",
      "mains",
    ]);
  });

  it("ignores unknown and empty fix kinds", () => {
    expect(ids({ ...quiet, fixKinds: [null, undefined, "", "sanding"] })).toEqual(["esd", "mains"]);
  });

  it("says the usual cautions in our words, with a line deferring to local codes", () => {
    const text = Object.values(SAFETY_CAUTIONS)
      .map((c) => c.text)
      .join(" ");
    expect(text).toMatch(/Disconnect the battery before any rework/);
    expect(text).toMatch(/burn/);
    expect(text).toMatch(/ventilate flux fumes/);
    expect(text).toMatch(/Isopropyl alcohol is flammable/);
    expect(text).toMatch(/Clean ultrasonically only with the battery removed/);
    expect(text).toMatch(/wrist strap/);
    expect(text).toMatch(/Never open or probe the mains side/);
    expect(LOCAL_CODES_LINE).toMatch(/local codes.*licensed practice/);
  });
});

describe("fixKindsOfRun", () => {
  const part = {
    fixes: [
      { id: "check-en", kind: "check-series-resistor" },
      { id: "replace", kind: "replace" },
      { id: "clean", kind: "clean-corrosion" },
    ],
  };
  it("reads the kind of each recorded fix from the part's listed fixes, in order", () => {
    expect(
      fixKindsOfRun([
        { fixKind: "check-en", partsUsed: ["R362"], part },
        { fixKind: "clean", partsUsed: [], part },
        { fixKind: null, partsUsed: [], part },
      ]),
    ).toEqual(["check-series-resistor", "clean-corrosion"] satisfies FixKind[]);
  });

  it("counts parts fitted without a listed fix (a shorted net) as a replacement, and keeps other work", () => {
    expect(
      fixKindsOfRun([
        { fixKind: null, partsUsed: ["C415"], part: { fixes: [] } },
        { fixKind: "other", partsUsed: [], part },
        { fixKind: "gone-from-map", partsUsed: [], part: null },
      ]),
    ).toEqual(["replace", "other"]);
  });
});

describe("learned from N runs", () => {
  it("says what N counts, with the same widening threshold as the priors", () => {
    expect(PRIORS_WIDEN_BELOW).toBe(PRIOR_MIN_RUNS);
    expect(learnedFromText(1)).toBe("Learned from 1 ended run in this shop.");
    expect(learnedFromText(240)).toBe("Learned from 240 ended runs in this shop.");
    expect(learnedFromText(0)).toMatch(/No ended runs/);
    expect(LEARNED_FROM_COUNTS).toMatch(/fault isolated, no fault found, or closed/);
    expect(LEARNED_FROM_COUNTS).toMatch(/fewer than 20/);
    expect(LEARNED_FROM_COUNTS).toMatch(/Open runs are not counted/);
  });
});
