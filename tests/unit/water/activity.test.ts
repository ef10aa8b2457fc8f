import { describe, expect, test } from "vitest";
import {
  activityCoefficient,
  debyeHuckelA,
  debyeHuckelATheoretical,
  debyeHuckelB,
  ionicStrength,
  ionicStrengthFromSpecificConductance,
  meanActivityCoefficient,
} from "#app/lib/water/index.ts";

// Mean activity coefficient of NaCl measured at 0.5 mol/kg and 25 °C: 0.681
// (Robinson & Stokes, Electrolyte Solutions, 2nd ed., Appendix 8.10); at 0.1 mol/kg: 0.778
// (same table; from memory).
const NACL_MEASURED_0_5 = 0.681;
const NACL_MEASURED_0_1 = 0.778;

describe("Debye–Hückel A and B", () => {
  test("A(25 °C) ≈ 0.509 for log10, (mol/L)^-1/2 (Robinson & Stokes; from memory)", () => {
    expect(Math.abs(debyeHuckelA(25) - 0.509)).toBeLessThan(0.001);
    expect(debyeHuckelB(25)).toBeCloseTo(0.3281, 4); // Truesdell & Jones (1974) fit; from memory
  });

  test("the linear fit agrees with 1.82483×10⁶ √ρ (εT)^-3/2 (Malmberg & Maryott ε, Tanaka ρ) within 1 % to 45 °C, 1.5 % to 60 °C", () => {
    for (let t = 0; t <= 60; t += 5) {
      const tolerance = t <= 45 ? 0.01 : 0.015;
      expect(Math.abs(debyeHuckelA(t) / debyeHuckelATheoretical(t) - 1)).toBeLessThan(tolerance);
    }
  });

  test("the theoretical A at 0 °C is 0.4918 (Robinson & Stokes Appendix 7.1; from memory)", () => {
    expect(debyeHuckelATheoretical(0)).toBeCloseTo(0.4918, 3);
  });

  test("A rises with temperature (ε T falls)", () => {
    expect(debyeHuckelA(5)).toBeLessThan(debyeHuckelA(25));
    expect(debyeHuckelATheoretical(5)).toBeLessThan(debyeHuckelATheoretical(25));
  });

  test("outside the fitted 0–60 °C: RangeError", () => {
    expect(() => debyeHuckelA(80)).toThrow(RangeError);
    expect(() => debyeHuckelB(-1)).toThrow(RangeError);
  });
});

describe("activity models against measured NaCl (Robinson & Stokes)", () => {
  const beyond = { allowBeyondValidity: true };

  test("at 0.5 mol/kg the Davies equation comes near 0.681 and the limiting law does not (≈ 0.44)", () => {
    const davies = meanActivityCoefficient(1, -1, 0.5, "davies"); // 0.3 I, Davies (1962)
    const davies1938 = meanActivityCoefficient(1, -1, 0.5, "davies", { daviesCoefficient: 0.2 });
    const limiting = meanActivityCoefficient(1, -1, 0.5, "limiting", beyond);
    // Hand: √0.5 = 0.70711; 0.70711/1.70711 = 0.41421;
    // 0.3 I: log γ = −0.50849 × (0.41421 − 0.15) = −0.13435 → γ = 0.734
    // 0.2 I: log γ = −0.50849 × (0.41421 − 0.10) = −0.15977 → γ = 0.692
    // limiting: log γ = −0.50849 × 0.70711 = −0.35956 → γ = 0.437
    expect(davies).toBeCloseTo(0.734, 3);
    expect(davies1938).toBeCloseTo(0.692, 3);
    expect(limiting).toBeCloseTo(0.437, 3);
    expect(Math.abs(davies1938 - NACL_MEASURED_0_5)).toBeLessThan(0.015);
    expect(Math.abs(davies / NACL_MEASURED_0_5 - 1)).toBeLessThan(0.1);
    expect(Math.abs(limiting / NACL_MEASURED_0_5 - 1)).toBeGreaterThan(0.3);
  });

  test("the extended equation with å = 4 Å (Kielland's Na⁺; from memory) lands between the two", () => {
    const extended = meanActivityCoefficient(1, -1, 0.5, "extended", { ionSizeAngstrom: 4, ...beyond });
    // Hand: B å √I = 0.3281 × 4 × 0.70711 = 0.92801; log γ = −0.50849 × 0.70711 / 1.92801 = −0.18649 → 0.651
    expect(extended).toBeCloseTo(0.651, 3);
    const limiting = meanActivityCoefficient(1, -1, 0.5, "limiting", beyond);
    expect(Math.abs(extended - NACL_MEASURED_0_5)).toBeLessThan(Math.abs(limiting - NACL_MEASURED_0_5));
  });

  test("at 0.1 mol/kg Davies is within 0.01 of the measured 0.778", () => {
    expect(Math.abs(meanActivityCoefficient(1, -1, 0.1, "davies") - NACL_MEASURED_0_1)).toBeLessThan(0.01);
  });

  test("single-ion Davies coefficient of Ca²⁺ at I = 0.01, worked by hand", () => {
    // A(25) = 0.4883 + 25 × 8.074e-4 = 0.508485;
    // log γ = −0.508485 × 4 × (0.1/1.1 − 0.3 × 0.01) = −2.03394 × 0.0879091 = −0.178802 → γ = 0.66252
    expect(activityCoefficient(2, 0.01, "davies")).toBeCloseTo(0.66252, 4);
    expect(activityCoefficient(-2, 0.01, "davies")).toBeCloseTo(activityCoefficient(2, 0.01, "davies"), 15);
  });

  test("γ = 1 at zero ionic strength for every model", () => {
    expect(activityCoefficient(1, 0, "limiting")).toBe(1);
    expect(activityCoefficient(3, 0, "extended", { ionSizeAngstrom: 9 })).toBe(1);
    expect(activityCoefficient(2, 0, "davies")).toBe(1);
  });

  test("RangeError beyond the model's usual ionic strength (Stumm & Morgan Table 3.3; from memory) and for bad input", () => {
    expect(() => activityCoefficient(1, 0.01, "limiting")).toThrow(/allowBeyondValidity/);
    expect(() => activityCoefficient(1, 0.2, "extended", { ionSizeAngstrom: 4 })).toThrow(RangeError);
    expect(() => activityCoefficient(1, 0.6, "davies")).toThrow(RangeError);
    expect(() => activityCoefficient(1, 0.05, "extended")).toThrow(/ion size/);
    expect(() => activityCoefficient(1, -0.1, "davies")).toThrow(RangeError);
    expect(() => activityCoefficient(0, 0.01, "davies")).toThrow(RangeError);
    expect(() => activityCoefficient(1, 0.01, "davies", { daviesCoefficient: 0.25 })).toThrow(RangeError);
  });
});

describe("ionic strength", () => {
  test("I = ½ Σ c z²: 0.01 mol/L CaCl₂ → ½ (0.01 × 4 + 0.02 × 1) = 0.03 (definition)", () => {
    expect(ionicStrength([{ charge: 2, molPerL: 0.01 }, { charge: -1, molPerL: 0.02 }])).toBeCloseTo(0.03, 15);
    expect(ionicStrength({ Ca: 0.01, Cl: 0.02 })).toBeCloseTo(0.03, 15);
    expect(ionicStrength({ Na: 0.5, Cl: 0.5 })).toBeCloseTo(0.5, 15);
  });

  test("from SC: I = 1.6×10⁻⁵ × SC (Russell 1976): 500 µS/cm → 0.008 mol/L", () => {
    expect(ionicStrengthFromSpecificConductance(500)).toBeCloseTo(0.008, 15);
    expect(() => ionicStrengthFromSpecificConductance(-1)).toThrow(RangeError);
    expect(() => ionicStrength({ Na: -0.1 })).toThrow(RangeError);
  });
});
