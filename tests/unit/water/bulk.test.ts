import { describe, expect, test } from "vitest";
import {
  deriveReadingInto,
  deriveReadings,
  practicalSalinity,
  specificConductance,
  type DeriveOptions,
} from "#app/lib/water/index.ts";

// The bulk path must agree with the scalar functions it inlines (these are consistency
// tests; the scalar functions carry the published check values).
describe("deriveReadings", () => {
  const n = 500;
  const conductivity = new Float64Array(n);
  const temperature = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    conductivity[i] = 20 + ((i * 7919) % 60_000); // 20 µS/cm to 60 mS/cm, invented
    temperature[i] = ((i * 104_729) % 3590) / 100; // 0–35.9 °C
  }

  test.each<DeriveOptions>([
    { method: { kind: "natural-water" }, tdsFactor: 0.65 },
    { method: { kind: "linear", alphaPerC: 0.0191 }, tdsFactor: 0.7, pressureDbar: 12 },
    { method: { kind: "natural-water", referenceC: 20 }, tdsFactor: 0.55 },
  ])("matches the scalar functions for %o", (options) => {
    const out = deriveReadings(conductivity, temperature, options);
    for (let i = 0; i < n; i++) {
      const sc = specificConductance(conductivity[i], temperature[i], options.method);
      expect(out.specificConductanceUsPerCm[i]).toBeCloseTo(sc, 9);
      expect(out.tdsMgPerL[i]).toBeCloseTo(options.tdsFactor * sc, 9);
      let s: number;
      try {
        s = practicalSalinity(conductivity[i] / 1000, temperature[i], options.pressureDbar ?? 0);
      } catch {
        s = Number.NaN; // above S = 42
      }
      if (Number.isNaN(s)) expect(Number.isNaN(out.salinity[i])).toBe(true);
      else expect(out.salinity[i]).toBeCloseTo(s, 10);
    }
  });

  test("gives NaN, not an exception, for readings the methods cannot handle", () => {
    const c = Float64Array.from([-5, Number.NaN, 400, 400, Number.POSITIVE_INFINITY]);
    const t = Float64Array.from([10, 10, 40, -3, 10]);
    const out = deriveReadings(c, t, { method: { kind: "natural-water" }, tdsFactor: 0.65 });
    for (let i = 0; i < c.length; i++) {
      expect(Number.isNaN(out.specificConductanceUsPerCm[i])).toBe(true);
      expect(Number.isNaN(out.tdsMgPerL[i])).toBe(true);
      expect(Number.isNaN(out.salinity[i])).toBe(true);
    }
  });

  test("a single reading into a preallocated array", () => {
    const out = new Float64Array(6);
    deriveReadingInto(1000, 15, { method: { kind: "natural-water" }, tdsFactor: 0.65 }, out, 3);
    // f25(15.0) = 1.256 (ISO 7888 table): SC = 1256, TDS = 0.65 × 1256 = 816.4
    expect(out[3]).toBeCloseTo(1256, 9);
    expect(out[4]).toBeCloseTo(816.4, 9);
    expect(out[5]).toBeCloseTo(practicalSalinity(1, 15), 12);
    expect(out[0]).toBe(0);
  });

  test("bad options are a RangeError before any reading is touched", () => {
    expect(() => deriveReadings(conductivity, temperature, { method: { kind: "natural-water" }, tdsFactor: 1.5 })).toThrow(RangeError);
    expect(() => deriveReadings(conductivity, temperature, { method: { kind: "linear", alphaPerC: -1 }, tdsFactor: 0.6 })).toThrow(RangeError);
    expect(() =>
      deriveReadings(conductivity, temperature, { method: { kind: "natural-water" }, tdsFactor: 0.6, pressureDbar: -3 }),
    ).toThrow(RangeError);
    expect(() => deriveReadings(conductivity, new Float64Array(3), { method: { kind: "natural-water" }, tdsFactor: 0.6 })).toThrow(RangeError);
  });
});
