import { describe, expect, test } from "vitest";
import {
  compensationFactor,
  conductivityRatioFromSalinity,
  estimateTds,
  practicalSalinity,
  salinityFromConductivityRatio,
  tdsMgPerL,
  type CompensationMethod,
} from "#app/lib/water/index.ts";

// Property tests with a seeded PRNG (mulberry32, a public-domain 32-bit generator), so
// every run draws the same cases and a failure can be replayed.
function mulberry32(seed: number) {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

const CASES = 2000;

describe("compensation properties", () => {
  test("the factor is exactly 1 at the reference temperature (both methods; definition of the reference)", () => {
    const random = mulberry32(1);
    expect(compensationFactor(25, { kind: "natural-water" })).toBe(1);
    expect(compensationFactor(20, { kind: "natural-water", referenceC: 20 })).toBe(1);
    for (let i = 0; i < CASES; i++) {
      const alphaPerC = random() * 0.05;
      const referenceC = random() < 0.5 ? 20 : 25;
      expect(compensationFactor(referenceC, { kind: "linear", alphaPerC, referenceC })).toBe(1);
    }
  });

  test("the factor falls as temperature rises (conductivity rises with temperature)", () => {
    const random = mulberry32(2);
    const methods: CompensationMethod[] = [{ kind: "natural-water" }, { kind: "linear" }, { kind: "linear", alphaPerC: 0.025 }];
    for (let i = 0; i < CASES; i++) {
      const method = methods[i % methods.length];
      const a = random() * 35.9;
      const b = random() * 35.9;
      if (a === b) continue;
      const [cold, warm] = a < b ? [a, b] : [b, a];
      expect(compensationFactor(cold, method)).toBeGreaterThan(compensationFactor(warm, method));
    }
  });
});

describe("salinity properties", () => {
  test("S → R → S round-trips to 1e-6 over 0–42, −2…35 °C, 0–10 000 dbar", () => {
    const random = mulberry32(3);
    for (let i = 0; i < CASES; i++) {
      // Half the cases in the fresh/brackish range where the Hill branch applies.
      const s = i % 2 === 0 ? random() * 2 : random() * 42;
      const t = -2 + random() * 37;
      const p = random() < 0.5 ? 0 : random() * 10_000;
      const r = conductivityRatioFromSalinity(s, t, p);
      expect(Math.abs(salinityFromConductivityRatio(r, t, p) - s), `S=${s} t=${t} p=${p}`).toBeLessThan(1e-6);
    }
  });

  test("R → S → R round-trips too, and S grows with conductivity", () => {
    const random = mulberry32(4);
    for (let i = 0; i < CASES; i++) {
      const t = -2 + random() * 37;
      const r = random() * 0.7; // R = 0.7 stays below S = 42 even at −2 °C
      const s = salinityFromConductivityRatio(r, t, 0);
      expect(Math.abs(conductivityRatioFromSalinity(s, t, 0) - r)).toBeLessThan(1e-9);
      expect(practicalSalinity(42.914 * r * 1.001, t)).toBeGreaterThan(s);
    }
  });
});

describe("TDS properties", () => {
  test("TDS scales linearly with SC and with the factor", () => {
    const random = mulberry32(5);
    for (let i = 0; i < CASES; i++) {
      const sc = random() * 5000;
      const k = 0.5 + random() * 0.5;
      const scale = random() * 10;
      expect(tdsMgPerL(sc * scale, k)).toBeCloseTo(scale * tdsMgPerL(sc, k), 8);
      expect(tdsMgPerL(sc + 100, k) - tdsMgPerL(sc, k)).toBeCloseTo(100 * k, 8);
      expect(estimateTds(sc, k).tdsMgPerL).toBe(tdsMgPerL(sc, k));
    }
  });
});
