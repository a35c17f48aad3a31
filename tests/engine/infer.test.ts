import { describe, expect, it } from "vitest";
import {
  analyse,
  COMPILE_CACHE_SIZE,
  clearCompileCache,
  compileMap,
  compileMapCached,
  MAX_CONTRADICTIONS,
  nextReading,
  type Reading,
  type RunSetup,
  startRun,
} from "~/lib/engine";
import { chainMap } from "../../bench/lib/maps";
import { smallMap } from "./support/fixtures";

const setup: RunSetup = { condition: { sourcesAttached: ["src"] } };
const V = (id: string, netId: string, value: number | "OL"): Reading => ({
  id,
  netId,
  mode: "voltage",
  value,
});
const R = (id: string, netId: string, value: number | "OL"): Reading => ({
  id,
  netId,
  mode: "resistance",
  value,
});
const run = (readings: Reading[], s: RunSetup = setup, opts?: Parameters<typeof analyse>[3]) => {
  const r = analyse(smallMap(), s, readings, opts);
  if (!r.ok) throw new Error(r.error.message);
  return r.value;
};

describe("inference", () => {
  it("starts from the default symptom: the last-stage rails are missing", () => {
    const r = startRun(smallMap(), setup);
    expect(r.ok).toBe(true);
    if (!r.ok) return;
    expect(r.value.setup.symptom.missingNetIds.sort()).toEqual(["c", "d"]);
    expect(r.value.analysis.suspects.map((s) => s.id).sort()).toEqual(
      ["p1", "p2", "p3", "short:a", "short:b", "short:c", "short:d"].sort(),
    );
    expect(r.value.analysis.next).not.toBeNull();
    expect(r.value.analysis.isolated).toBe(false);
  });

  it("a present net proves its upstream present; a missing net puts the fault at or before it", () => {
    const a = run([V("r1", "b", 3.3)]);
    expect(a.present).toEqual(expect.arrayContaining(["a", "b"]));
    expect(a.suspects.map((s) => s.id).sort()).toEqual(["p2", "p3", "short:c", "short:d"]);
    const b = run([V("r1", "b", 0.01)]);
    expect(b.missing).toEqual(expect.arrayContaining(["b", "c"]));
    expect(b.suspects.map((s) => s.id).sort()).toEqual(["p1", "short:a", "short:b"]);
  });

  it("after a short is suspected it asks for resistance to ground, then names the part or the short", () => {
    const readings = [V("r1", "a", 3.3), V("r2", "b", 0.02)];
    const a = run(readings);
    expect(a.suspects.map((s) => s.id).sort()).toEqual(["p1", "short:b"]);
    expect(a.next).toMatchObject({ netId: "b", mode: "resistance" });
    expect(a.next?.why).toMatch(/resistance to ground/);
    const part = run([...readings, R("r3", "b", 4700)]);
    expect(part.isolated).toBe(true);
    expect(part.finding).toMatchObject({ kind: "part", nodeId: "p1", netId: "b" });
    expect(part.finding?.provingReadingIds).toEqual(["r1", "r2", "r3"]);
    expect(part.next).toBeNull();
    const short = run([...readings, R("r3", "b", 0.3)]);
    expect(short.finding).toMatchObject({ kind: "short", nodeId: "b", netId: "b" });
  });

  it("when every suspect is cleared: no fault found in this map, with the clearing readings", () => {
    const a = run([V("r1", "c", 3.3), V("r2", "d", 3.31)]);
    expect(a.isolated).toBe(true);
    expect(a.suspects).toEqual([]);
    expect(a.finding).toMatchObject({ kind: "no-fault-found", provingReadingIds: ["r1", "r2"] });
  });

  it("reports contradictory readings instead of ignoring them", () => {
    const a = run([V("r1", "b", 0), V("r2", "c", 3.3)]);
    expect(a.contradictions.map((c) => c.kind)).toContain("depends-on-missing");
    expect(a.contradictions[0].readingIds.sort()).toEqual(["r1", "r2"]);
    expect(a.finding).toBeNull();
    const two = run([
      V("r1", "c", 0),
      V("r2", "d", 0),
      V("r3", "b", 3.3),
      V("r4", "a", 3.3),
      R("r5", "c", 500),
    ]);
    expect(two.contradictions.map((c) => c.kind)).toEqual(["no-single-fault"]);
    const sp = run([V("r1", "b", 3.3), R("r2", "b", 0.1)]);
    expect(sp.contradictions.map((c) => c.kind)).toContain("short-but-present");
  });

  it("nets supplied only by absent sources are not suspects", () => {
    const r = startRun(smallMap(), { condition: { sourcesAttached: [] } });
    expect(r.ok).toBe(true);
    if (!r.ok) return;
    expect(r.value.analysis.suspects).toEqual([]);
    expect(r.value.analysis.unpowered).toEqual(expect.arrayContaining(["a", "b", "c", "d"]));
    expect(r.value.warnings.length).toBeGreaterThan(0);
    const a = run([V("r1", "a", 3.3)], { condition: { sourcesAttached: [] } });
    expect(a.contradictions.map((c) => c.kind)).toContain("not-powered");
  });

  it("the latest reading of a net and mode counts; earlier ones are marked superseded", () => {
    const a = run([V("r1", "b", 0), V("r2", "b", 3.3)]);
    expect(a.readings[0].superseded).toBe(true);
    expect(a.present).toContain("b");
  });

  it("a symptom naming one rail narrows the suspects to that rail's path", () => {
    const a = run([], { ...setup, symptom: { missingNetIds: ["d"] } });
    expect(a.suspects.map((s) => s.id).sort()).toEqual(["p3", "short:a", "short:d"]);
    const all = run([], { ...setup, symptom: { missingNetIds: ["c", "d"], match: "all" } });
    expect(all.suspects.map((s) => s.id)).toEqual(["short:a"]);
  });

  it("ranks suspects by Laplace-smoothed prior counts", () => {
    const a = run([V("r1", "b", 0)], setup, { priors: { p1: 8, "short:b": 0 } });
    expect(a.suspects[0].id).toBe("p1");
    // (8 + 1) / ((8 + 1) + (0 + 1) + (0 + 1)) for p1, short:b, short:a.
    expect(a.suspects[0].probability).toBeCloseTo(9 / 11, 12);
    const n = nextReading(a, "order");
    expect(n.ok && n.value?.netId).toBe("a");
  });

  it("flags readings it cannot judge and refuses unknown sources", () => {
    const a = run([V("r1", "nope", 1)]);
    expect(a.readings[0].error).toMatch(/No net/);
    const bad = analyse(smallMap(), { condition: { sourcesAttached: ["ghost"] } }, []);
    expect(bad.ok).toBe(false);
    expect(nextReading({}).ok).toBe(false);
  });
});

describe("large inputs and caching", () => {
  it("caps contradictions: a 2,000-node map with 1,000 contradicting readings returns a bounded result", () => {
    const doc = chainMap(999);
    expect(doc.nodes.length).toBe(2000);
    const s: RunSetup = { condition: { sourcesAttached: ["src"] }, symptom: { missingNetIds: ["n999"] } };
    // Early nets read missing while every later one reads present. n500 is read twice (missing, then present),
    // so 499 missing × 500 present readings, each pair a "depends on missing" contradiction.
    const readings: Reading[] = [
      ...Array.from({ length: 500 }, (_, i) => V(`m${i}`, `n${i + 1}`, 0)),
      ...Array.from({ length: 500 }, (_, i) => V(`p${i}`, `n${i + 500}`, 3.3)),
    ];
    expect(analyse(doc, s, [], {}).ok).toBe(true); // compile outside the timing
    const t0 = performance.now();
    const a = analyse(doc, s, readings);
    const ms = performance.now() - t0;
    if (!a.ok) throw new Error(a.error.message);
    expect(a.value.contradictions.length).toBe(MAX_CONTRADICTIONS);
    expect(MAX_CONTRADICTIONS).toBe(200);
    expect(a.value.contradictionsOmitted).toBe(499 * 500 - MAX_CONTRADICTIONS);
    expect(JSON.stringify(a.value).length).toBeLessThan(2_000_000);
    expect(ms).toBeLessThan(3000);
    // Below the cap nothing is omitted and the field is absent.
    const few = analyse(doc, s, [V("a", "n1", 0), V("b", "n5", 3.3)]);
    expect(few.ok && few.value.contradictions.length).toBe(1);
    expect(few.ok && "contradictionsOmitted" in few.value).toBe(false);
  }, 20_000);

  it("compileMapCached reuses the compiled map for a document parsed afresh under the same key", () => {
    clearCompileCache();
    const text = JSON.stringify(chainMap(60));
    const first = compileMapCached("version-1", JSON.parse(text));
    const second = compileMapCached("version-1", JSON.parse(text));
    expect(first.ok && second.ok && first.value === second.value).toBe(true);
    // Without the key a fresh object compiles again.
    const a = compileMap(JSON.parse(text));
    const b = compileMap(JSON.parse(text));
    expect(a.ok && b.ok && a.value === b.value).toBe(false);
    // Through analyse/startRun options: the compiled map (and its scenarios) is reused.
    const s: RunSetup = { condition: { sourcesAttached: ["src"] } };
    const r1 = startRun(JSON.parse(text), s, { cacheKey: "version-2" });
    const r2 = analyse(JSON.parse(text), s, [], { cacheKey: "version-2" });
    const c2 = compileMapCached("version-2", JSON.parse(text));
    expect(r1.ok && r2.ok && c2.ok).toBe(true);
    if (c2.ok) expect(c2.value.scenarios.size).toBeGreaterThan(0);
    // A small LRU: the oldest keys go once more than COMPILE_CACHE_SIZE are in use.
    for (let i = 0; i < COMPILE_CACHE_SIZE + 1; i++) compileMapCached(`k${i}`, chainMap(2));
    const evicted = compileMapCached("version-1", JSON.parse(text));
    expect(evicted.ok && first.ok && evicted.value !== first.value).toBe(true);
    expect(compileMapCached("", chainMap(2))).toMatchObject({ ok: false, error: { code: "invalid-input" } });
    expect(analyse(chainMap(2), s, [], { cacheKey: 5 } as never).ok).toBe(false);
  });

  it("a repeated edge does not make a net look multiply driven", () => {
    const doc = smallMap();
    doc.edges.push({ id: "p1-b-again", from: "p1", to: "b", kind: "drives" });
    const a = analyse(doc, setup, [V("1", "b", 0), R("2", "b", 0.2)]);
    const plain = analyse(smallMap(), setup, [V("1", "b", 0), R("2", "b", 0.2)]);
    expect(a.ok && plain.ok).toBe(true);
    if (a.ok && plain.ok) {
      expect(a.value.suspects).toEqual(plain.value.suspects);
      expect(a.value.finding).toEqual(plain.value.finding);
    }
  });
});
