import { describe, expect, it } from "vitest";
import { HEAT_STEPS, heatStep } from "./heat-scale";

describe("map shading steps", () => {
  it("puts rates on fixed steps, bounds included in the upper step", () => {
    expect(heatStep(0)).toBe(0);
    expect(heatStep(0.01)).toBe(1);
    expect(heatStep(0.0499)).toBe(1);
    expect(heatStep(0.05)).toBe(2);
    expect(heatStep(0.1)).toBe(3);
    expect(heatStep(0.2)).toBe(4);
    expect(heatStep(1)).toBe(4);
    expect(HEAT_STEPS).toHaveLength(5);
  });
});
