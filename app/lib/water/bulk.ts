// The ingest path: specific conductance, TDS and practical salinity for many logged
// readings at once, into arrays the caller allocates once. Nothing in here allocates
// per reading or throws per reading; a reading the methods cannot handle gives NaN
// (negative or non-finite conductivity, temperature outside the compensation method's
// range or outside −2…35 °C for salinity, salinity above 42).

import { compensationFactor, compensationFactorOrNaN, specificConductanceInto, type CompensationMethod } from "./compensation.ts";
import { practicalSalinityInto, practicalSalinityOrNaN, PSS78_PRESSURE_RANGE_DBAR } from "./salinity.ts";
import { tdsFactorWarning, tdsInto } from "./tds.ts";

export type DeriveOptions = {
  method: CompensationMethod;
  tdsFactor: number; // mg/L per µS/cm, 0.5–1.0
  pressureDbar?: number; // one sea pressure for all readings, default 0
};

export type DerivedReadings = {
  specificConductanceUsPerCm: Float64Array;
  tdsMgPerL: Float64Array;
  salinity: Float64Array;
};

function checkOptions(options: DeriveOptions) {
  compensationFactor(25, options.method); // RangeError for a bad α or reference
  tdsFactorWarning(options.tdsFactor); // RangeError outside 0.5–1.0
  const p = options.pressureDbar ?? 0;
  if (!(p >= PSS78_PRESSURE_RANGE_DBAR[0] && p <= PSS78_PRESSURE_RANGE_DBAR[1])) {
    throw new RangeError(`Pressure must be 0–10 000 dbar, got ${p}`);
  }
}

/**
 * One reading into out[offset..offset+2] = [SC at the reference temperature (µS/cm),
 * TDS (mg/L), practical salinity]. Compensation per the method (Standard Methods 2510 B
 * linear or ISO 7888 natural water), TDS = factor × SC, salinity by PSS-78 + Hill from the
 * in-situ conductivity. NaN for values the methods cannot handle; RangeError only for
 * bad options. No allocation.
 */
export function deriveReadingInto(
  conductivityUsPerCm: number,
  temperatureC: number,
  options: DeriveOptions,
  out: Float64Array,
  offset = 0,
): Float64Array {
  checkOptions(options);
  const c = conductivityUsPerCm;
  const sc = c >= 0 && c < Infinity ? c * compensationFactorOrNaN(temperatureC, options.method) : NaN;
  out[offset] = sc;
  out[offset + 1] = options.tdsFactor * sc;
  out[offset + 2] = practicalSalinityOrNaN(c, temperatureC, options.pressureDbar ?? 0);
  return out;
}

/**
 * Derive SC, TDS and salinity for parallel arrays of conductivity (µS/cm, in situ) and
 * temperature (ITS-90 °C) into preallocated arrays of the same length; returns `out`.
 * Options are validated once (RangeError); readings the methods cannot handle give NaN.
 */
export function deriveReadingsInto(
  conductivityUsPerCm: Float64Array,
  temperatureC: Float64Array,
  options: DeriveOptions,
  out: DerivedReadings,
): DerivedReadings {
  checkOptions(options);
  specificConductanceInto(conductivityUsPerCm, temperatureC, options.method, out.specificConductanceUsPerCm);
  tdsInto(out.specificConductanceUsPerCm, options.tdsFactor, out.tdsMgPerL);
  practicalSalinityInto(conductivityUsPerCm, temperatureC, out.salinity, options.pressureDbar ?? 0);
  return out;
}

/** As deriveReadingsInto, allocating the three output arrays once. */
export function deriveReadings(
  conductivityUsPerCm: Float64Array,
  temperatureC: Float64Array,
  options: DeriveOptions,
): DerivedReadings {
  const n = conductivityUsPerCm.length;
  return deriveReadingsInto(conductivityUsPerCm, temperatureC, options, {
    specificConductanceUsPerCm: new Float64Array(n),
    tdsMgPerL: new Float64Array(n),
    salinity: new Float64Array(n),
  });
}
