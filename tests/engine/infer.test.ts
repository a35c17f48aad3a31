import { describe, expect, it } from "vitest";
import { analyse, nextReading, type Reading, type RunSetup, startRun } from "~/lib/engine";
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
