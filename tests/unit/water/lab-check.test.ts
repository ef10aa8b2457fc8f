import { describe, expect, test } from "vitest";
import {
  calculatedConductivity,
  calculatedTds,
  ecRatioCheck,
  ionBalance,
  ionSumToEcCheck,
  labCheck,
  tdsRatioCheck,
  tdsToEcCheck,
  type WaterAnalysis,
} from "#app/lib/water/index.ts";

// An invented hard-water stream sample, worked through Standard Methods 1030 E by hand.
// Molar masses from IUPAC atomic weights; λ° per equivalent from the CRC table (25 °C).
const sample: WaterAnalysis = {
  ionsMgPerL: { Ca: 48.1, Mg: 12.2, Na: 23.0, K: 3.9, HCO3: 152.6, SO4: 48.0, Cl: 35.5, NO3: 6.2 },
  measuredEcUsPerCm: 460,
  measuredTdsMgPerL: 270,
};

// Step 1, mg/L ÷ molar mass = mmol/L; × |z| = meq/L; × λ°_eq = µS/cm:
//   Ca   48.1 / 40.078 = 1.200160 mmol → 2.400319 meq × 59.47 = 142.7470
//   Mg   12.2 / 24.305 = 0.501954      → 1.003909     × 53.0  =  53.2072
//   Na   23.0 / 22.990 = 1.000435      → 1.000435     × 50.08 =  50.1018
//   K     3.9 / 39.098 = 0.099749      → 0.099749     × 73.48 =   7.3296
//   HCO3 152.6 / 61.016 = 2.500983     → 2.500983     × 44.5  = 111.2938
//   SO4  48.0 / 96.056 = 0.499709      → 0.999417     × 80.0  =  79.9534
//   Cl   35.5 / 35.450 = 1.001410      → 1.001410     × 76.31 =  76.4176
//   NO3   6.2 / 62.004 = 0.099994      → 0.099994     × 71.42 =   7.1415
// Step 2, κ⁰ = Σ = 528.1918 µS/cm.
// Step 3, I = ½ Σ c z² = ½ (4×1.200160 + 4×0.501954 + 1.000435 + 0.099749 + 2.500983
//          + 4×0.499709 + 1.001410 + 0.099994) / 1000 = 0.0067549 mol/L.
// Step 4, √I = 0.0821884; log y = −0.5 (0.0821884/1.0821884 − 0.3×0.0067549) = −0.0369601;
//          y = 0.918417, y² = 0.843490.
// Step 5, EC = 528.1918 × 0.843490 = 445.525 µS/cm.
describe("calculated conductivity (Standard Methods 1030 E), worked example", () => {
  const result = calculatedConductivity(sample);

  test("each step matches the hand calculation", () => {
    const line = (ion: string) => result.ions.find((l) => l.ion === ion)!;
    expect(line("Ca").mmolPerL).toBeCloseTo(1.20016, 5);
    expect(line("Ca").meqPerL).toBeCloseTo(2.400319, 5);
    expect(line("Ca").contributionUsPerCm).toBeCloseTo(142.747, 3);
    expect(line("SO4").meqPerL).toBeCloseTo(0.999417, 5);
    expect(line("HCO3").contributionUsPerCm).toBeCloseTo(111.2938, 3);
    expect(result.infiniteDilutionUsPerCm).toBeCloseTo(528.1918, 3);
    expect(result.ionicStrengthMolPerL).toBeCloseTo(0.0067549, 7);
    expect(result.monovalentActivityCoefficient).toBeCloseTo(0.918417, 5);
    expect(result.calculatedEcUsPerCm).toBeCloseTo(445.525, 2);
    expect(result.warnings).toEqual([]);
  });

  test("adds H⁺ and OH⁻ from the pH when they are not reported", () => {
    // pH 4.0: [H⁺] = 1e-4 mol/L = 0.1 meq/L → 349.65 × 0.1 = 34.965 µS/cm more than without pH.
    const acid = calculatedConductivity({ ionsMgPerL: { Na: 23.0, Cl: 35.5 }, pH: 4 });
    const neutral = calculatedConductivity({ ionsMgPerL: { Na: 23.0, Cl: 35.5 } });
    expect(acid.infiniteDilutionUsPerCm - neutral.infiniteDilutionUsPerCm).toBeCloseTo(34.965 + 198 * 1e-7, 6);
    expect(acid.ions.find((l) => l.ion === "H")?.fromPH).toBe(true);
  });

  test("warns when the ionic strength is beyond the method's comfortable range", () => {
    const brine = calculatedConductivity({ ionsMgPerL: { Na: 2299, Cl: 3545 } }); // 0.1 mol/L NaCl
    expect(brine.ionicStrengthMolPerL).toBeCloseTo(0.1, 4);
    expect(brine.warnings.join(" ")).toMatch(/Ionic strength 0.100 mol\/L/);
  });

  test("warns when alkalinity is missing at pH above 4.5", () => {
    const r = calculatedConductivity({ ionsMgPerL: { Ca: 40, Cl: 70 }, pH: 7.4 });
    expect(r.warnings.join(" ")).toMatch(/alkalinity/);
  });

  test("RangeError for negative or unknown ions and impossible pH", () => {
    expect(() => calculatedConductivity({ ionsMgPerL: { Na: -1 } })).toThrow(RangeError);
    expect(() => calculatedConductivity({ ionsMgPerL: { Unobtainium: 1 } as never })).toThrow(/Unknown ion/);
    expect(() => calculatedConductivity({ ionsMgPerL: { Na: 1 }, pH: 15 })).toThrow(RangeError);
  });
});

// Ion balance by hand: Σcat = 2.400319 + 1.003909 + 1.000435 + 0.099749 = 4.504412 meq/L;
// Σan = 2.500983 + 0.999417 + 1.001410 + 0.099994 = 4.601804 meq/L; difference −0.097392;
// percent = 100 × −0.097392 / 9.106216 = −1.0695 %. Anion sum 4.60 is in the 3.0–10.0 band,
// whose acceptance is ±2 % (Standard Methods 1030 E), so it passes.
describe("anion–cation balance (Standard Methods 1030 E)", () => {
  test("the worked example passes the 3.0–10.0 meq/L band (±2 %)", () => {
    const balance = ionBalance(sample);
    expect(balance.cationSumMeqPerL).toBeCloseTo(4.504412, 5);
    expect(balance.anionSumMeqPerL).toBeCloseTo(4.601804, 5);
    expect(balance.percentDifference).toBeCloseTo(-1.0695, 3);
    expect(balance.criterion?.acceptance).toBe("±2 %");
    expect(balance.verdict).toBe("pass");
  });

  test("below 3.0 meq/L the criterion is ±0.2 meq/L absolute", () => {
    // Na 1.5 meq (34.485 mg/L), Cl 1.2 meq (42.54 mg/L): difference 0.3 meq/L > 0.2 but ≤ 0.4 → warn.
    const balance = ionBalance({ ionsMgPerL: { Na: 1.5 * 22.99, Cl: 1.2 * 35.45 } });
    expect(balance.differenceMeqPerL).toBeCloseTo(0.3, 9);
    expect(balance.criterion?.acceptance).toBe("±0.2 meq/L");
    expect(balance.verdict).toBe("warn");
    expect(balance.explanation).toMatch(/anion is probably missing/);
  });

  test("above 10 meq/L the criterion is ±5 %, and a large gap fails", () => {
    // Na 20 meq, Cl 12 meq: (20 − 12)/32 = 25 % → fail; missing cation message for the reverse.
    expect(ionBalance({ ionsMgPerL: { Na: 20 * 22.99, Cl: 12 * 35.45 } }).verdict).toBe("fail");
    const reverse = ionBalance({ ionsMgPerL: { Na: 12 * 22.99, Cl: 20 * 35.45 } });
    expect(reverse.criterion?.acceptance).toBe("±5 %");
    expect(reverse.explanation).toMatch(/cation is probably missing/);
  });
});

// Calculated TDS by hand (Standard Methods 1030 E: 0.6 × alkalinity as CaCO₃ + other ions):
// alkalinity = 2.500983 meq/L × 50.04 = 125.149 mg/L as CaCO₃; 0.6 × 125.149 = 75.0895;
// other ions 48.1 + 12.2 + 23.0 + 3.9 + 48.0 + 35.5 + 6.2 = 176.9; total 251.990 mg/L.
describe("ratio checks (Standard Methods 1030 E acceptance ranges)", () => {
  test("calculated TDS worked by hand", () => {
    expect(calculatedTds(sample)).toBeCloseTo(251.99, 2);
    expect(calculatedTds({ ...sample, silicaMgPerL: 12 })).toBeCloseTo(263.99, 2);
  });

  test("each check's value and verdict for the worked example", () => {
    expect(tdsRatioCheck(270, 251.99).value).toBeCloseTo(1.0715, 4); // 1.0–1.2: pass
    expect(tdsRatioCheck(270, 251.99).verdict).toBe("pass");
    expect(ecRatioCheck(460, 445.525).value).toBeCloseTo(0.96853, 4); // 0.9–1.1: pass
    expect(tdsToEcCheck(270, 460).value).toBeCloseTo(0.58696, 4); // 0.55–0.70: pass
    expect(tdsToEcCheck(251.99, 460, "calculated").verdict).toBe("warn"); // 0.5478: just below 0.55
    expect(ionSumToEcCheck(4.601804, 460, "anion").value).toBeCloseTo(1.00039, 4); // 0.9–1.1: pass
  });

  test("clear failures and what they usually mean", () => {
    const wrongUnit = ecRatioCheck(460, 4455); // a result keyed in ×10
    expect(wrongUnit.verdict).toBe("fail");
    expect(wrongUnit.explanation).toMatch(/wrong unit/);
    expect(tdsRatioCheck(400, 251.99).verdict).toBe("fail");
    expect(tdsRatioCheck(400, 251.99).explanation).toMatch(/missing/);
    expect(() => tdsRatioCheck(0, 250)).toThrow(RangeError);
  });

  test("labCheck gathers everything, marks missing inputs and takes the worst verdict", () => {
    const page = labCheck(sample);
    expect(page.calculatedConductivity.calculatedEcUsPerCm).toBeCloseTo(445.525, 2);
    expect(page.ionBalance.verdict).toBe("pass");
    expect(page.checks).toHaveLength(6);
    expect(page.checks.find((c) => c.id === "calculated-tds-to-ec")?.verdict).toBe("warn");
    expect(page.overall).toBe("warn");

    const noMeasurements = labCheck({ ionsMgPerL: sample.ionsMgPerL });
    expect(noMeasurements.checks.every((c) => c.verdict === "not-run")).toBe(true);
    expect(noMeasurements.overall).toBe("pass");
  });
});
