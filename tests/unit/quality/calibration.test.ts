import { describe, expect, test } from "vitest";
import {
  SC_CRITERION_PERCENT,
  SC_CRITERION_US_PER_CM,
  TEMPERATURE_CRITERION_C,
  assessVisit,
  calibrationCheck,
  expectedStandardUsPerCm,
  foulingError,
  scCriterionUsPerCm,
  temperatureCheck,
  withinScCriterion,
} from "#app/lib/quality/calibration.ts";

// Calibration criterion for specific conductance: ±5 µS/cm or ±3 %, whichever is greater — Wagner
// et al. 2006, USGS Techniques and Methods 1-D3, calibration criteria table (table 9; from memory).
describe("calibration criterion for specific conductance (TM 1-D3: ±5 µS/cm or ±3 %, whichever is greater)", () => {
  test("the published constants", () => {
    expect(SC_CRITERION_US_PER_CM).toBe(5);
    expect(SC_CRITERION_PERCENT).toBe(3);
    expect(TEMPERATURE_CRITERION_C).toBe(0.2);
  });

  test("at low conductivity the 5 µS/cm allowance is the greater (3 % of 100 µS/cm is only 3 µS/cm)", () => {
    expect(scCriterionUsPerCm(100)).toBe(5);
    expect(withinScCriterion(4.9, 100)).toBe(true); // 4.9 % of the value, still inside 5 µS/cm
    expect(withinScCriterion(-5, 100)).toBe(true);
    expect(withinScCriterion(5.1, 100)).toBe(false);
  });

  test("the two allowances meet at 166.7 µS/cm (5 / 0.03)", () => {
    expect(scCriterionUsPerCm(5 / 0.03)).toBeCloseTo(5, 9);
    expect(scCriterionUsPerCm(150)).toBe(5);
    expect(scCriterionUsPerCm(200)).toBeCloseTo(6, 9);
  });

  test("at high conductivity 3 % is the greater (3 % of 1413 µS/cm = 42.39 µS/cm)", () => {
    expect(scCriterionUsPerCm(1413)).toBeCloseTo(42.39, 9);
    expect(withinScCriterion(42.39, 1413)).toBe(true); // exactly 3 % passes
    expect(withinScCriterion(-42.5, 1413)).toBe(false);
    expect(withinScCriterion(30, 1413)).toBe(true); // over 5 µS/cm but inside 3 %
  });
});

describe("expected value of a calibration standard at its temperature", () => {
  // The NIST 0.01 mol/kg curve (CRC Handbook, 'Standard KCl solutions…'; Wu, Koch & Pratt 1991)
  // gives 1273.03 µS/cm at 20 °C and 1408.23 µS/cm at 25 °C; the 1413 trade standard is scaled by it.
  test("1413 µS/cm standard at 20 °C = 1413 × 1273.03 / 1408.23 = 1277.3 µS/cm (hand, from the CRC/NIST table)", () => {
    expect(expectedStandardUsPerCm("1413", 20)).toBeCloseTo((1413 * 1273.03) / 1408.23, 6);
    expect(expectedStandardUsPerCm("1413", 20)).toBeCloseTo(1277.35, 1);
  });

  test("1413 µS/cm standard at 25 °C is its nominal value", () => {
    expect(expectedStandardUsPerCm("1413", 25)).toBeCloseTo(1413, 9);
  });

  test("1413 µS/cm at 22 °C is 1332 µS/cm within 0.1 % (EPA Method 120.1 cell-calibration table)", () => {
    expect(Math.abs(expectedStandardUsPerCm("1413", 22) / 1332 - 1)).toBeLessThan(0.001);
  });

  test("12.88 mS/cm standard at 15 °C = 12 880 × 10 437.1 / 12 824.6 µS/cm (hand, CRC/NIST 0.1 mol/kg curve)", () => {
    expect(expectedStandardUsPerCm("12.88", 15)).toBeCloseTo((12880 * 10437.1) / 12824.6, 6);
  });

  test("a custom standard is taken at the value entered; none entered is refused", () => {
    expect(expectedStandardUsPerCm("custom", 18, 500)).toBe(500);
    expect(() => expectedStandardUsPerCm("custom", 18, null)).toThrow(RangeError);
  });

  test("outside the table's 0–50 °C the KCl standards are refused", () => {
    expect(() => expectedStandardUsPerCm("1413", 55)).toThrow(RangeError);
  });
});

describe("calibration check (drift error = expected standard value − sensor reading in it)", () => {
  test("a sensor reading 4.5 % high in 1413 at 25 °C fails, and the correction brings it back", () => {
    const r = calibrationCheck({ standard: "1413", temperatureC: 25, sensorUsPerCm: 1413 * 1.045 });
    expect(r.expectedUsPerCm).toBeCloseTo(1413, 9);
    expect(r.errorUsPerCm).toBeCloseTo(-63.585, 6); // 1413 − 1476.585
    expect(r.errorPercent).toBeCloseTo(-4.5, 9);
    expect(r.allowanceUsPerCm).toBeCloseTo(42.39, 9);
    expect(r.passed).toBe(false);
    // A recorded value × (1 + correction %) = expected: 1476.585 × (1 − 4.306 %) = 1413.
    expect(1413 * 1.045 * (1 + r.correctionPercent / 100)).toBeCloseTo(1413, 6);
    // Cell constant K_new = K × standard / read (cellConstant): 1 / 1.045 − 1 = −4.306 %.
    expect(r.cellConstantChangePercent).toBeCloseTo((1 / 1.045 - 1) * 100, 9);
  });

  test("a sensor reading 20 µS/cm low in 1413 at 20 °C passes (inside 3 % = 38.3 µS/cm)", () => {
    const expected = (1413 * 1273.03) / 1408.23;
    const r = calibrationCheck({ standard: "1413", temperatureC: 20, sensorUsPerCm: expected - 20 });
    expect(r.errorUsPerCm).toBeCloseTo(20, 9);
    expect(r.passed).toBe(true);
    expect(r.cellConstantChangePercent).toBeGreaterThan(0); // reading low → larger cell constant
  });

  test("at a 100 µS/cm custom standard, 6 µS/cm off fails on the 5 µS/cm allowance", () => {
    const r = calibrationCheck({ standard: "custom", customValueUsPerCm: 100, temperatureC: 20, sensorUsPerCm: 94 });
    expect(r.allowanceUsPerCm).toBe(5);
    expect(r.passed).toBe(false);
  });
});

describe("fouling error (after cleaning − before cleaning)", () => {
  test("relative to the field meter where one was read", () => {
    const r = foulingError({ scUsPerCm: 528 }, { scUsPerCm: 600 }, { scUsPerCm: 602 })!;
    expect(r.errorUsPerCm).toBe(72);
    expect(r.reference).toBe("field-meter");
    expect(r.errorPercent).toBeCloseTo((100 * 72) / 602, 9);
    expect(r.passed).toBe(false); // 72 > 3 % of 602 = 18.06
    // The correction at the visit turns the fouled reading into the cleaned one: 528 × (1 + 72/528).
    expect(528 * (1 + r.correctionPercent / 100)).toBeCloseTo(600, 9);
  });

  test("relative to the cleaned sensor without a field meter; small fouling passes", () => {
    const r = foulingError({ scUsPerCm: 95 }, { scUsPerCm: 98 })!;
    expect(r.reference).toBe("after-cleaning");
    expect(r.errorPercent).toBeCloseTo((100 * 3) / 98, 9);
    expect(r.passed).toBe(true); // 3 µS/cm inside 5 µS/cm
  });

  test("nothing to compute without both sensor readings", () => {
    expect(foulingError({ scUsPerCm: null }, { scUsPerCm: 98 })).toBeNull();
  });
});

describe("temperature check against the field meter (TM 1-D3: ±0.2 °C)", () => {
  test("0.2 °C off passes, 0.3 °C fails", () => {
    expect(temperatureCheck({ temperatureC: 12.1 }, { temperatureC: 12.3 })!.passed).toBe(true);
    expect(temperatureCheck({ temperatureC: 12.0 }, { temperatureC: 12.3 })!.passed).toBe(false);
    expect(temperatureCheck({ temperatureC: 12.0 }, null)).toBeNull();
  });
});

describe("a whole visit", () => {
  test("passes only when every computed test passes, and picks the standard nearest the water for drift", () => {
    const a = assessVisit({
      before: { scUsPerCm: 600, temperatureC: 14 },
      after: { scUsPerCm: 603, temperatureC: 14 },
      meter: { scUsPerCm: 601, temperatureC: 14.1 },
      checks: [
        { standard: "12.88", temperatureC: 25, sensorUsPerCm: 12880 },
        { standard: "1413", temperatureC: 25, sensorUsPerCm: 1500 },
      ],
    });
    expect(a.fouling!.passed).toBe(true);
    expect(a.checks[0]!.passed).toBe(true);
    expect(a.checks[1]!.passed).toBe(false);
    expect(a.driftCheckIndex).toBe(1); // 1413 is nearer 601 µS/cm than 12 880
    expect(a.passed).toBe(false);
  });

  test("nothing entered yet: no verdict", () => {
    expect(assessVisit({ before: {}, after: {}, checks: [] }).passed).toBeNull();
  });
});
