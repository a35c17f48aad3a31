import { describe, expect, it } from "vitest";
import { judgeReading, type MapDocument } from "~/lib/engine";
import { smallMap } from "./support/fixtures";

// A net's own missing/shorted thresholds win over the map's settings; nets without their own use the map's.
function mapWithOverrides(): MapDocument {
  const doc = smallMap();
  doc.settings = { ...doc.settings, missingThresholdV: 0.1, shortedThresholdOhm: 1 };
  doc.nodes = doc.nodes.map((n) =>
    n.id === "b" ? ({ ...n, missingThresholdV: 1, shortedThresholdOhm: 10 } as typeof n) : n,
  );
  return doc;
}

const verdict = (doc: MapDocument, netId: string, mode: "voltage" | "resistance", value: number) => {
  const j = judgeReading(doc, { netId, mode, value });
  if (!j.ok) throw new Error(j.error.message);
  return j.value.verdict;
};

describe("per-net thresholds", () => {
  it("judge a net by its own thresholds and the others by the map's", () => {
    const doc = mapWithOverrides();
    // 0.5 V on a 3.3 V rail: under net b's own 1 V missing threshold, above the map's 0.1 V.
    expect(verdict(doc, "b", "voltage", 0.5)).toBe("missing");
    expect(verdict(doc, "c", "voltage", 0.5)).toBe("low");
    // 5 Ω to ground: under net b's own 10 Ω short threshold, above the map's 1 Ω (window 100 Ω..100 kΩ).
    expect(verdict(doc, "b", "resistance", 5)).toBe("shorted");
    expect(verdict(doc, "c", "resistance", 5)).toBe("low");
    expect(verdict(doc, "c", "resistance", 0.5)).toBe("shorted");
  });
});
