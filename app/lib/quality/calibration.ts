// What a field visit tells about a continuous conductivity monitor: the fouling error (sensor
// readings before and after cleaning), the calibration drift error (the cleaned sensor in a
// calibration standard), a temperature check against the field meter, and whether each is within
// the calibration criterion. Pure: the visit form computes it live in the browser, the server again
// on save.
//
// Method and criteria: Wagner, R.J., Boulger, R.W., Jr., Oblinger, C.J., and Smith, B.A., 2006,
// Guidelines and standard procedures for continuous water-quality monitors — Station operation,
// record computation, and data reporting: U.S. Geological Survey Techniques and Methods 1-D3
// (TM 1-D3). The criteria below are from its table of calibration criteria for continuous
// water-quality monitor sensors (table 9 in the 2006 edition; table number from memory).
import { cellConstant, kclStandardConductivity, type KclStandard } from "#app/lib/water/kcl-standards.ts";

/**
 * Specific conductance: ±5 µS/cm or ±3 % of the measured value, whichever is greater
 * (TM 1-D3, calibration criteria table; values from memory, checked against the trade's use).
 */
export const SC_CRITERION_US_PER_CM = 5;
export const SC_CRITERION_PERCENT = 3;
/** Temperature: ±0.2 °C (TM 1-D3, calibration criteria table; from memory). */
export const TEMPERATURE_CRITERION_C = 0.2;

/** The allowance (µS/cm) for a reading near `referenceUsPerCm`: the greater of 5 µS/cm and 3 %. */
export function scCriterionUsPerCm(referenceUsPerCm: number): number {
  return Math.max(SC_CRITERION_US_PER_CM, (SC_CRITERION_PERCENT / 100) * Math.abs(referenceUsPerCm));
}

/**
 * Whether an error of `errorUsPerCm` against a reference value is within the criterion. The
 * comparison allows for float noise at the edge (an error of exactly 3 % passes).
 */
export function withinScCriterion(errorUsPerCm: number, referenceUsPerCm: number): boolean {
  return Math.abs(errorUsPerCm) <= scCriterionUsPerCm(referenceUsPerCm) * (1 + 1e-12);
}

export function withinTemperatureCriterion(errorC: number): boolean {
  return Math.abs(errorC) <= TEMPERATURE_CRITERION_C + 1e-9;
}

/** The calibration standards the visit form offers. */
export const STANDARD_CHOICES = ["1413", "12.88", "146.9", "custom"] as const;
export type StandardChoice = (typeof STANDARD_CHOICES)[number];

export const STANDARD_LABELS: Record<StandardChoice, string> = {
  "1413": "KCl 1413 µS/cm (0.01 mol/L)",
  "12.88": "KCl 12.88 mS/cm (0.1 mol/L)",
  "146.9": "KCl 146.9 µS/cm (0.001 mol/L)",
  custom: "Another standard (enter its value)",
};

/** The KCl table (app/lib/water/kcl-standards.ts) covers 0–50 °C. */
export const STANDARD_TEMPERATURE_RANGE_C = [0, 50] as const;

/**
 * The conductivity (µS/cm) the standard should read at its temperature: KCl standards from the
 * NIST/CRC table used by kclStandardConductivity; a custom standard at the value the technician
 * enters, which is its value at the measured temperature (from the bottle's table).
 */
export function expectedStandardUsPerCm(standard: StandardChoice, temperatureC: number, customValueUsPerCm?: number | null): number {
  if (standard === "custom") {
    if (customValueUsPerCm === undefined || customValueUsPerCm === null || !(customValueUsPerCm > 0)) {
      throw new RangeError("A custom standard needs its value in µS/cm");
    }
    return customValueUsPerCm;
  }
  return kclStandardConductivity(standard as KclStandard, temperatureC);
}

export type CalibrationCheckInput = {
  standard: StandardChoice;
  customValueUsPerCm?: number | null;
  temperatureC: number;
  /** The cleaned sensor's conductivity in the standard, at the standard's temperature (µS/cm). */
  sensorUsPerCm: number;
};

export type CalibrationCheckResult = {
  expectedUsPerCm: number;
  /** Drift error = expected − sensor reading (µS/cm): positive when the sensor reads low. */
  errorUsPerCm: number;
  /** The error as a percentage of the expected value. */
  errorPercent: number;
  /** The allowance at this standard (greater of 5 µS/cm and 3 % of the expected value). */
  allowanceUsPerCm: number;
  passed: boolean;
  /** The cell-constant change a recalibration in this standard implies (%), from cellConstant(). */
  cellConstantChangePercent: number;
  /** The correction to apply to recorded values (% of the recorded value) so the sensor reads the standard. */
  correctionPercent: number;
};

/**
 * One calibration check: drift error = expected standard value at its temperature − the cleaned
 * sensor's reading in it (TM 1-D3, "calibration drift error"), judged against the criterion at the
 * expected value, with the cell constant a recalibration would set.
 */
export function calibrationCheck(input: CalibrationCheckInput): CalibrationCheckResult {
  const expectedUsPerCm = expectedStandardUsPerCm(input.standard, input.temperatureC, input.customValueUsPerCm);
  if (!(input.sensorUsPerCm > 0)) throw new RangeError("The sensor reading in the standard must be more than 0 µS/cm");
  const errorUsPerCm = expectedUsPerCm - input.sensorUsPerCm;
  const cell = cellConstant({ standardUsPerCm: expectedUsPerCm, measuredUsPerCm: input.sensorUsPerCm, currentCellConstantPerCm: 1 });
  return {
    expectedUsPerCm,
    errorUsPerCm,
    errorPercent: (100 * errorUsPerCm) / expectedUsPerCm,
    allowanceUsPerCm: scCriterionUsPerCm(expectedUsPerCm),
    passed: withinScCriterion(errorUsPerCm, expectedUsPerCm),
    cellConstantChangePercent: cell.changePercent,
    correctionPercent: correctionPercentFor(errorUsPerCm, input.sensorUsPerCm),
  };
}

/**
 * The percentage of a recorded value that makes it right: a sensor that read `recordedUsPerCm`
 * where the truth was `recordedUsPerCm + errorUsPerCm` needs `100 × error / recorded` % added.
 * (Relative to the recorded value, not the true one, so that applying it to the record gives the
 * true value exactly at the visit.)
 */
export function correctionPercentFor(errorUsPerCm: number, recordedUsPerCm: number): number {
  if (!(recordedUsPerCm > 0)) throw new RangeError("The recorded value must be more than 0 µS/cm");
  return (100 * errorUsPerCm) / recordedUsPerCm;
}

export type SensorReading = { scUsPerCm?: number | null; temperatureC?: number | null };

export type FoulingResult = {
  /** Fouling error = after cleaning − before cleaning (µS/cm): positive when fouling made the sensor read low. */
  errorUsPerCm: number;
  /** The error as a percentage of the reference: the field meter where given, else the cleaned sensor. */
  errorPercent: number;
  referenceUsPerCm: number;
  reference: "field-meter" | "after-cleaning";
  allowanceUsPerCm: number;
  passed: boolean;
  /** The correction to apply to recorded values at the visit (% of the recorded, fouled value). */
  correctionPercent: number;
};

/**
 * Fouling error from the sensor's specific conductance before and after cleaning (TM 1-D3,
 * "fouling error"). The percentage and the criterion are relative to the independent field meter
 * where one was read (it shows what the water really was), otherwise to the cleaned sensor. Null
 * when either sensor reading is missing.
 */
export function foulingError(before: SensorReading, after: SensorReading, meter?: SensorReading | null): FoulingResult | null {
  const b = before.scUsPerCm;
  const a = after.scUsPerCm;
  if (b === undefined || b === null || a === undefined || a === null || !(b > 0) || !(a > 0)) return null;
  const m = meter?.scUsPerCm;
  const useMeter = m !== undefined && m !== null && m > 0;
  const referenceUsPerCm = useMeter ? m : a;
  const errorUsPerCm = a - b;
  return {
    errorUsPerCm,
    errorPercent: (100 * errorUsPerCm) / referenceUsPerCm,
    referenceUsPerCm,
    reference: useMeter ? "field-meter" : "after-cleaning",
    allowanceUsPerCm: scCriterionUsPerCm(referenceUsPerCm),
    passed: withinScCriterion(errorUsPerCm, referenceUsPerCm),
    correctionPercent: correctionPercentFor(errorUsPerCm, b),
  };
}

export type TemperatureResult = { errorC: number; passed: boolean };

/** The cleaned sensor's temperature against the field meter's: within ±0.2 °C passes. */
export function temperatureCheck(after: SensorReading, meter?: SensorReading | null): TemperatureResult | null {
  const s = after.temperatureC;
  const m = meter?.temperatureC;
  if (s === undefined || s === null || m === undefined || m === null || !Number.isFinite(s) || !Number.isFinite(m)) return null;
  const errorC = m - s;
  return { errorC, passed: withinTemperatureCriterion(errorC) };
}

export type VisitReadings = {
  before: SensorReading;
  after: SensorReading;
  meter?: SensorReading | null;
  checks: CalibrationCheckInput[];
};

export type VisitAssessment = {
  fouling: FoulingResult | null;
  temperature: TemperatureResult | null;
  checks: (CalibrationCheckResult | null)[];
  /** The check whose standard is nearest the water (by ratio), used for the drift correction. */
  driftCheckIndex: number | null;
  /** Every computed test passed (null when nothing could be computed yet). */
  passed: boolean | null;
};

/** Every test a visit's numbers allow; a check that cannot be computed yet is null. */
export function assessVisit(v: VisitReadings): VisitAssessment {
  const fouling = foulingError(v.before, v.after, v.meter);
  const temperature = temperatureCheck(v.after, v.meter);
  const checks = v.checks.map((c) => {
    try {
      return calibrationCheck(c);
    } catch {
      return null;
    }
  });
  const water = v.meter?.scUsPerCm ?? v.after.scUsPerCm ?? v.before.scUsPerCm ?? null;
  const driftCheckIndex = nearestCheck(checks, water);
  const verdicts = [fouling?.passed, temperature?.passed, ...checks.map((c) => c?.passed)].filter((x): x is boolean => x !== undefined);
  return { fouling, temperature, checks, driftCheckIndex, passed: verdicts.length ? verdicts.every(Boolean) : null };
}

/**
 * The check to base a drift correction on: the standard closest to the water's conductivity by
 * ratio (a 1413 standard speaks for 600 µS/cm water better than a 12.88 mS/cm one), or the first
 * computed check when the water's value is unknown.
 */
export function nearestCheck(checks: readonly (CalibrationCheckResult | null)[], waterUsPerCm: number | null): number | null {
  let best: number | null = null;
  let bestDistance = Infinity;
  checks.forEach((c, i) => {
    if (!c) return;
    const distance = waterUsPerCm && waterUsPerCm > 0 ? Math.abs(Math.log(c.expectedUsPerCm / waterUsPerCm)) : i;
    if (distance < bestDistance) {
      best = i;
      bestDistance = distance;
    }
  });
  return best;
}
