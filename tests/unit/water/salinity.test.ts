import { describe, expect, test } from "vitest";
import {
  C35_15_0_MS_PER_CM,
  conductivityFromSalinity,
  conductivityRatioFromSalinity,
  practicalSalinity,
  practicalSalinityInto,
  ratioFromSalinityIpts68Unchecked,
  salinityFromConductivityRatio,
  salinityFromRatioIpts68Unchecked,
  salinityFromRt,
} from "#app/lib/water/index.ts";

// ITS-90 temperature whose IPTS-68 value is exactly t68 (t68 = 1.00024 t90).
const t90 = (t68: number) => t68 / 1.00024;

describe("PSS-78 check values", () => {
  test("UNESCO (1983) Tech. Pap. Mar. Sci. 44 check value: R = 1.888091 at t68 = 40 °C, p = 10 000 dbar gives S = 40.0000", () => {
    // Printed check value (from memory); it lies outside −2…35 °C, so it goes through the
    // unchecked IPTS-68 function that exists for exactly this purpose.
    expect(salinityFromRatioIpts68Unchecked(1.888091, 40, 10_000)).toBeCloseTo(40.0, 4);
  });

  test("and the inverse of that check value: S = 40, t68 = 40, p = 10 000 → R = 1.888091", () => {
    expect(ratioFromSalinityIpts68Unchecked(40, 40, 10_000)).toBeCloseTo(1.888091, 6);
  });

  test("R = 1 at S = 35, t68 = 15 °C, p = 0 by definition of PSS-78 (UNESCO 1983)", () => {
    // The printed coefficients reproduce the definition to about 1e-7 (rt(15) = 1 + 2e-9).
    expect(salinityFromRatioIpts68Unchecked(1, 15, 0)).toBeCloseTo(35, 6);
    expect(salinityFromConductivityRatio(1, t90(15), 0)).toBeCloseTo(35, 6);
  });

  test("C(35, 15, 0) = 42.914 mS/cm gives S = 35 (Culkin & Smith 1980, used by UNESCO 1983)", () => {
    expect(C35_15_0_MS_PER_CM).toBe(42.914);
    expect(practicalSalinity(42.914, t90(15), 0)).toBeCloseTo(35, 6);
    expect(conductivityFromSalinity(35, t90(15), 0)).toBeCloseTo(42.914, 6);
  });

  test("TEOS-10 GSW check value: gsw_SP_from_C(34.5487, 28.7856, 10) = 20.009869599086951 (GSW-R documentation example)", () => {
    expect(practicalSalinity(34.5487, 28.7856, 10)).toBeCloseTo(20.009869599086951, 10);
  });

  test("TEOS-10 GSW check value: C_from_SP(34.86, 10, 100) = 37.99819884763376 mS/cm (docs.rs gsw 0.0.6 example)", () => {
    expect(conductivityFromSalinity(34.86, 10, 100)).toBeCloseTo(37.99819884763376, 9);
  });

  test("TEOS-10 GSW check value: SP_salinometer(Rt = 0.9, t = 10) = 31.130296542699828 (docs.rs gsw example)", () => {
    expect(salinityFromRt(0.9, 10)).toBeCloseTo(31.130296542699828, 10);
  });
});

describe("Hill et al. (1986) extension below S = 2", () => {
  test("zero conductivity is zero salinity (Hill formula at Rt = 0)", () => {
    expect(practicalSalinity(0, 12)).toBe(0);
  });

  test("joins PSS-78 continuously at S = 2 (continuity factor as in TEOS-10 GSW)", () => {
    const r2 = conductivityRatioFromSalinity(2, 18);
    const below = salinityFromConductivityRatio(r2 * (1 - 1e-12), 18);
    const above = salinityFromConductivityRatio(r2 * (1 + 1e-12), 18);
    expect(Math.abs(above - below)).toBeLessThan(1e-9);
    expect(below).toBeCloseTo(2, 9);
  });

  test("fresh water gets a small positive salinity that rises with conductivity (rule of thumb S ≈ 0.0005 × SC25 in µS/cm; from memory)", () => {
    const s = practicalSalinity(0.5, 10); // 500 µS/cm in situ at 10 °C, SC25 ≈ 700 µS/cm
    expect(s).toBeGreaterThan(0.25);
    expect(s).toBeLessThan(0.45);
    expect(practicalSalinity(0.05, 10)).toBeLessThan(s);
  });
});

describe("range checks", () => {
  test("throws RangeError outside −2…35 °C, 0…10 000 dbar, for negative conductivity and above S = 42", () => {
    expect(() => practicalSalinity(30, 35.5)).toThrow(/-2 to 35 °C/);
    expect(() => practicalSalinity(30, -2.5)).toThrow(RangeError);
    expect(() => practicalSalinity(30, 10, -1)).toThrow(/dbar/);
    expect(() => practicalSalinity(30, 10, 10_001)).toThrow(RangeError);
    expect(() => practicalSalinity(-0.1, 10)).toThrow(RangeError);
    expect(() => practicalSalinity(90, 25)).toThrow(/above the PSS-78 range/);
    expect(() => conductivityRatioFromSalinity(42.5, 10)).toThrow(RangeError);
    expect(() => conductivityRatioFromSalinity(-0.1, 10)).toThrow(RangeError);
    expect(() => salinityFromRt(-1, 10)).toThrow(RangeError);
  });

  test("bulk salinity returns NaN where the scalar throws, and the scalar value elsewhere", () => {
    const c = Float64Array.from([34548.7, 500, -1, 30000, 90000]);
    const t = Float64Array.from([28.7856, 10, 10, 36, 25]);
    const out = practicalSalinityInto(c, t, new Float64Array(5));
    expect(out[0]).toBeCloseTo(practicalSalinity(34.5487, 28.7856), 10);
    expect(out[1]).toBeCloseTo(practicalSalinity(0.5, 10), 10);
    expect(out.slice(2).every(Number.isNaN)).toBe(true);
    const deep = practicalSalinityInto(Float64Array.from([34548.7]), Float64Array.from([28.7856]), new Float64Array(1), 10);
    expect(deep[0]).toBeCloseTo(20.009869599086951, 10); // GSW-R example as above
  });
});
