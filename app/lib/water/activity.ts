import { ionData, type IonName } from "./ions.ts";

export type ActivityModel = "limiting" | "extended" | "davies";

export type ActivityOptions = {
  temperatureC?: number; // default 25 °C
  ionSizeAngstrom?: number; // å, required by "extended"
  daviesCoefficient?: number; // 0.3 (Davies 1962, default) or 0.2 (Davies 1938)
  allowBeyondValidity?: boolean; // compute past the model's ionic-strength limit
};

// Upper ionic strength (mol/L) at which each model is normally used, after Stumm &
// Morgan, Aquatic Chemistry, 3rd ed. (1996), Table 3.3 (from memory): limiting law
// I < 10^-2.3, extended Debye–Hückel I < 10^-1, Davies I < 0.5.
export const ACTIVITY_MODEL_LIMIT_MOL_PER_L: Record<ActivityModel, number> = {
  limiting: 0.005,
  extended: 0.1,
  davies: 0.5,
};

export const DEBYE_HUCKEL_TEMPERATURE_RANGE_C = [0, 60] as const;

function checkTemperature(temperatureC: number) {
  const [lo, hi] = DEBYE_HUCKEL_TEMPERATURE_RANGE_C;
  if (!Number.isFinite(temperatureC) || temperatureC < lo || temperatureC > hi) {
    throw new RangeError(`Debye–Hückel A and B are fitted for ${lo}–${hi} °C; got ${temperatureC} °C`);
  }
}

/**
 * Debye–Hückel A (for log10 γ, (mol/kg)^-1/2 ≈ (mol/L)^-1/2 in dilute water) as a linear
 * fit in temperature, A = 0.4883 + 8.074×10⁻⁴ t (t in °C, 0–60 °C), after Truesdell & Jones
 * (1974) fitting Manov et al. (1943); A(25 °C) = 0.5085 (coefficients from memory).
 */
export function debyeHuckelA(temperatureC: number): number {
  checkTemperature(temperatureC);
  return 0.4883 + 8.074e-4 * temperatureC;
}

/**
 * Debye–Hückel B in Å⁻¹ (mol/kg)^-1/2, B = 0.3241 + 1.600×10⁻⁴ t (0–60 °C), same fit as
 * debyeHuckelA (Truesdell & Jones 1974; from memory); B(25 °C) = 0.3281.
 */
export function debyeHuckelB(temperatureC: number): number {
  checkTemperature(temperatureC);
  return 0.3241 + 1.6e-4 * temperatureC;
}

/**
 * Theoretical A = 1.82483×10⁶ √ρ (εT)^(-3/2) (molal scale, ρ in kg/L) with the relative
 * permittivity of water of Malmberg & Maryott (1956), J. Res. NBS 56, 1:
 * ε = 87.740 − 0.40008 t + 9.398×10⁻⁴ t² − 1.410×10⁻⁶ t³, and the density of air-free water
 * of Tanaka et al. (2001), Metrologia 38, 301 (coefficients from memory). Kept as an
 * independent cross-check of the fit in debyeHuckelA.
 */
export function debyeHuckelATheoretical(temperatureC: number): number {
  checkTemperature(temperatureC);
  const t = temperatureC;
  const epsilon = 87.74 - 0.40008 * t + 9.398e-4 * t * t - 1.41e-6 * t * t * t;
  const densityKgPerL =
    0.99997495 * (1 - ((t - 3.983035) ** 2 * (t + 301.797)) / (522528.9 * (t + 69.34881)));
  return 1.82483e6 * Math.sqrt(densityKgPerL) * Math.pow(epsilon * (t + 273.15), -1.5);
}

// log10 γ for one unit of z² (so that log γ(z) = z² × this, and log γ± = |z₊z₋| × this).
function logGammaPerZ2(ionicStrength: number, model: ActivityModel, options: ActivityOptions): number {
  const temperatureC = options.temperatureC ?? 25;
  const a = debyeHuckelA(temperatureC);
  const sqrtI = Math.sqrt(ionicStrength);
  if (model === "limiting") return -a * sqrtI;
  if (model === "extended") {
    const size = options.ionSizeAngstrom;
    if (size === undefined || !Number.isFinite(size) || size <= 0 || size > 15) {
      throw new RangeError(`The extended Debye–Hückel equation needs an ion size å of 0–15 Å, got ${size}`);
    }
    return (-a * sqrtI) / (1 + debyeHuckelB(temperatureC) * size * sqrtI);
  }
  if (model === "davies") {
    const c = options.daviesCoefficient ?? 0.3;
    if (c !== 0.3 && c !== 0.2) throw new RangeError(`Davies coefficient is 0.3 (1962) or 0.2 (1938), got ${c}`);
    return -a * (sqrtI / (1 + sqrtI) - c * ionicStrength);
  }
  throw new RangeError(`Unknown activity model "${model as string}"`);
}

function checkIonicStrength(ionicStrength: number, model: ActivityModel, options: ActivityOptions) {
  if (!Number.isFinite(ionicStrength) || ionicStrength < 0) {
    throw new RangeError(`Ionic strength must be ≥ 0 mol/L, got ${ionicStrength}`);
  }
  const limit = ACTIVITY_MODEL_LIMIT_MOL_PER_L[model];
  if (limit === undefined) throw new RangeError(`Unknown activity model "${model as string}"`);
  if (ionicStrength > limit && !options.allowBeyondValidity) {
    throw new RangeError(
      `The ${model} model is used up to I = ${limit} mol/L; got ${ionicStrength} (pass allowBeyondValidity to extrapolate)`,
    );
  }
}

/**
 * Single-ion activity coefficient γ (molar scale) of an ion of charge z:
 * limiting law log γ = −A z² √I (Debye & Hückel 1923);
 * extended log γ = −A z² √I / (1 + B å √I);
 * Davies (1962) log γ = −A z² (√I/(1 + √I) − 0.3 I) (0.2 I in Davies 1938).
 * A(T), B(T) from debyeHuckelA/B. RangeError for I < 0, I above the model's usual limit
 * (ACTIVITY_MODEL_LIMIT_MOL_PER_L) unless allowBeyondValidity, or a missing ion size.
 */
export function activityCoefficient(
  charge: number,
  ionicStrength: number,
  model: ActivityModel,
  options: ActivityOptions = {},
): number {
  if (!Number.isInteger(charge) || charge === 0 || Math.abs(charge) > 4) {
    throw new RangeError(`Ion charge must be a non-zero integer up to ±4, got ${charge}`);
  }
  checkIonicStrength(ionicStrength, model, options);
  return Math.pow(10, charge * charge * logGammaPerZ2(ionicStrength, model, options));
}

/**
 * Mean activity coefficient γ± of a salt with ion charges z₊, z₋: log γ± = |z₊z₋| × (the
 * per-unit-charge term of the chosen model), as in Robinson & Stokes, Electrolyte
 * Solutions, ch. 9. Same checks as activityCoefficient; å is the mean ion size.
 */
export function meanActivityCoefficient(
  cationCharge: number,
  anionCharge: number,
  ionicStrength: number,
  model: ActivityModel,
  options: ActivityOptions = {},
): number {
  if (!Number.isInteger(cationCharge) || cationCharge <= 0 || !Number.isInteger(anionCharge) || anionCharge >= 0) {
    throw new RangeError(`Need a positive cation charge and a negative anion charge, got ${cationCharge}, ${anionCharge}`);
  }
  checkIonicStrength(ionicStrength, model, options);
  return Math.pow(10, Math.abs(cationCharge * anionCharge) * logGammaPerZ2(ionicStrength, model, options));
}

export type IonAmount = { charge: number; molPerL: number };

/**
 * Ionic strength I = ½ Σ cᵢ zᵢ² (mol/L), from a list of { charge, molPerL } or a record
 * ion → mol/L. RangeError for negative concentrations or unknown ions.
 */
export function ionicStrength(ions: readonly IonAmount[] | Partial<Record<IonName, number>>): number {
  let sum = 0;
  const add = (charge: number, molPerL: number, label: string) => {
    if (!Number.isFinite(molPerL) || molPerL < 0) throw new RangeError(`${label}: concentration must be ≥ 0 mol/L, got ${molPerL}`);
    if (!Number.isFinite(charge)) throw new RangeError(`${label}: charge must be a number`);
    sum += molPerL * charge * charge;
  };
  if (Array.isArray(ions)) {
    (ions as readonly IonAmount[]).forEach((ion, i) => add(ion.charge, ion.molPerL, `ion ${i}`));
  } else {
    for (const [ion, molPerL] of Object.entries(ions)) {
      if (molPerL !== undefined) add(ionData(ion).charge, molPerL as number, ion);
    }
  }
  return sum / 2;
}

/**
 * Ionic strength estimated from specific conductance, I (mol/L) = 1.6×10⁻⁵ × SC (µS/cm)
 * (Russell 1976, as quoted in geochemistry texts; from memory). An estimate for natural fresh waters. RangeError for SC < 0.
 */
export function ionicStrengthFromSpecificConductance(specificConductanceUsPerCm: number): number {
  if (!Number.isFinite(specificConductanceUsPerCm) || specificConductanceUsPerCm < 0) {
    throw new RangeError(`Specific conductance must be ≥ 0 µS/cm, got ${specificConductanceUsPerCm}`);
  }
  return 1.6e-5 * specificConductanceUsPerCm;
}
