import fc from "fast-check";
import { describe, expect, it } from "vitest";
import {
  analyse,
  compileMap,
  failureRate,
  judge,
  judgeReading,
  mapFromJson,
  nextReading,
  parseMapDocument,
  parseQuantity,
  parseRange,
  powerUpSequence,
  startRun,
  validateMap,
} from "~/lib/engine";
import { chainMap } from "../../bench/lib/maps";
import { OM_5150_MAP } from "../../seed/maps/om-5150";

const isResult = (r: unknown) => expect(typeof (r as { ok: unknown }).ok).toBe("boolean");

describe("bad input never escapes as an exception", () => {
  it("arbitrary values into every public function", () => {
    fc.assert(
      fc.property(
        fc.anything({ maxDepth: 4 }),
        fc.anything({ maxDepth: 3 }),
        fc.anything({ maxDepth: 3 }),
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
        },
      ),
      { numRuns: 400 },
    );
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
