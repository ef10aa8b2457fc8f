import { describe, expect, test } from "vitest";
import { estimateTds, tdsFactorWarning, tdsInto, tdsMgPerL } from "#app/lib/water/index.ts";

describe("TDS from specific conductance", () => {
  test("TDS = factor × SC25 (Standard Methods 1030 E ratio 0.55–0.7)", () => {
    expect(estimateTds(1000, 0.65)).toEqual({ tdsMgPerL: 650, factor: 0.65 });
    expect(tdsMgPerL(1234, 0.64)).toBeCloseTo(789.76, 10);
  });

  test("a factor outside 0.55–0.75 carries a warning but is computed", () => {
    const result = estimateTds(1000, 0.8);
    expect(result.tdsMgPerL).toBeCloseTo(800, 10);
    expect(result.warning).toMatch(/0.55–0.75/);
    expect(tdsFactorWarning(0.52)).toBeDefined();
    expect(tdsFactorWarning(0.75)).toBeUndefined();
  });

  test("throws RangeError for factors outside 0.5–1.0 and negative SC", () => {
    expect(() => estimateTds(1000, 0.45)).toThrow(RangeError);
    expect(() => estimateTds(1000, 1.05)).toThrow(RangeError);
    expect(() => tdsMgPerL(-1, 0.65)).toThrow(RangeError);
    expect(() => tdsInto(new Float64Array(1), 2, new Float64Array(1))).toThrow(RangeError);
  });

  test("bulk TDS writes NaN for missing readings", () => {
    const out = tdsInto(Float64Array.from([100, Number.NaN, -3]), 0.6, new Float64Array(3));
    expect(out[0]).toBeCloseTo(60, 12);
    expect(Number.isNaN(out[1])).toBe(true);
    expect(Number.isNaN(out[2])).toBe(true);
  });
});
