import { describe, expect, it } from "vitest";
import { analyse, nextReading, type Reading, type Strategy, startRun } from "~/lib/engine";
import { chainMap } from "../../bench/lib/maps";
import { OM_5150_MAP } from "../../seed/maps/om-5150";

const STRATEGIES: Strategy[] = ["order", "split", "best"];
const BOTH = { condition: { sourcesAttached: ["src-charger", "src-battery", "src-button"] } };
const key = (x: { netId: string; mode: string }) => `${x.netId}:${x.mode}`;

describe("excluded checks (points the tech cannot reach)", () => {
  it.each(STRATEGIES)("%s never proposes an excluded check and keeps its own strategy", (strategy) => {
    const first = analyse(OM_5150_MAP, BOTH, [], { strategy });
    if (!first.ok) throw new Error(first.error.message);
    const skipped = first.value.next!;
    const a = analyse(OM_5150_MAP, BOTH, [], {
      strategy,
      exclude: [{ netId: skipped.netId, mode: skipped.mode }],
    });
    if (!a.ok) throw new Error(a.error.message);
    expect(a.value.strategy).toBe(strategy);
    expect(a.value.stuck).toBe(false);
    expect(a.value.next).not.toBeNull();
    expect(key(a.value.next!)).not.toBe(key(skipped));
    // The same choice as the strategy makes once the skipped check is ruled out by nextReading.
    const again = nextReading(first.value, strategy, undefined, undefined, {
      exclude: [{ netId: skipped.netId, mode: skipped.mode }],
    });
    expect(again.ok && again.value && key(again.value)).toBe(key(a.value.next!));
    // nextReading keeps the analysis's exclusions by default, and `exclude: []` lifts them.
    const kept = nextReading(a.value, strategy);
    expect(kept.ok && kept.value && key(kept.value)).toBe(key(a.value.next!));
    const lifted = nextReading(a.value, strategy, undefined, undefined, { exclude: [] });
    expect(lifted.ok && lifted.value && key(lifted.value)).toBe(key(skipped));
  });

  it.each(STRATEGIES)("%s: skipping every useful check leaves the run stuck, plainly", (strategy) => {
    const doc = chainMap(6, { shorts: true });
    const setup = { condition: { sourcesAttached: ["src"] } };
    const exclude: Array<{ netId: string; mode: "voltage" | "resistance" | "diode" }> = [];
    for (let i = 0; i < 100; i++) {
      const a = analyse(doc, setup, [], { strategy, exclude });
      if (!a.ok) throw new Error(a.error.message);
      if (!a.value.next) {
        expect(a.value.stuck).toBe(true);
        expect(a.value.stuckMessage).toMatch(/remaining checks were skipped; ask a lead for help/);
        expect(a.value.isolated).toBe(false);
        expect(a.value.finding).toBeNull();
        expect(a.value.suspects.length).toBeGreaterThan(1);
        const lifted = nextReading(a.value, undefined, undefined, undefined, { exclude: [] });
        expect(lifted.ok && lifted.value).toBeTruthy();
        expect(exclude.map(key)).toContain(key((lifted as { value: { netId: string; mode: string } }).value));
        return;
      }
      expect(exclude.map(key)).not.toContain(key(a.value.next));
      exclude.push({ netId: a.value.next.netId, mode: a.value.next.mode });
    }
    throw new Error("never got stuck");
  });

  it("a short test falls back from an excluded resistance check to diode mode", () => {
    const doc = chainMap(3, { shorts: true });
    for (const n of doc.nodes)
      if (n.kind === "rail" && n.expected.resistance) n.expected.diode = { min: 0.3, max: 0.7 };
    const setup = { condition: { sourcesAttached: ["src"] } };
    // VIN and RAIL_1 present, RAIL_2 and RAIL_3 missing: U2 or a short on RAIL_2.
    const volts: Record<string, number> = { vin: 20, n1: 3.3, n2: 0, n3: 0 };
    const readings: Reading[] = Object.entries(volts).map(([netId, value], i) => ({
      id: `r${i}`,
      netId,
      mode: "voltage",
      value,
    }));
    const plain = analyse(doc, setup, readings, { strategy: "order" });
    if (!plain.ok) throw new Error(plain.error.message);
    expect(plain.value.next).toMatchObject({ netId: "n2", mode: "resistance" });
    if (!plain.value.next) return;
    const a = analyse(doc, setup, readings, {
      strategy: "order",
      exclude: [{ netId: plain.value.next.netId, mode: "resistance" }],
    });
    expect(a.ok && a.value.next).toMatchObject({ netId: plain.value.next.netId, mode: "diode" });
  });

  it("an unnecessary exclusion changes nothing; unknown nets are ignored; bad lists are refused", () => {
    const a = analyse(OM_5150_MAP, BOTH, [], { strategy: "best" });
    const b = analyse(OM_5150_MAP, BOTH, [], {
      strategy: "best",
      exclude: [{ netId: "no-such-net", mode: "voltage" }],
    });
    expect(a.ok && b.ok && a.value.next && b.value.next && key(b.value.next)).toBe(
      a.ok && a.value.next && key(a.value.next),
    );
    expect(b.ok && b.value.stuck).toBe(false);
    for (const exclude of [
      [{ netId: "vsys" }],
      [{ netId: "a:b", mode: "voltage" }],
      "vsys",
      [{ netId: "vsys", mode: "amps" }],
    ]) {
      const r = analyse(OM_5150_MAP, BOTH, [], { exclude } as never);
      expect(r.ok || r.error.code).toBe("invalid-input");
      const s = startRun(OM_5150_MAP, BOTH, { exclude } as never);
      expect(s.ok || s.error.code).toBe("invalid-input");
    }
    const n = nextReading(a.ok ? a.value : {}, undefined, undefined, undefined, { exclude: "vsys" } as never);
    expect(n.ok || n.error.code).toBe("invalid-input");
  });

  it("startRun honours exclude for the first reading", () => {
    const run = startRun(OM_5150_MAP, BOTH);
    if (!run.ok) throw new Error(run.error.message);
    const first = run.value.analysis.next!;
    const again = startRun(OM_5150_MAP, BOTH, { exclude: [{ netId: first.netId, mode: first.mode }] });
    expect(again.ok && again.value.analysis.next && key(again.value.analysis.next)).not.toBe(key(first));
  });
});
