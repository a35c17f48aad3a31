import Ajv2020 from "ajv/dist/2020";
import { describe, expect, it } from "vitest";
import { mapDocumentJsonSchema } from "~/lib/engine";
import { OM_5130_MAP } from "../../seed/maps/om-5130";
import { OM_5150_MAP } from "../../seed/maps/om-5150";

// The exported JSON Schema is for other tools: a general-purpose validator (ajv, JSON Schema draft 2020-12,
// json-schema.org/draft/2020-12) must accept what the engine accepts and refuse what it refuses.
const validate = new Ajv2020({ strict: false, allErrors: true }).compile(mapDocumentJsonSchema());

describe("the map document's JSON Schema, checked by ajv", () => {
  it("accepts the demo maps", () => {
    for (const doc of [OM_5150_MAP, OM_5130_MAP]) {
      const ok = validate(JSON.parse(JSON.stringify(doc)));
      expect(validate.errors ?? []).toEqual([]);
      expect(ok).toBe(true);
    }
  });

  it("refuses a wrong format name, an unknown node kind, an edge kind we do not have and a missing id", () => {
    const base = JSON.parse(JSON.stringify(OM_5150_MAP));
    const bad = [
      { ...base, format: "someone-else.map" },
      { ...base, nodes: [...base.nodes, { ...base.nodes[0], id: "x1", kind: "fuse" }] },
      { ...base, edges: [...base.edges, { ...base.edges[0], kind: "powers" }] },
      {
        ...base,
        nodes: base.nodes.map((n: { id?: string }, i: number) => (i === 0 ? { ...n, id: undefined } : n)),
      },
    ];
    for (const doc of bad) expect(validate(JSON.parse(JSON.stringify(doc)))).toBe(false);
  });
});
