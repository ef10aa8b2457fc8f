import { describe, expect, test } from "vitest";
import {
  compensationFactor,
  ISO_7888_F25,
  specificConductance,
  specificConductanceInto,
} from "#app/lib/water/index.ts";

// ISO 7888:1985 (EN 27888:1993), table of f25 for natural waters, as printed: row n gives
// f25 at n.0, n.1, n.2, … °C. These are the entries we transcribed from a reproduction of
// the printed table (x.0–x.3 for every row, x.4–x.6 for rows 0–8, and 9.4); the module's
// other entries are filled in and are deliberately not asserted here.
const TRANSCRIBED: [number, number[]][] = [
  [0, [1.918, 1.912, 1.906, 1.899, 1.893, 1.887, 1.881]],
  [1, [1.857, 1.851, 1.845, 1.840, 1.834, 1.829, 1.822]],
  [2, [1.800, 1.794, 1.788, 1.783, 1.777, 1.772, 1.766]],
  [3, [1.745, 1.740, 1.734, 1.729, 1.724, 1.719, 1.713]],
  [4, [1.693, 1.688, 1.683, 1.678, 1.673, 1.668, 1.663]],
  [5, [1.643, 1.638, 1.634, 1.629, 1.624, 1.619, 1.615]],
  [6, [1.596, 1.591, 1.587, 1.582, 1.578, 1.573, 1.569]],
  [7, [1.551, 1.547, 1.542, 1.538, 1.534, 1.529, 1.525]],
  [8, [1.508, 1.504, 1.500, 1.496, 1.491, 1.487, 1.483]],
  [9, [1.467, 1.463, 1.459, 1.455, 1.451]],
  [10, [1.428, 1.424, 1.420, 1.416]],
  [11, [1.390, 1.387, 1.383, 1.379]],
  [12, [1.354, 1.351, 1.347, 1.344]],
  [13, [1.320, 1.317, 1.313, 1.310]],
  [14, [1.287, 1.284, 1.281, 1.278]],
  [15, [1.256, 1.253, 1.249, 1.246]],
  [16, [1.225, 1.222, 1.219, 1.216]],
  [17, [1.196, 1.193, 1.191, 1.188]],
  [18, [1.168, 1.166, 1.163, 1.160]],
  [19, [1.141, 1.139, 1.136, 1.134]],
  [20, [1.116, 1.113, 1.111, 1.108]],
  [21, [1.091, 1.088, 1.086, 1.083]],
  [22, [1.067, 1.064, 1.062, 1.060]],
  [23, [1.044, 1.041, 1.039, 1.037]],
  [24, [1.021, 1.019, 1.017, 1.015]],
  [25, [1.000, 0.998, 0.996, 0.994]],
  [26, [0.979, 0.977, 0.975, 0.973]],
  [27, [0.959, 0.957, 0.955, 0.953]],
  [28, [0.940, 0.938, 0.936, 0.934]],
  [29, [0.921, 0.920, 0.918, 0.916]],
  [30, [0.903, 0.902, 0.900, 0.898]],
  [31, [0.886, 0.884, 0.883, 0.881]],
  [32, [0.869, 0.867, 0.866, 0.864]],
  [33, [0.853, 0.851, 0.850, 0.848]],
  [34, [0.837, 0.835, 0.834, 0.832]],
  [35, [0.822, 0.820, 0.819, 0.817]],
];

const natural = { kind: "natural-water" } as const;

describe("ISO 7888 natural-water compensation", () => {
  test("reproduces every transcribed table entry to its printed 3 decimals", () => {
    let checked = 0;
    for (const [row, values] of TRANSCRIBED) {
      values.forEach((printed, tenth) => {
        const t = row + tenth / 10;
        expect(compensationFactor(t, natural), `f25 at ${t} °C`).toBeCloseTo(printed, 10);
        checked++;
      });
    }
    expect(checked).toBe(172);
  });

  test("f25 is 1.000 at 25 °C (ISO 7888 table, 25.0 °C entry)", () => {
    expect(compensationFactor(25, natural)).toBe(1);
  });

  test("interpolates linearly between tenths (hand computed from ISO 7888 entries)", () => {
    // 10.1 → 1.424, 10.2 → 1.420: halfway is 1.422.
    expect(compensationFactor(10.15, natural)).toBeCloseTo(1.422, 10);
    // 0.0 → 1.918, 0.1 → 1.912: a quarter of the way is 1.918 − 0.25 × 0.006 = 1.9165.
    expect(compensationFactor(0.025, natural)).toBeCloseTo(1.9165, 10);
    // 35.2 → 0.819, 35.3 → 0.817: 35.27 is 0.819 − 0.7 × 0.002 = 0.8176.
    expect(compensationFactor(35.27, natural)).toBeCloseTo(0.8176, 10);
  });

  test("the table is strictly decreasing over its whole range (physical: warmer water conducts more)", () => {
    for (let i = 1; i < ISO_7888_F25.length; i++) expect(ISO_7888_F25[i]).toBeLessThan(ISO_7888_F25[i - 1]);
    expect(ISO_7888_F25.length).toBe(360);
  });

  test("specific conductance multiplies by f25 (ISO 7888: κ25 = f25 × κt)", () => {
    // 312 µS/cm at 8.3 °C, f25(8.3) = 1.496 (printed): 312 × 1.496 = 466.752 µS/cm.
    expect(specificConductance(312, 8.3, natural)).toBeCloseTo(466.752, 9);
  });

  test("refers to 20 °C with f20 = f25 / 1.116 (ISO 7888)", () => {
    // f25(20.0) = 1.116, so f20(20.0) = 1 exactly; f20(10.0) = 1.428 / 1.116 = 1.279570…
    expect(compensationFactor(20, { kind: "natural-water", referenceC: 20 })).toBeCloseTo(1, 12);
    expect(compensationFactor(10, { kind: "natural-water", referenceC: 20 })).toBeCloseTo(1.428 / 1.116, 12);
  });

  test("throws RangeError outside the 0.0–35.9 °C table", () => {
    expect(() => compensationFactor(-0.1, natural)).toThrow(RangeError);
    expect(() => compensationFactor(36, natural)).toThrow(/0.0–35.9/);
    expect(() => compensationFactor(Number.NaN, natural)).toThrow(RangeError);
    expect(() => specificConductance(-5, 12, natural)).toThrow(/non-negative/);
  });
});

describe("linear compensation (Standard Methods 2510 B)", () => {
  test("worked by hand with the default α = 0.0191 /°C", () => {
    // C_t = 800 µS/cm at 12.0 °C: 1 + 0.0191 × (12 − 25) = 1 − 0.2483 = 0.7517;
    // SC = 800 / 0.7517 = 1064.2543…
    expect(specificConductance(800, 12, { kind: "linear" })).toBeCloseTo(800 / 0.7517, 9);
    expect(specificConductance(800, 12, { kind: "linear" })).toBeCloseTo(1064.2543, 3);
  });

  test("worked by hand for a 20 °C reference and a site α", () => {
    // α = 0.02, t = 27.5 °C, t_ref = 20: 1 + 0.02 × 7.5 = 1.15; 1150 / 1.15 = 1000.
    expect(specificConductance(1150, 27.5, { kind: "linear", alphaPerC: 0.02, referenceC: 20 })).toBeCloseTo(1000, 9);
  });

  test("α = 0 means no compensation", () => {
    expect(compensationFactor(3, { kind: "linear", alphaPerC: 0 })).toBe(1);
  });

  test("throws RangeError for unreasonable α, reference or temperature", () => {
    expect(() => compensationFactor(10, { kind: "linear", alphaPerC: -0.01 })).toThrow(RangeError);
    expect(() => compensationFactor(10, { kind: "linear", alphaPerC: 0.5 })).toThrow(RangeError);
    expect(() => compensationFactor(10, { kind: "linear", referenceC: 80 })).toThrow(RangeError);
    expect(() => compensationFactor(150, { kind: "linear" })).toThrow(RangeError);
  });
});

describe("bulk compensation", () => {
  test("matches the scalar functions and writes NaN where the scalar would throw", () => {
    const c = Float64Array.from([500, 500, -1, 500, Number.NaN, 0]);
    const t = Float64Array.from([12.34, 35.9, 10, 36.5, 10, 0]);
    const out = specificConductanceInto(c, t, natural, new Float64Array(6));
    expect(out[0]).toBeCloseTo(specificConductance(500, 12.34, natural), 12);
    expect(out[1]).toBeCloseTo(specificConductance(500, 35.9, natural), 12);
    expect(Number.isNaN(out[2])).toBe(true);
    expect(Number.isNaN(out[3])).toBe(true);
    expect(Number.isNaN(out[4])).toBe(true);
    expect(out[5]).toBe(0);
    const lin = specificConductanceInto(c, t, { kind: "linear", alphaPerC: 0.02 }, new Float64Array(6));
    expect(lin[3]).toBeCloseTo(specificConductance(500, 36.5, { kind: "linear", alphaPerC: 0.02 }), 12);
  });
});
