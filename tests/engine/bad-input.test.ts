import fc from "fast-check";
import { describe, expect, it } from "vitest";
import {
  analyse,
  checkPreferred,
  compileMap,
  compileMapCached,
  expectedCostObserveFirst,
  expectedCostOfRepair,
  failureRate,
  judge,
  judgeReading,
  mapFromJson,
  mapToJson,
  nextReading,
  orderRepairs,
  parseMapDocument,
  parseQuantity,
  parseRange,
  powerUpSequence,
  rankByFailureRate,
  type Result,
  startRun,
  validateMap,
} from "~/lib/engine";
import { guard, isPlainData, ok } from "~/lib/engine/result";
import { chainMap } from "../../bench/lib/maps";
import { OM_5150_MAP } from "../../seed/maps/om-5150";

/**
 * A typed result that is not the guard's catch-all: guard() turns a thrown exception into
 * { ok: false, code: "internal" }, so bad input must be refused by validation with another code.
 */
const isResult = (r: unknown, what = "") => {
  const x = r as Result<unknown>;
  expect(typeof x.ok, what).toBe("boolean");
  if (!x.ok) expect(x.error.code, `${what}: ${x.error.message}`).not.toBe("internal");
};

/** Values that break naive code: null prototypes (String() throws), BigInt, Map, sparse arrays, boxed values. */
const exotic = {
  withNullPrototype: true,
  withBigInt: true,
  withMap: true,
  withSet: true,
  withDate: true,
  withTypedArray: true,
  withSparseArray: true,
  withBoxedValues: true,
} as const;

const actions = [
  { id: "A", p: 0.5, cost: 10 },
  { id: "B", p: 0.3, cost: 3 },
];

describe("bad input never escapes as an exception", () => {
  it("arbitrary values into every public function", () => {
    fc.assert(
      fc.property(
        fc.anything({ maxDepth: 4, ...exotic }),
        fc.anything({ maxDepth: 3, ...exotic }),
        fc.anything({ maxDepth: 3, ...exotic }),
        (x, y, z) => {
          isResult(validateMap(x));
          isResult(parseMapDocument(x));
          isResult(mapFromJson(x as string));
          isResult(compileMap(x as never));
          isResult(powerUpSequence(x as never));
          isResult(analyse(x as never, y as never, z as never));
          isResult(analyse(OM_5150_MAP, y as never, z as never));
          isResult(analyse(OM_5150_MAP, { condition: { sourcesAttached: ["src-charger"] } }, z as never));
          isResult(startRun(x as never, y as never));
          isResult(judge(x as never, y as never, z as never));
          isResult(judgeReading(OM_5150_MAP, x as never, y as never));
          isResult(nextReading(x as never, y as never));
          isResult(failureRate(x as never, y as never));
          isResult(parseQuantity(x as never, y as never));
          isResult(parseRange(x as never, "V"));
          isResult(parseRange(x as never, y as never));
          isResult(mapToJson(x as never));
          isResult(compileMapCached(x as never, y as never));
          isResult(compileMapCached("fuzz", x as never));
          isResult(analyse(OM_5150_MAP, { condition: { sourcesAttached: [] } }, [], x as never));
          isResult(startRun(OM_5150_MAP, { condition: { sourcesAttached: [] } }, x as never));
          isResult(checkPreferred(x as never, y as never));
          isResult(rankByFailureRate(x as never));
          isResult(orderRepairs(x as never));
          isResult(expectedCostOfRepair(x as never));
          isResult(expectedCostObserveFirst(x as never, y as never, z as never));
          isResult(expectedCostObserveFirst(1, actions, x as never), "observe-first outcomes");
          isResult(expectedCostObserveFirst(1, x as never, [["A"], ["B"]]));
          isResult(failureRate(1, 2, x as never));
        },
      ),
      { numRuns: 400 },
    );
  });

  it("rows and actions with arbitrary fields", () => {
    fc.assert(
      fc.property(
        fc.array(
          fc.record({ id: fc.anything(exotic), failures: fc.anything(exotic), runs: fc.anything(exotic) }),
        ),
        fc.array(fc.record({ id: fc.anything(exotic), p: fc.anything(exotic), cost: fc.anything(exotic) })),
        fc.array(fc.array(fc.anything(exotic))),
        (rows, acts, outcomes) => {
          isResult(rankByFailureRate(rows as never), "rankByFailureRate");
          isResult(orderRepairs(acts as never), "orderRepairs");
          isResult(expectedCostOfRepair(acts as never), "expectedCostOfRepair");
          isResult(expectedCostObserveFirst(1, actions, outcomes as never), "expectedCostObserveFirst");
          isResult(expectedCostObserveFirst(1, acts as never, outcomes as never), "expectedCostObserveFirst");
        },
      ),
      { numRuns: 500 },
    );
  });

  it("a value zod's size check throws on is refused as invalid input (fast-check seed -632343605)", () => {
    // A list whose `length` holds a null-prototype object: zod's max-length check compares it as a number.
    const outcomes = [[{ length: [Object.create(null)] }]];
    const r = expectedCostObserveFirst(1, actions, outcomes as never);
    expect(r.ok).toBe(false);
    if (!r.ok) expect(r.error.code).toBe("invalid-input");
  });

  it("the guard calls a failure on plain data internal, and tells plain data from the rest", () => {
    const broken = guard((_: unknown) => {
      throw new Error("a bug");
    });
    const onPlain = broken({ list: [1, "two", null, { deep: true }] });
    expect(!onPlain.ok && onPlain.error.code).toBe("internal");
    const onExotic = broken({ list: [new Map()] });
    expect(!onExotic.ok && onExotic.error.code).toBe("invalid-input");
    expect(guard(() => ok(1))()).toEqual(ok(1));
    const cyclic: Record<string, unknown> = { a: 1 };
    cyclic.self = cyclic;
    expect(isPlainData(cyclic)).toBe(true);
    for (const bad of [
      Object.create(null),
      1n,
      new Date(0),
      new Set(),
      Object(1),
      new Array(3), // a list of three holes
      () => 1,
      Symbol("s"),
    ])
      expect(isPlainData({ x: [bad] })).toBe(false);
  });

  it("mutated maps yield a validation list or a typed error", () => {
    const base = JSON.stringify(OM_5150_MAP);
    fc.assert(
      fc.property(fc.integer({ min: 0, max: base.length - 1 }), fc.string({ maxLength: 5 }), (at, ins) => {
        const text = base.slice(0, at) + ins + base.slice(at + 1);
        const parsed = mapFromJson(text);
        isResult(parsed);
        if (parsed.ok) {
          isResult(validateMap(parsed.value));
          isResult(startRun(parsed.value, { condition: { sourcesAttached: ["src-charger"] } }));
        }
      }),
      { numRuns: 300 },
    );
  });

  it("refuses a 10,000-node map quickly", () => {
    const big = chainMap(5000);
    const t0 = performance.now();
    const r = validateMap(big);
    expect(r.ok && r.value.ok).toBe(false);
    expect(r.ok && r.value.issues[0].code).toBe("too-large");
    expect(startRun(big, { condition: { sourcesAttached: ["src"] } }).ok).toBe(false);
    expect(performance.now() - t0).toBeLessThan(1000);
  });

  it("handles a 2,000-node deep chain without recursion limits", () => {
    const deep = chainMap(999);
    expect(deep.nodes.length).toBe(2000);
    const r = startRun(deep, { condition: { sourcesAttached: ["src"] } });
    expect(r.ok).toBe(true);
    if (!r.ok) return;
    expect(r.value.analysis.next).not.toBeNull();
    const cyc = structuredClone(deep);
    cyc.edges.push({ id: "back", from: "n999", to: "p1", kind: "feeds" });
    const v = validateMap(cyc);
    expect(v.ok && v.value.issues.some((i) => i.code === "cycle" && i.nodeIds.length > 1000)).toBe(true);
  });

  it("refuses too many readings and over-long reading text", () => {
    const many = Array.from({ length: 1001 }, (_, i) => ({
      id: `r${i}`,
      netId: "vsys",
      mode: "voltage" as const,
      value: 12,
    }));
    const a = analyse(OM_5150_MAP, { condition: { sourcesAttached: ["src-charger"] } }, many);
    expect(a.ok).toBe(false);
    expect(parseQuantity("1".repeat(65), "V").ok).toBe(false);
  });
});
