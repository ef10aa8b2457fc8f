// Checks of a laboratory water analysis after Standard Methods for the Examination of
// Water and Wastewater, section 1030 E "Checking analyses' correctness" (and 2510 for
// conductivity). Acceptance ranges as printed there (20th–23rd editions):
//   anion–cation balance by anion sum: 0–3.0 meq/L ±0.2 meq/L; 3.0–10.0 ±2 %; 10–800 ±5 %;
//   measured TDS / calculated TDS 1.0–1.2; calculated EC / measured EC 0.9–1.1;
//   measured (and calculated) TDS / EC 0.55–0.70; 100 × anion (or cation) sum / EC 0.9–1.1.
// Outside a range by no more than 5 % of the bound gives "warn" rather than "fail": that
// band is Ripplemark's convention, not part of Standard Methods.

import { ionData, type IonName } from "./ions.ts";

export type WaterAnalysis = {
  ionsMgPerL: Partial<Record<IonName, number>>;
  measuredEcUsPerCm?: number;
  measuredTdsMgPerL?: number;
  pH?: number;
  silicaMgPerL?: number; // as SiO₂; uncharged, enters only the calculated TDS
};

export type Verdict = "pass" | "warn" | "fail";

export type IonLine = {
  ion: IonName;
  formula: string;
  charge: number;
  mgPerL: number;
  mmolPerL: number;
  meqPerL: number;
  lambdaEqSCm2PerMol: number;
  contributionUsPerCm: number; // λ_eq × meq/L
  fromPH: boolean; // H⁺ / OH⁻ derived from the pH rather than reported
};

export type CalculatedConductivity = {
  method: string;
  ions: IonLine[];
  infiniteDilutionUsPerCm: number; // κ⁰ = Σ λ_eq × meq/L
  ionicStrengthMolPerL: number; // I = ½ Σ c z²
  monovalentActivityCoefficient: number; // Davies y
  calculatedEcUsPerCm: number; // κ⁰ × y²
  warnings: string[];
};

// Above this ionic strength we warn that the calculation loses accuracy. Ripplemark's
// limit (about 3000 µS/cm by I = 1.6×10⁻⁵ SC): the method is written for dilute natural
// waters, treats every ion as free (no CaSO₄⁰, MgSO₄⁰ pairs) and applies one monovalent
// Davies coefficient to all ions.
export const CALCULATED_EC_IONIC_STRENGTH_LIMIT = 0.05;
const CACO3_MG_PER_MEQ = 50.04; // 100.09 g/mol ÷ 2
const KW_25C = 1e-14; // ion product of water at 25 °C

function resolveIons(analysis: WaterAnalysis): IonLine[] {
  const lines: IonLine[] = [];
  const add = (ion: IonName, mgPerL: number, fromPH: boolean) => {
    const data = ionData(ion);
    const mmolPerL = mgPerL / data.molarMassGPerMol;
    const meqPerL = mmolPerL * Math.abs(data.charge);
    lines.push({
      ion,
      formula: data.formula,
      charge: data.charge,
      mgPerL,
      mmolPerL,
      meqPerL,
      lambdaEqSCm2PerMol: data.lambdaEqSCm2PerMol,
      contributionUsPerCm: data.lambdaEqSCm2PerMol * meqPerL,
      fromPH,
    });
  };
  for (const [ion, mgPerL] of Object.entries(analysis.ionsMgPerL)) {
    if (mgPerL === undefined) continue;
    ionData(ion); // RangeError for unknown ions
    if (!Number.isFinite(mgPerL) || mgPerL < 0) {
      throw new RangeError(`${ion}: concentration must be a non-negative number of mg/L, got ${mgPerL}`);
    }
    add(ion as IonName, mgPerL, false);
  }
  const pH = analysis.pH;
  if (pH !== undefined) {
    if (!Number.isFinite(pH) || pH < 0 || pH > 14) throw new RangeError(`pH must be 0–14, got ${pH}`);
    const given = analysis.ionsMgPerL;
    if (given.H === undefined) add("H", 10 ** -pH * ionData("H").molarMassGPerMol * 1000, true);
    if (given.OH === undefined) add("OH", (KW_25C / 10 ** -pH) * ionData("OH").molarMassGPerMol * 1000, true);
  }
  return lines;
}

/**
 * Conductivity calculated from an analysis, Standard Methods 1030 E (and 2510):
 * κ⁰ = Σ λ°_eq,i × meq/Lᵢ (infinite dilution, µS/cm, λ° from the CRC table at 25 °C),
 * I = ½ Σ zᵢ² mmol/Lᵢ / 1000, monovalent Davies coefficient
 * log y = −0.5 (√I/(1 + √I) − 0.3 I), calculated EC = κ⁰ y². H⁺ and OH⁻ are added from
 * the pH when given and not reported. Every step is returned for display, with warnings
 * where the method is out of its depth. RangeError for negative or unknown ions, bad pH.
 */
export function calculatedConductivity(analysis: WaterAnalysis): CalculatedConductivity {
  const ions = resolveIons(analysis);
  let infiniteDilutionUsPerCm = 0;
  let halfSum = 0;
  for (const line of ions) {
    infiniteDilutionUsPerCm += line.contributionUsPerCm;
    halfSum += line.mmolPerL * line.charge * line.charge;
  }
  const ionicStrengthMolPerL = halfSum / 2 / 1000;
  const sqrtI = Math.sqrt(ionicStrengthMolPerL);
  const monovalentActivityCoefficient = 10 ** (-0.5 * (sqrtI / (1 + sqrtI) - 0.3 * ionicStrengthMolPerL));
  const calculatedEcUsPerCm = infiniteDilutionUsPerCm * monovalentActivityCoefficient ** 2;

  const warnings: string[] = [];
  if (!ions.some((l) => l.charge > 0 && !l.fromPH) || !ions.some((l) => l.charge < 0 && !l.fromPH)) {
    warnings.push("The analysis lacks cations or anions, so the calculated conductivity is incomplete.");
  }
  if (ionicStrengthMolPerL > CALCULATED_EC_IONIC_STRENGTH_LIMIT) {
    warnings.push(
      `Ionic strength ${ionicStrengthMolPerL.toFixed(3)} mol/L is above ${CALCULATED_EC_IONIC_STRENGTH_LIMIT} mol/L: ` +
        "this calculation ignores ion pairs and uses one Davies coefficient, so it overestimates EC in such mineralised water.",
    );
  }
  const pH = analysis.pH;
  if (pH !== undefined && pH > 4.5 && analysis.ionsMgPerL.HCO3 === undefined && analysis.ionsMgPerL.CO3 === undefined) {
    warnings.push("No bicarbonate or carbonate is given although the pH is above 4.5: alkalinity is probably missing.");
  }
  return {
    method:
      "Standard Methods 1030 E: κ⁰ = Σ λ°·meq/L; I = ½ Σ c z²; log y = −0.5 (√I/(1+√I) − 0.3 I); EC = κ⁰ y²",
    ions,
    infiniteDilutionUsPerCm,
    ionicStrengthMolPerL,
    monovalentActivityCoefficient,
    calculatedEcUsPerCm,
    warnings,
  };
}

export type IonBalance = {
  cationSumMeqPerL: number;
  anionSumMeqPerL: number;
  differenceMeqPerL: number; // Σcat − Σan
  percentDifference: number; // 100 (Σcat − Σan) / (Σcat + Σan)
  criterion: { anionSumRangeMeqPerL: [number, number]; acceptance: string; limit: number; kind: "meq" | "percent" } | null;
  verdict: Verdict;
  explanation: string;
  source: string;
};

/**
 * Anion–cation balance of Standard Methods 1030 E: sums in meq/L, percent difference
 * 100 (Σcat − Σan)/(Σcat + Σan), acceptance by anion sum (0–3.0 meq/L: ±0.2 meq/L;
 * 3.0–10.0: ±2 %; 10–800: ±5 %). "warn" up to twice the limit (our convention), "fail"
 * beyond; an anion sum above 800 meq/L is outside the table and gives "warn".
 */
export function ionBalance(analysis: WaterAnalysis): IonBalance {
  let cationSumMeqPerL = 0;
  let anionSumMeqPerL = 0;
  for (const line of resolveIons(analysis)) {
    if (line.charge > 0) cationSumMeqPerL += line.meqPerL;
    else anionSumMeqPerL += line.meqPerL;
  }
  const differenceMeqPerL = cationSumMeqPerL - anionSumMeqPerL;
  const total = cationSumMeqPerL + anionSumMeqPerL;
  const percentDifference = total > 0 ? (100 * differenceMeqPerL) / total : 0;
  const source = "Standard Methods 1030 E, anion–cation balance";
  const base = { cationSumMeqPerL, anionSumMeqPerL, differenceMeqPerL, percentDifference, source };

  const a = anionSumMeqPerL;
  const criterion =
    a <= 3.0
      ? { anionSumRangeMeqPerL: [0, 3.0] as [number, number], acceptance: "±0.2 meq/L", limit: 0.2, kind: "meq" as const }
      : a <= 10.0
        ? { anionSumRangeMeqPerL: [3.0, 10.0] as [number, number], acceptance: "±2 %", limit: 2, kind: "percent" as const }
        : a <= 800
          ? { anionSumRangeMeqPerL: [10, 800] as [number, number], acceptance: "±5 %", limit: 5, kind: "percent" as const }
          : null;
  if (total === 0) {
    return { ...base, criterion, verdict: "fail", explanation: "No ions were reported, so there is nothing to balance." };
  }
  if (!criterion) {
    return {
      ...base,
      criterion,
      verdict: "warn",
      explanation: "The anion sum is above 800 meq/L, beyond the Standard Methods table; judge the balance by hand.",
    };
  }
  const value = criterion.kind === "meq" ? Math.abs(differenceMeqPerL) : Math.abs(percentDifference);
  const verdict: Verdict = value <= criterion.limit ? "pass" : value <= 2 * criterion.limit ? "warn" : "fail";
  const explanation =
    verdict === "pass"
      ? `Cation and anion sums agree within ${criterion.acceptance}.`
      : differenceMeqPerL > 0
        ? "Cations exceed anions: an anion is probably missing (often bicarbonate/alkalinity, nitrate or sulfate) or a cation result is too high or in the wrong unit."
        : "Anions exceed cations: a cation is probably missing (often potassium, ammonium, iron or manganese) or an anion is too high or in the wrong unit (alkalinity as CaCO₃ entered as bicarbonate?).";
  return { ...base, criterion, verdict, explanation };
}

export type CheckResult = {
  id: string;
  label: string;
  value: number;
  acceptance: { min: number; max: number };
  verdict: Verdict;
  explanation: string; // what a failure usually means
  source: string;
};

export type SkippedCheck = { id: string; label: string; verdict: "not-run"; reason: string };

const WARN_MARGIN = 0.05; // relative, Ripplemark convention

function ratioCheck(
  id: string,
  label: string,
  value: number,
  min: number,
  max: number,
  explanation: string,
  source = "Standard Methods 1030 E",
): CheckResult {
  const verdict: Verdict =
    value >= min && value <= max
      ? "pass"
      : value >= min * (1 - WARN_MARGIN) && value <= max * (1 + WARN_MARGIN)
        ? "warn"
        : "fail";
  return { id, label, value, acceptance: { min, max }, verdict, explanation, source };
}

function positive(name: string, value: number) {
  if (!Number.isFinite(value) || value <= 0) throw new RangeError(`${name} must be a positive number, got ${value}`);
}

/**
 * Calculated TDS (mg/L) per Standard Methods 1030 E: 0.6 × alkalinity (mg/L as CaCO₃) +
 * the other ions + silica. The 0.6 turns bicarbonate into the carbonate left in the
 * evaporation residue. Alkalinity here is taken from HCO₃⁻ and CO₃²⁻; H⁺/OH⁻ are left out.
 */
export function calculatedTds(analysis: WaterAnalysis): number {
  let sum = 0;
  let alkalinityMeqPerL = 0;
  for (const line of resolveIons(analysis)) {
    if (line.fromPH || line.ion === "H" || line.ion === "OH") continue;
    if (line.ion === "HCO3" || line.ion === "CO3") alkalinityMeqPerL += line.meqPerL;
    else sum += line.mgPerL;
  }
  const silica = analysis.silicaMgPerL ?? 0;
  if (!Number.isFinite(silica) || silica < 0) throw new RangeError(`Silica must be ≥ 0 mg/L, got ${silica}`);
  return sum + 0.6 * alkalinityMeqPerL * CACO3_MG_PER_MEQ + silica;
}

/** Standard Methods 1030 E: measured TDS / calculated TDS within 1.0–1.2. */
export function tdsRatioCheck(measuredTdsMgPerL: number, calculatedTdsMgPerL: number): CheckResult {
  positive("Measured TDS", measuredTdsMgPerL);
  positive("Calculated TDS", calculatedTdsMgPerL);
  return ratioCheck(
    "measured-vs-calculated-tds",
    "Measured TDS ÷ calculated TDS",
    measuredTdsMgPerL / calculatedTdsMgPerL,
    1.0,
    1.2,
    "Below 1.0 the ions add up to more than the residue (an ion too high or in the wrong unit, or samples mixed up); above 1.2 an ion is missing (often silica or organic matter) or the residue was not dried fully.",
  );
}

/** Standard Methods 1030 E: calculated EC / measured EC within 0.9–1.1. */
export function ecRatioCheck(measuredEcUsPerCm: number, calculatedEcUsPerCm: number): CheckResult {
  positive("Measured EC", measuredEcUsPerCm);
  positive("Calculated EC", calculatedEcUsPerCm);
  return ratioCheck(
    "calculated-vs-measured-ec",
    "Calculated EC ÷ measured EC",
    calculatedEcUsPerCm / measuredEcUsPerCm,
    0.9,
    1.1,
    "A mismatch means an ion is missing or entered in the wrong unit, the EC belongs to another sample, or the meter was off calibration.",
  );
}

/** Standard Methods 1030 E: TDS / EC within 0.55–0.70 (measured or calculated TDS). */
export function tdsToEcCheck(tdsMgPerL: number, ecUsPerCm: number, which: "measured" | "calculated" = "measured"): CheckResult {
  positive("TDS", tdsMgPerL);
  positive("EC", ecUsPerCm);
  return ratioCheck(
    `${which}-tds-to-ec`,
    `${which === "measured" ? "Measured" : "Calculated"} TDS ÷ measured EC`,
    tdsMgPerL / ecUsPerCm,
    0.55,
    0.7,
    "An unusual ratio points to an error in the TDS or the EC result (wrong unit, mixed-up sample); sulfate-rich water runs high, water with free acid or caustic runs low.",
  );
}

/** Standard Methods 1030 E: 100 × anion (or cation) sum in meq/L = 0.9–1.1 × EC in µS/cm. */
export function ionSumToEcCheck(sumMeqPerL: number, measuredEcUsPerCm: number, which: "anion" | "cation"): CheckResult {
  if (!Number.isFinite(sumMeqPerL) || sumMeqPerL < 0) throw new RangeError(`Ion sum must be ≥ 0 meq/L, got ${sumMeqPerL}`);
  positive("Measured EC", measuredEcUsPerCm);
  return ratioCheck(
    `${which}-sum-to-ec`,
    `100 × ${which} sum ÷ measured EC`,
    (100 * sumMeqPerL) / measuredEcUsPerCm,
    0.9,
    1.1,
    `The ${which} sum does not match the conductivity: a major ${which} is missing or in the wrong unit, or the EC is from another sample.`,
  );
}

export type LabCheck = {
  calculatedConductivity: CalculatedConductivity;
  calculatedTdsMgPerL: number;
  ionBalance: IonBalance;
  checks: (CheckResult | SkippedCheck)[];
  overall: Verdict;
};

/**
 * All Standard Methods 1030 E checks of an analysis together, for a page: calculated EC
 * (with its steps), anion–cation balance, TDS and EC ratios. A check whose measured input
 * is missing is listed as "not-run". `overall` is the worst verdict among those run.
 */
export function labCheck(analysis: WaterAnalysis): LabCheck {
  const conductivity = calculatedConductivity(analysis);
  const balance = ionBalance(analysis);
  const calcTds = calculatedTds(analysis);
  const checks: (CheckResult | SkippedCheck)[] = [];
  const { measuredEcUsPerCm: ec, measuredTdsMgPerL: tds } = analysis;
  const skip = (id: string, label: string, reason: string): SkippedCheck => ({ id, label, verdict: "not-run", reason });

  checks.push(
    tds !== undefined && calcTds > 0
      ? tdsRatioCheck(tds, calcTds)
      : skip("measured-vs-calculated-tds", "Measured TDS ÷ calculated TDS", "No measured TDS."),
  );
  if (ec !== undefined) {
    checks.push(
      conductivity.calculatedEcUsPerCm > 0
        ? ecRatioCheck(ec, conductivity.calculatedEcUsPerCm)
        : skip("calculated-vs-measured-ec", "Calculated EC ÷ measured EC", "No ions to calculate EC from."),
    );
    checks.push(tds !== undefined ? tdsToEcCheck(tds, ec, "measured") : skip("measured-tds-to-ec", "Measured TDS ÷ measured EC", "No measured TDS."));
    checks.push(calcTds > 0 ? tdsToEcCheck(calcTds, ec, "calculated") : skip("calculated-tds-to-ec", "Calculated TDS ÷ measured EC", "No ions."));
    checks.push(ionSumToEcCheck(balance.anionSumMeqPerL, ec, "anion"));
    checks.push(ionSumToEcCheck(balance.cationSumMeqPerL, ec, "cation"));
  } else {
    for (const [id, label] of [
      ["calculated-vs-measured-ec", "Calculated EC ÷ measured EC"],
      ["measured-tds-to-ec", "Measured TDS ÷ measured EC"],
      ["calculated-tds-to-ec", "Calculated TDS ÷ measured EC"],
      ["anion-sum-to-ec", "100 × anion sum ÷ measured EC"],
      ["cation-sum-to-ec", "100 × cation sum ÷ measured EC"],
    ]) {
      checks.push(skip(id, label, "No measured EC."));
    }
  }
  const rank: Record<Verdict, number> = { pass: 0, warn: 1, fail: 2 };
  let overall: Verdict = balance.verdict;
  for (const check of checks) {
    if (check.verdict !== "not-run" && rank[check.verdict] > rank[overall]) overall = check.verdict;
  }
  return { calculatedConductivity: conductivity, calculatedTdsMgPerL: calcTds, ionBalance: balance, checks, overall };
}

