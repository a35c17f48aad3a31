import fc from "fast-check";
import { describe, expect, it } from "vitest";
import type { MapDocument, MapNode } from "~/lib/engine";
import { applyChanges, compareDocuments, diffDocuments, edgeKindFor, emptyMapDocument } from "./map-changes";
import { rangeFieldSchema, rangeToText, valueFieldSchema, VoltsFieldSchema } from "./map-node-fields";

const src = (id: string, name = id): MapNode => ({ id, kind: "source", name });
const doc = (nodes: MapNode[]): MapDocument => ({ ...emptyMapDocument(), nodes });

describe("change-sets", () => {
  it("diff then apply reproduces the target document (any add/remove/rename mix)", () => {
    const ids = fc.uniqueArray(fc.constantFrom("a", "b", "c", "d", "e", "f"), { maxLength: 6 });
    fc.assert(
      fc.property(ids, ids, fc.boolean(), (before, after, rename) => {
        const from = doc(before.map((id) => src(id)));
        const to = doc(after.map((id) => src(id, rename ? `${id}!` : id)));
        const next = applyChanges(from, diffDocuments(from, to));
        expect([...next.nodes].sort((x, y) => x.id.localeCompare(y.id))).toEqual(
          [...to.nodes].sort((x, y) => x.id.localeCompare(y.id)),
        );
      }),
    );
  });

  it("sends only what changed: one renamed node of many is one operation", () => {
    const from = doc(Array.from({ length: 300 }, (_, i) => src(`n${i}`)));
    const to = { ...from, nodes: from.nodes.map((n) => (n.id === "n7" ? { ...n, name: "renamed" } : n)) };
    expect(diffDocuments(from, to)).toEqual([
      { op: "put-node", node: { id: "n7", kind: "source", name: "renamed" } },
    ]);
  });

  it("compares versions by node, ignoring moves on the canvas", () => {
    const a = doc([src("a"), src("b")]);
    const b = doc([{ ...src("a"), position: { x: 5, y: 5 } }, src("b", "B2"), src("c")]);
    const d = compareDocuments(a, b);
    expect(d.added.map((n) => n.id)).toEqual(["c"]);
    expect(d.changed.map((c) => [c.after.id, c.fields])).toEqual([["b", ["name"]]]);
  });

  it("allows only source→net, net→part and part→net connections", () => {
    expect(edgeKindFor("source", "rail")).toBe("supplies");
    expect(edgeKindFor("signal", "part")).toBe("feeds");
    expect(edgeKindFor("part", "signal")).toBe("drives");
    expect(edgeKindFor("rail", "rail")).toBeNull();
    expect(edgeKindFor("source", "part")).toBeNull();
    expect(edgeKindFor("part", "part")).toBeNull();
  });
});

describe("side-panel fields", () => {
  it("reads resistor values written as IEC 60062 codes and refuses other text", () => {
    // IEC 60062:2016 (+A1:2019) clause 4, letter-and-digit code: the letter marks the decimal point and multiplier,
    // R = ×1, K = ×10³, M = ×10⁶; so 4K7 = 4.7 kΩ, R47 = 0.47 Ω, 2M2 = 2.2 MΩ.
    const v = valueFieldSchema("resistor");
    for (const ok of ["4K7", "R47", "2M2", "100R", "0R", "10k"])
      expect(v.safeParse(ok).success, ok).toBe(true);
    expect(v.safeParse("four k seven").success).toBe(false);
    // Other parts keep free text, e.g. a regulator's output setting.
    expect(valueFieldSchema("regulator").safeParse("3.3 V adj").success).toBe(true);
  });

  it("parses expected ranges with the engine and writes them back the same way", () => {
    const voltage = rangeFieldSchema("voltage");
    expect(voltage.parse("3.3V ±5%")).toEqual({ nominal: 3.3, tolerancePct: 5 });
    expect(voltage.parse("2.97..3.63 V")).toEqual({ min: 2.97, max: 3.63 });
    expect(voltage.parse("")).toBeUndefined();
    expect(voltage.safeParse("3.3 ohm ±5%").success).toBe(false);
    const r = rangeFieldSchema("resistance").parse("10k..1M")!;
    expect(rangeFieldSchema("resistance").parse(rangeToText(r, "resistance"))).toEqual(r);
    // "3V3" is the schematic way of writing 3.3 V (common practice).
    expect(VoltsFieldSchema.parse("3V3")).toBe(3.3);
  });
});
