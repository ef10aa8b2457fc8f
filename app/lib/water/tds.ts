// Total dissolved solids estimated from specific conductance.
//
// TDS (mg/L) = k × SC25 (µS/cm). Standard Methods 1030 E gives 0.55–0.70 as the usual
// TDS/EC ratio of natural waters; waters high in sulfate or non-ionic solids run higher.
// We accept k in 0.5–1.0 and flag values outside 0.55–0.75 (0.75 rather than 0.70
// because many agencies use 0.64–0.75 as their site factor: common practice).

export const TDS_FACTOR_RANGE = [0.5, 1.0] as const;
export const TDS_FACTOR_TYPICAL_RANGE = [0.55, 0.75] as const;

export type TdsEstimate = { tdsMgPerL: number; factor: number; warning?: string };

function checkFactor(factor: number) {
  const [lo, hi] = TDS_FACTOR_RANGE;
  if (!Number.isFinite(factor) || factor < lo || factor > hi) {
    throw new RangeError(`TDS factor must be between ${lo} and ${hi}, got ${factor}`);
  }
}

/**
 * A warning for a TDS factor outside the typical 0.55–0.75 (Standard Methods 1030 E
 * ratio 0.55–0.7; 0.75 common practice), or undefined. RangeError outside 0.5–1.0.
 */
export function tdsFactorWarning(factor: number): string | undefined {
  checkFactor(factor);
  const [lo, hi] = TDS_FACTOR_TYPICAL_RANGE;
  if (factor < lo || factor > hi) {
    return `TDS factor ${factor} is outside the usual ${lo}–${hi} for natural waters; use it only if it was determined for this site`;
  }
  return undefined;
}

/**
 * TDS (mg/L) = factor × SC25 (µS/cm), the conductivity estimate of Standard Methods
 * 1030 E / 2540. RangeError for negative SC or a factor outside 0.5–1.0; a warning in
 * the result for a factor outside 0.55–0.75.
 */
export function estimateTds(specificConductanceUsPerCm: number, factor: number): TdsEstimate {
  if (!Number.isFinite(specificConductanceUsPerCm) || specificConductanceUsPerCm < 0) {
    throw new RangeError(`Specific conductance must be a non-negative number of µS/cm, got ${specificConductanceUsPerCm}`);
  }
  const warning = tdsFactorWarning(factor);
  const tdsMgPerL = factor * specificConductanceUsPerCm;
  return warning ? { tdsMgPerL, factor, warning } : { tdsMgPerL, factor };
}

/** Plain numeric TDS (mg/L) = factor × SC25, same checks as estimateTds, no object. */
export function tdsMgPerL(specificConductanceUsPerCm: number, factor: number): number {
  if (!Number.isFinite(specificConductanceUsPerCm) || specificConductanceUsPerCm < 0) {
    throw new RangeError(`Specific conductance must be a non-negative number of µS/cm, got ${specificConductanceUsPerCm}`);
  }
  checkFactor(factor);
  return factor * specificConductanceUsPerCm;
}

/**
 * Bulk TDS for ingest: out[k] = factor × sc[k]; NaN where sc[k] is negative or not a
 * number. The factor is checked once (RangeError). No allocation, no throw in the loop.
 */
export function tdsInto(specificConductanceUsPerCm: Float64Array, factor: number, out: Float64Array): Float64Array {
  checkFactor(factor);
  const n = specificConductanceUsPerCm.length;
  if (out.length < n) throw new RangeError("output array is shorter than the input");
  for (let k = 0; k < n; k++) {
    const sc = specificConductanceUsPerCm[k];
    out[k] = sc >= 0 ? factor * sc : NaN;
  }
  return out;
}
