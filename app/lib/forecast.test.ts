import { describe, expect, it } from "vitest";
import { monthsBetween, nextMonth, SMOOTHING_ALPHA, smoothedForecast, stockToHold } from "./forecast";

describe("parts forecast (simple exponential smoothing)", () => {
  // Recurrence from Hyndman & Athanasopoulos, Forecasting: Principles and Practice, 3rd ed., §8.1,
  // worked by hand: ℓ = 4 → 0.5·6 + 0.5·4 = 5 → 0.5·5 + 0.5·5 = 5 → 0.5·8 + 0.5·5 = 6.5.
  it("follows the smoothing recurrence with α = 0.5", () => {
    expect(SMOOTHING_ALPHA).toBe(0.5);
    expect(smoothedForecast([4, 6, 5, 8])).toBeCloseTo(6.5, 12);
    expect(stockToHold(6.5)).toBe(7);
  });

  it("α = 1 gives the last month (naive forecast); a flat series forecasts itself", () => {
    expect(smoothedForecast([3, 9, 2], 1)).toBe(2);
    expect(smoothedForecast([5, 5, 5, 5])).toBe(5);
  });

  // Hand-computed with α = 0.2: 10 → 0.2·0 + 0.8·10 = 8 → 0.2·0 + 0.8·8 = 6.4.
  it("counts months without use as zeros", () => {
    expect(smoothedForecast([10, 0, 0], 0.2)).toBeCloseTo(6.4, 12);
    expect(smoothedForecast([])).toBe(0);
    expect(stockToHold(0)).toBe(0);
    expect(stockToHold(2)).toBe(2);
  });

  it("refuses a smoothing constant outside (0, 1]", () => {
    expect(() => smoothedForecast([1], 0)).toThrow(RangeError);
    expect(() => smoothedForecast([1], 1.5)).toThrow(RangeError);
  });

  it("lists months across a year end", () => {
    expect(monthsBetween("2025-11-15", "2026-02-01")).toEqual(["2025-11", "2025-12", "2026-01", "2026-02"]);
    expect(nextMonth("2026-12")).toBe("2027-01");
    expect(nextMonth("2026-03")).toBe("2026-04");
  });
});
