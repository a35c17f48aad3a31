/**
 * Hot-path timing of analyse() on the 40-node demo map (OM-5150): mean and p95 per call with 3, 10 and 20
 * readings for each strategy, a meter profile attached (as the bench walker does). Not a test:
 * npx tsx tests/engine/support/analyse-speed.ts
 */
import { OM_5150_MAP } from "../../../seed/maps/om-5150";
import { simulateBoard } from "../../support/bench-sim";
import {
  analyse,
  type MeterProfile,
  parseQuantity,
  type Reading,
  type Strategy,
  unitForMode,
} from "../../../app/lib/engine";

const ATTACHED = ["src-charger", "src-battery", "src-button"];
const METER: MeterProfile = {
  name: "bench DMM",
  voltage: [
    { fullScale: 6, resolution: 0.001, pctOfReading: 0.5, counts: 2 },
    { fullScale: 60, resolution: 0.01, pctOfReading: 0.5, counts: 2 },
  ],
  resistance: [
    { fullScale: 600, resolution: 0.1, pctOfReading: 0.8, counts: 3 },
    { fullScale: 6e6, resolution: 1000, pctOfReading: 1, counts: 3 },
  ],
};
const sim = simulateBoard(OM_5150_MAP, ATTACHED, { part: "r-en3" });
const nets = OM_5150_MAP.nodes.flatMap((n) =>
  n.kind === "rail" || n.kind === "signal"
    ? (["voltage", "resistance", "diode"] as const)
        .filter((m) => n.expected[m])
        .map((mode) => ({ id: n.id, mode }))
    : [],
);
function readings(count: number): Reading[] {
  return Array.from({ length: count }, (_, i) => {
    const t = nets[(i * 7) % nets.length];
    const q = parseQuantity(sim.readingText(t.id, t.mode), unitForMode(t.mode));
    if (!q.ok) throw new Error(q.error.message);
    return { id: `r${i}`, netId: t.id, mode: t.mode, value: q.value.value, text: "x" };
  });
}
const setup = { condition: { sourcesAttached: ATTACHED }, meter: METER };
const ITER = Number(process.env.ITER ?? 2000);
const WARM = 500;
const rows: string[] = [];
for (const strategy of ["order", "split", "best"] as Strategy[])
  for (const n of [3, 10, 20]) {
    const rs = readings(n);
    // Same document object (warm), and a document parsed afresh per call as the walker gets it from the
    // database, with and without the map version id as cacheKey (the parse itself is not timed).
    const json = JSON.stringify(OM_5150_MAP);
    const time = (fresh: boolean, cacheKey?: string) => {
      const t: number[] = [];
      for (let i = 0; i < WARM + ITER; i++) {
        const doc = fresh ? JSON.parse(json) : OM_5150_MAP;
        const t0 = performance.now();
        const a = analyse(doc, setup, rs, { strategy, cacheKey });
        const dt = performance.now() - t0;
        if (!a.ok) throw new Error(a.error.message);
        if (i >= WARM) t.push(dt);
      }
      t.sort((a, b) => a - b);
      const mean = t.reduce((a, b) => a + b, 0) / t.length;
      return `mean ${mean.toFixed(3)} ms  p95 ${t[Math.floor(t.length * 0.95)].toFixed(3)} ms`;
    };
    rows.push(
      `${strategy.padEnd(6)} ${String(n).padStart(2)} readings  same doc: ${time(false)} | reparsed+cacheKey: ${time(true, "om-5150:v1")} | reparsed, no key: ${time(true)}`,
    );
  }
console.log(`analyse on OM-5150 (${nets.length} net/mode points), ${ITER} calls each after warm-up`);
for (const r of rows) console.log(r);
