import { describe, expect, test } from "vitest";
import { SC_GRADE_BANDS, TEMPERATURE_GRADE_BANDS, scGrade, temperatureGrade, totalCorrectionPercent } from "#app/lib/quality/grades.ts";

// Bands: Wagner et al. 2006, USGS Techniques and Methods 1-D3, "Ratings of accuracy for continuous
// water-quality records" (table 17) and "Maximum allowable limits for reporting" (table 16), 2006
// edition — values and table numbers from memory.
describe("specific conductance grades (TM 1-D3: excellent ≤ 3 %, good > 3–10 %, fair > 10–15 %, poor > 15 %; limit 30 %)", () => {
  test("the published bands", () => {
    expect(SC_GRADE_BANDS).toEqual({ excellent: 3, good: 10, fair: 15, limit: 30, unit: "%" });
  });

  test.each([
    [0, "excellent"],
    [3, "excellent"],
    [3.01, "good"],
    [10, "good"],
    [10.01, "fair"],
    [15, "fair"],
    [15.01, "poor"],
    [30, "poor"],
    [30.01, "beyond-limit"],
  ] as const)("%d %% → %s", (percent, grade) => {
    expect(scGrade(percent)).toBe(grade);
  });

  test("a correction of −12 % grades like +12 %", () => {
    expect(scGrade(-12)).toBe("fair");
  });

  test("float noise at an edge does not drop a grade (100 × (1.03 − 1) computes as 3.0000000000000027)", () => {
    const computed = 100 * (1.03 - 1);
    expect(computed).toBeGreaterThan(3); // the noise is real
    expect(scGrade(computed)).toBe("excellent");
  });
});

describe("temperature grades (TM 1-D3: excellent ≤ 0.2 °C, good > 0.2–0.5, fair > 0.5–0.8, poor > 0.8; limit 2.0 °C)", () => {
  test("the published bands", () => {
    expect(TEMPERATURE_GRADE_BANDS).toEqual({ excellent: 0.2, good: 0.5, fair: 0.8, limit: 2.0, unit: "°C" });
  });

  test.each([
    [0.2, "excellent"],
    [0.21, "good"],
    [0.5, "good"],
    [0.51, "fair"],
    [0.8, "fair"],
    [0.81, "poor"],
    [2.0, "poor"],
    [2.01, "beyond-limit"],
  ] as const)("%d °C → %s", (c, grade) => {
    expect(temperatureGrade(c)).toBe(grade);
  });
});

describe("total correction of a period", () => {
  test("sums absolute values: +12 % fouling and −3 % drift count 15 % (fair), not 9 % (good)", () => {
    const total = totalCorrectionPercent(
      [
        { startOffset: 0, endOffset: 12, unit: "percent" },
        { startOffset: 0, endOffset: -3, unit: "percent" },
      ],
      null,
    );
    expect(total).toBe(15);
    expect(scGrade(total!)).toBe("fair");
  });

  test("µS/cm corrections against the period's typical value; none at all is 0 % (excellent)", () => {
    expect(totalCorrectionPercent([{ startOffset: 0, endOffset: 26.2, unit: "us_cm" }], 262)).toBeCloseTo(10, 9);
    expect(totalCorrectionPercent([], null)).toBe(0);
  });
});
