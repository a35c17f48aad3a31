import fc from "fast-check";
import { describe, expect, it } from "vitest";
import {
  MapDocumentSchema,
  mapDocumentJsonSchema,
  mapFromJson,
  mapToJson,
  parseMapDocument,
} from "~/lib/engine";
import { OM_5150_MAP } from "../../seed/maps/om-5150";
import { smallMap } from "./support/fixtures";

describe("map document", () => {
  it("round-trips exactly through JSON", () => {
    for (const doc of [smallMap(), OM_5150_MAP]) {
      const text = mapToJson(doc);
      expect(text.ok).toBe(true);
      if (!text.ok) continue;
      const back = mapFromJson(text.value);
      expect(back).toEqual({ ok: true, value: doc });
      const again = back.ok && mapToJson(back.value);
      expect(again && (again.ok ? again.value : null)).toBe(text.value);
    }
  });

  it("round-trips generated documents", () => {
    const id = fc.stringMatching(/^[a-z][a-z0-9-]{0,8}$/);
    // JSON has no -0, so generated numbers use +0.
    const num = (min: number, max: number) =>
      fc.double({ min, max, noNaN: true }).map((x) => (x === 0 ? 0 : x));
    const range = fc.oneof(
      fc.record({ nominal: num(-100, 100), tolerancePct: num(0, 100) }),
      fc.tuple(num(0, 1e6), num(0, 1e6)).map(([a, b]) => ({ min: Math.min(a, b), max: Math.max(a, b) })),
    );
    const net = fc.record(
      {
        id,
        kind: fc.constant("rail" as const),
        name: fc.string({ maxLength: 20 }),
        nominalV: num(0, 50),
        tolerancePct: num(0, 20),
        expected: fc.record({ voltage: range, resistance: range }, { requiredKeys: [] }),
        probe: fc.record({
          text: fc.string({ maxLength: 10 }),
          seconds: fc.nat(600),
          needsDisassembly: fc.boolean(),
        }),
        stage: fc.constantFrom("G3", "S5", "S4", "S3", "S0" as const),
        position: fc.record({ x: fc.integer(), y: fc.integer() }),
      },
      { requiredKeys: ["id", "kind", "name", "nominalV", "tolerancePct", "expected", "probe"] },
    );
    fc.assert(
      fc.property(fc.array(net, { maxLength: 8 }), (nodes) => {
        const doc = {
          format: "railwise.map" as const,
          version: 1 as const,
          settings: { strategy: "split" as const },
          nodes,
          edges: [],
        };
        const parsed = parseMapDocument(doc);
        expect(parsed.ok).toBe(true);
        if (!parsed.ok) return;
        const text = mapToJson(parsed.value);
        expect(text.ok && mapFromJson(text.value)).toEqual({ ok: true, value: parsed.value });
      }),
      { numRuns: 200 },
    );
  });

  it("exports a JSON Schema", () => {
    const schema = mapDocumentJsonSchema();
    expect(schema.type).toBe("object");
    expect(Object.keys(schema.properties as object)).toEqual(
      expect.arrayContaining(["format", "version", "settings", "nodes", "edges"]),
    );
    expect(JSON.stringify(schema)).toContain("railwise.map");
    expect(MapDocumentSchema.safeParse(OM_5150_MAP).success).toBe(true);
  });

  it("keeps a part's optional safety notes: old documents stay valid, new ones round-trip exactly", () => {
    const parts = OM_5150_MAP.nodes.filter((n) => n.kind === "part");
    expect(parts.length).toBeGreaterThan(0);
    // Documents written before parts had safety notes have none and still parse.
    expect(parts.every((p) => !("safetyNotes" in p))).toBe(true);
    expect(parseMapDocument(OM_5150_MAP).ok).toBe(true);

    const noted = {
      ...OM_5150_MAP,
      nodes: OM_5150_MAP.nodes.map((n) =>
        n.id === parts[0].id ? { ...n, safetyNotes: "Disconnect the battery before hot air here." } : n,
      ),
    };
    const text = mapToJson(noted);
    expect(text.ok).toBe(true);
    if (!text.ok) return;
    expect(text.value).toContain('"safetyNotes": "Disconnect the battery before hot air here."');
    const back = mapFromJson(text.value);
    expect(back).toEqual({ ok: true, value: noted });
    expect(back.ok && mapToJson(back.value)).toEqual({ ok: true, value: text.value });

    const tooLong = {
      ...noted,
      nodes: noted.nodes.map((n) => (n.id === parts[0].id ? { ...n, safetyNotes: "x".repeat(4001) } : n)),
    };
    const refused = parseMapDocument(tooLong);
    expect(refused.ok).toBe(false);
    if (!refused.ok) expect(refused.error.message).toMatch(/safetyNotes/);
  });

  it("describes the part's safety notes in the exported JSON Schema", () => {
    const schema = mapDocumentJsonSchema() as {
      properties: { nodes: { items: { anyOf?: unknown[]; oneOf?: unknown[] } } };
    };
    const variants = (schema.properties.nodes.items.anyOf ?? schema.properties.nodes.items.oneOf) as Array<{
      properties: { kind: { const: string }; safetyNotes?: { type: string; maxLength: number } };
      required: string[];
    }>;
    const part = variants.find((v) => v.properties.kind.const === "part");
    expect(part?.properties.safetyNotes).toMatchObject({ type: "string", maxLength: 4000 });
    expect(part?.required).not.toContain("safetyNotes");
  });

  it("refuses bad JSON, wrong versions and huge inputs with typed errors", () => {
    expect(mapFromJson("{").ok).toBe(false);
    expect(mapFromJson(JSON.stringify({ ...smallMap(), version: 2 })).ok).toBe(false);
    const huge = { ...smallMap(), nodes: Array.from({ length: 10_000 }, (_, i) => ({ id: `n${i}` })) };
    const r = parseMapDocument(huge);
    expect(r.ok).toBe(false);
    if (!r.ok) expect(r.error.code).toBe("too-large");
    expect(mapFromJson("x".repeat(6_000_000)).ok).toBe(false);
    expect(mapFromJson(undefined as never).ok).toBe(false);
  });
});
