import { describe, expect, test } from "vitest";
import { cellConstant, kclStandardConductivity } from "#app/lib/water/index.ts";

describe("KCl standards: NIST molal table (CRC Handbook, 'Standard KCl solutions for calibrating conductivity cells')", () => {
  test.each([
    ["0.01m", 0, 772.92],
    ["0.01m", 18, 1219.93],
    ["0.01m", 25, 1408.23],
    ["0.01m", 50, 2123.43],
    ["0.1m", 25, 12824.6],
    ["0.1m", 10, 9291.72],
    ["1.0m", 25, 108620],
    ["1.0m", 35, 127970],
  ] as const)("%s at %d °C is %d µS/cm (CRC table, Wu, Koch & Pratt 1991; Wu et al. 1994)", (standard, t, value) => {
    expect(kclStandardConductivity(standard, t)).toBeCloseTo(value, 6);
  });

  test("interpolates linearly between tabulated temperatures (hand: 22.5 °C is halfway between 1273.03 and 1408.23)", () => {
    expect(kclStandardConductivity("0.01m", 22.5)).toBeCloseTo((1273.03 + 1408.23) / 2, 9);
    // 1.0 m has no 18 °C entry: 18 °C is 3/5 of the way from 15 °C (89 900) to 20 °C (99 170).
    expect(kclStandardConductivity("1.0m", 18)).toBeCloseTo(89900 + 0.6 * 9270, 6);
  });
});

describe("KCl standards: trade solutions", () => {
  test("nominal 25 °C values: 146.9 µS/cm, 1413 µS/cm, 12.88 mS/cm, 111.3 mS/cm (Standard Methods Table 2510:I; trade names)", () => {
    expect(kclStandardConductivity("0.001M", 25)).toBeCloseTo(146.9, 9);
    expect(kclStandardConductivity("0.01M", 25)).toBeCloseTo(1413, 9);
    expect(kclStandardConductivity("1413", 25)).toBeCloseTo(1413, 9);
    expect(kclStandardConductivity("12.88", 25)).toBeCloseTo(12880, 9);
    expect(kclStandardConductivity("111.3", 25)).toBeCloseTo(111300, 9);
  });

  test.each([
    [21, 1305],
    [22, 1332],
    [23, 1359],
    [24, 1386],
    [26, 1441],
  ])("0.01 mol/L at %d °C is %d µS/cm within 0.1 % (EPA Method 120.1 cell-calibration table)", (t, value) => {
    expect(Math.abs(kclStandardConductivity("0.01M", t) / value - 1)).toBeLessThan(0.001);
  });

  test.each([
    [5, 8.22],
    [10, 9.33],
    [15, 10.48],
    [20, 11.67],
    [30, 14.12],
    [35, 15.39],
  ])("12.88 mS/cm standard at %d °C is %d mS/cm within 0.1 % (trade standards table printed in a laboratory meter manual)", (t, value) => {
    expect(Math.abs(kclStandardConductivity("12.88", t) / (value * 1000) - 1)).toBeLessThan(0.001);
  });

  test.each([
    [5, 896],
    [10, 1020],
    [15, 1147],
    [20, 1278],
    [30, 1552],
  ])("1413 µS/cm standard at %d °C is %d µS/cm within 0.3 % (same trade table; our molal-curve scaling runs up to 0.26 % low at 5–10 °C)", (t, value) => {
    expect(Math.abs(kclStandardConductivity("1413", t) / value - 1)).toBeLessThan(0.003);
  });

  test.each([
    [15, 92.12],
    [18, 97.8],
    [20, 101.7],
    [35, 131.1],
  ])("111.3 mS/cm (1 D) standard at %d °C is %d mS/cm within 0.1 % (same trade table)", (t, value) => {
    expect(Math.abs(kclStandardConductivity("111.3", t) / (value * 1000) - 1)).toBeLessThan(0.001);
  });

  test("RangeError outside 0–50 °C and for unknown standards", () => {
    expect(() => kclStandardConductivity("0.01M", 51)).toThrow(/0–50 °C/);
    expect(() => kclStandardConductivity("0.01m", -1)).toThrow(RangeError);
    expect(() => kclStandardConductivity("0.05M" as never, 25)).toThrow(/Unknown KCl standard/);
  });
});

describe("cell constant", () => {
  test("K_new = K × standard / reading, worked by hand", () => {
    // 1413 µS/cm standard read as 1385 with K = 1.000 /cm: 1413/1385 = 1.020217; +2.02 %.
    const result = cellConstant({ standardUsPerCm: 1413, measuredUsPerCm: 1385, currentCellConstantPerCm: 1 });
    expect(result.cellConstantPerCm).toBeCloseTo(1.020217, 6);
    expect(result.changePercent).toBeCloseTo(2.0217, 4);
    expect(result.warning).toBeUndefined();
  });

  test("with a named standard at its temperature", () => {
    // 0.01 mol/L at 20 °C = 1413 × 1273.03 / 1408.23 = 1277.342 µS/cm (scaled CRC curve);
    // read 1250 with K = 0.98: K_new = 0.98 × 1277.342 / 1250 = 1.001436.
    const result = cellConstant({ standard: "0.01M", temperatureC: 20, measuredUsPerCm: 1250, currentCellConstantPerCm: 0.98 });
    expect(result.standardUsPerCm).toBeCloseTo(1277.342, 3);
    expect(result.cellConstantPerCm).toBeCloseTo(1.001436, 6);
  });

  test("warns on a change above 10 % and rejects non-positive input", () => {
    expect(cellConstant({ standardUsPerCm: 1413, measuredUsPerCm: 1200, currentCellConstantPerCm: 1 }).warning).toMatch(/17\.8 %/);
    expect(() => cellConstant({ standardUsPerCm: 1413, measuredUsPerCm: 0, currentCellConstantPerCm: 1 })).toThrow(RangeError);
    expect(() => cellConstant({ standardUsPerCm: 1413, measuredUsPerCm: 1400, currentCellConstantPerCm: -1 })).toThrow(RangeError);
  });
});
