import { describe, expect, test } from "vitest";
import {
  FARADAY_C_PER_MOL,
  ionMobility,
  ionMolarConductivity,
  limitingMolarConductivity,
  mgPerLToMeqPerL,
  mgPerLToMmolPerL,
  molarConductivity,
  sCm2ToSM2,
  transferNumbers,
} from "#app/lib/water/index.ts";

describe("Kohlrausch's law with the CRC ion table (25 °C)", () => {
  test("Λ°(NaCl) ≈ 126.4 S cm²/mol = 12.64 mS m²/mol (CRC: Na⁺ 50.08 + Cl⁻ 76.31; textbook value)", () => {
    const lambda = limitingMolarConductivity({ Na: 1, Cl: 1 });
    expect(lambda).toBeCloseTo(126.39, 10);
    expect(lambda).toBeCloseTo(126.4, 1);
    expect(sCm2ToSM2(lambda) * 1000).toBeCloseTo(12.64, 2); // mS m²/mol
  });

  test("Λ°(KCl) ≈ 149.9 S cm²/mol (Standard Methods Table 2510:I, infinite dilution; from memory)", () => {
    expect(limitingMolarConductivity({ K: 1, Cl: 1 })).toBeCloseTo(149.9, 0);
  });

  test("per mole vs per equivalent: Ca²⁺ 118.94 S cm²/mol = 2 × ½Ca²⁺ 59.47 (CRC table)", () => {
    expect(ionMolarConductivity("Ca")).toBeCloseTo(118.94, 10);
    expect(ionMolarConductivity("Ca")).toBeCloseTo(119.0, 0);
    // CaCl₂: 118.94 + 2 × 76.31 = 271.56
    expect(limitingMolarConductivity({ Ca: 1, Cl: 2 })).toBeCloseTo(271.56, 10);
  });

  test("transfer number of Cl⁻ in NaCl ≈ 0.60 (common practice; 76.31 / 126.39 = 0.6038)", () => {
    const t = transferNumbers("Na", "Cl");
    expect(t.anion).toBeCloseTo(0.6038, 4);
    expect(t.anion).toBeCloseTo(0.6, 1);
    expect(t.cation + t.anion).toBeCloseTo(1, 12);
  });

  test("mobilities u = λ/(|z|F): Na⁺ ≈ 5.19×10⁻⁸, Cl⁻ ≈ 7.91×10⁻⁸ m² V⁻¹ s⁻¹ (F = 96 485.332 C/mol)", () => {
    expect(FARADAY_C_PER_MOL).toBeCloseTo(96485.332, 3);
    expect(ionMobility("Na").m2PerVoltSecond).toBeCloseTo(5.19e-8, 10);
    expect(ionMobility("Cl").m2PerVoltSecond).toBeCloseTo(7.91e-8, 10);
    // per mole of Ca²⁺: 118.94 / (2 F) = 59.47 / F = 6.164e-4 cm² V⁻¹ s⁻¹
    expect(ionMobility("Ca").cm2PerVoltSecond).toBeCloseTo(59.47 / 96485.33212, 12);
  });

  test("molar conductivity Λ = κ/c: 0.01 mol/L KCl at 1413 µS/cm → 141.3 S cm²/mol (Standard Methods Table 2510:I lists 141.2; from memory)", () => {
    expect(molarConductivity(1413, 0.01)).toBeCloseTo(141.3, 10);
  });

  test("mg/L → mmol/L and meq/L with IUPAC atomic weights", () => {
    expect(mgPerLToMmolPerL("Ca", 40.078)).toBeCloseTo(1, 12); // Ca 40.078
    expect(mgPerLToMeqPerL("Ca", 40.078)).toBeCloseTo(2, 12);
    expect(mgPerLToMmolPerL("HCO3", 61.016)).toBeCloseTo(1, 12); // 1.008 + 12.011 + 3 × 15.999
    expect(mgPerLToMeqPerL("SO4", 96.056)).toBeCloseTo(2, 12); // 32.06 + 4 × 15.999
  });

  test("throws RangeError for unknown ions, negative amounts and swapped ions", () => {
    expect(() => limitingMolarConductivity({ Xx: 1 } as never)).toThrow(/Unknown ion/);
    expect(() => limitingMolarConductivity({ Na: -1 })).toThrow(RangeError);
    expect(() => transferNumbers("Cl", "Na")).toThrow(/not a cation/);
    expect(() => molarConductivity(100, 0)).toThrow(RangeError);
    expect(() => mgPerLToMmolPerL("Na", -2)).toThrow(RangeError);
  });
});
