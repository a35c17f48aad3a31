import fc from "fast-check";
import { afterEach, describe, expect, it, vi } from "vitest";
import {
  analyse,
  judge,
  judgeReading,
  MeterProfileSchema,
  RangeSchema,
  type Reading,
  ReadingSchema,
  RunSetupSchema,
} from "~/lib/engine";
import { OM_5150_MAP } from "../../seed/maps/om-5150";

const METER = {
  voltage: [{ fullScale: 6, resolution: 0.001, pctOfReading: 0.5, counts: 2 }],
  resistance: [{ fullScale: 6e6, resolution: 1000, pctOfReading: 1, counts: 3 }],
};
const SETUP = { condition: { sourcesAttached: ["src-charger", "src-battery", "src-button"] }, meter: METER };
const nets = OM_5150_MAP.nodes.filter((n) => n.kind === "rail" || n.kind === "signal");
const readings: Reading[] = Array.from({ length: 20 }, (_, i) => ({
  id: `r${i}`,
  netId: nets[i % nets.length].id,
  mode: "voltage",
  value: i % 3 ? 3.3 : 0,
  text: "3.3",
}));

afterEach(() => vi.restoreAllMocks());

describe("analyse's hot path validates at the boundary only", () => {
  it("no zod parse per reading: valid readings, ranges and meter are checked with plain code", () => {
    analyse(OM_5150_MAP, SETUP, readings, { cacheKey: "hot-path" }); // warm the compiled map
    const spies = [ReadingSchema, RangeSchema, MeterProfileSchema].map((s) => vi.spyOn(s, "safeParse"));
    const setup = vi.spyOn(RunSetupSchema, "safeParse");
    const a = analyse(OM_5150_MAP, SETUP, readings, { cacheKey: "hot-path" });
    expect(a.ok && a.value.readings).toHaveLength(20);
    for (const s of spies) expect(s).not.toHaveBeenCalled();
    expect(setup).toHaveBeenCalledTimes(1); // the setup (and its meter) once, at the boundary
  });

  it("judge and judgeReading use no zod on valid input, and judgeReading builds no schema per call", () => {
    const pick = vi.spyOn(ReadingSchema, "pick");
    const spies = [RangeSchema, MeterProfileSchema].map((s) => vi.spyOn(s, "safeParse"));
    for (let i = 0; i < 5; i++) {
      expect(judge({ mode: "voltage", value: 3.3 }, { nominal: 3.3, tolerancePct: 5 }, METER).ok).toBe(true);
      expect(judgeReading(OM_5150_MAP, { netId: nets[0].id, mode: "voltage", value: 3.3 }, METER).ok).toBe(
        true,
      );
    }
    expect(pick).not.toHaveBeenCalled();
    for (const s of spies) expect(s).not.toHaveBeenCalled();
  });

  it("the plain checks agree with the zod schemas (analysis output included)", () => {
    const base = analyse(OM_5150_MAP, SETUP, [], {});
    expect(base.ok).toBe(true);
    const mode = fc.constantFrom("voltage", "resistance", "diode", "amps");
    const num = fc.oneof(
      fc.double(),
      fc.constant(-0),
      fc.integer(),
      fc.constant("OL"),
      fc.constant(Number.NaN),
    );
    const reading = fc.oneof(
      fc.record(
        {
          id: fc.oneof(fc.string({ maxLength: 70 }), fc.constant("")),
          netId: fc.constantFrom(nets[0].id, nets[1].id, "a:b", "", "x".repeat(65)),
          mode,
          value: num,
          text: fc.oneof(fc.string({ maxLength: 70 }), fc.constant(undefined), fc.integer()),
          takenAt: fc.oneof(fc.string({ maxLength: 45 }), fc.constant(undefined)),
          extra: fc.anything(),
        },
        { requiredKeys: [] },
      ),
      fc.anything(),
    );
    fc.assert(
      fc.property(reading, (r) => {
        const z = ReadingSchema.safeParse(r);
        const a = analyse(OM_5150_MAP, SETUP, [r as Reading], {});
        expect(a.ok || a.error.code === "invalid-input").toBe(true);
        expect(a.ok).toBe(z.success);
        if (a.ok && z.success) {
          const { verdict: _v, judgement: _j, superseded: _s, error: _e, ...rest } = a.value.readings[0];
          expect(rest).toStrictEqual(z.data);
        }
      }),
      { numRuns: 500 },
    );
    const range = fc.oneof(
      fc.record({ nominal: num, tolerancePct: num }, { requiredKeys: [] }),
      fc.record({ min: num, max: num, x: fc.integer() }, { requiredKeys: [] }),
      fc.anything(),
    );
    const meterRange = fc.record(
      { fullScale: num, resolution: num, pctOfReading: num, counts: num, x: fc.integer() },
      { requiredKeys: ["fullScale", "resolution", "pctOfReading", "counts"] },
    );
    const meter = fc.oneof(
      fc.record(
        {
          name: fc.oneof(fc.string({ maxLength: 130 }), fc.integer()),
          voltage: fc.array(meterRange, { maxLength: 3 }),
          diode: fc.oneof(fc.array(meterRange, { maxLength: 22 }), fc.anything()),
          other: fc.anything(),
        },
        { requiredKeys: [] },
      ),
      fc.anything(),
    );
    fc.assert(
      fc.property(range, meter, (e, m) => {
        const expected = RangeSchema.safeParse(e).success && MeterProfileSchema.safeParse(m).success;
        const j = judge({ mode: "voltage", value: 1 }, e as never, m as never);
        // undefined meter is allowed by judge (optional argument)
        if (m === undefined) return;
        expect(j.ok).toBe(expected);
        if (!j.ok) expect(j.error.code).toBe("invalid-input");
      }),
      { numRuns: 1000 },
    );
  });
});
