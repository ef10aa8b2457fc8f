import {
  ISO_7888_F25,
  ISO_7888_F25_AT_20C,
  ISO_7888_F25_TABLE_END_C,
  ISO_7888_F25_TABLE_START_C,
} from "./iso7888-table.ts";

/**
 * How conductivity measured at temperature t is brought to a reference temperature.
 * - linear: Standard Methods 2510 B, C_ref = C_t / (1 + α (t − t_ref)); α defaults to
 *   0.0191 /°C (the KCl value Standard Methods gives), t_ref to 25 °C (20 °C for sites
 *   that report at 20 °C).
 * - natural-water: the non-linear f25 table of ISO 7888:1985 / EN 27888 for natural
 *   waters (0.0–35.9 °C); to 20 °C with f20 = f25 / 1.116 as that standard does.
 */
export type CompensationMethod =
  | { kind: "linear"; alphaPerC?: number; referenceC?: number }
  | { kind: "natural-water"; referenceC?: 20 | 25 };

export const DEFAULT_ALPHA_PER_C = 0.0191;
export const LINEAR_TEMPERATURE_RANGE_C = [-5, 100] as const;
const MAX_ALPHA_PER_C = 0.1;

/**
 * f25 from the ISO 7888:1985 table, interpolated linearly between tenths of a degree.
 * No checks: the caller guarantees 0 ≤ t ≤ 35.9 (hot path for bulk use).
 */
export function iso7888F25Unchecked(temperatureC: number): number {
  const x = temperatureC * 10;
  const i = Math.floor(x);
  if (i >= 359) return ISO_7888_F25[359];
  const lo = ISO_7888_F25[i];
  return lo + (x - i) * (ISO_7888_F25[i + 1] - lo);
}

function checkTemperature(temperatureC: number) {
  if (!Number.isFinite(temperatureC)) {
    throw new RangeError(`Temperature must be a finite number of °C, got ${temperatureC}`);
  }
}

/**
 * Temperature compensation factor f with C_ref = f × C_t.
 * linear (Standard Methods 2510 B): f = 1 / (1 + α (t − t_ref)).
 * natural-water (ISO 7888:1985 table, linear between tenths): f = f25(t), or f25(t)/1.116
 * for a 20 °C reference. RangeError outside the table (0.0–35.9 °C) or, for linear,
 * outside −5…100 °C, α outside 0…0.1 /°C, or a non-positive denominator.
 */
export function compensationFactor(temperatureC: number, method: CompensationMethod): number {
  checkTemperature(temperatureC);
  if (method.kind === "natural-water") {
    if (temperatureC < ISO_7888_F25_TABLE_START_C || temperatureC > ISO_7888_F25_TABLE_END_C) {
      throw new RangeError(
        `ISO 7888 natural-water compensation is tabulated for 0.0–35.9 °C only; got ${temperatureC} °C`,
      );
    }
    const referenceC = method.referenceC ?? 25;
    if (referenceC !== 25 && referenceC !== 20) {
      throw new RangeError(`ISO 7888 compensation refers to 25 °C or 20 °C, not ${referenceC} °C`);
    }
    const f25 = iso7888F25Unchecked(temperatureC);
    return referenceC === 25 ? f25 : f25 / ISO_7888_F25_AT_20C;
  }
  if (method.kind === "linear") {
    const alpha = method.alphaPerC ?? DEFAULT_ALPHA_PER_C;
    const referenceC = method.referenceC ?? 25;
    if (!Number.isFinite(alpha) || alpha < 0 || alpha > MAX_ALPHA_PER_C) {
      throw new RangeError(`Linear compensation coefficient must be 0–${MAX_ALPHA_PER_C} per °C, got ${alpha}`);
    }
    if (!Number.isFinite(referenceC) || referenceC < 0 || referenceC > 50) {
      throw new RangeError(`Reference temperature must be 0–50 °C, got ${referenceC}`);
    }
    const [lo, hi] = LINEAR_TEMPERATURE_RANGE_C;
    if (temperatureC < lo || temperatureC > hi) {
      throw new RangeError(`Linear compensation is accepted for ${lo}–${hi} °C; got ${temperatureC} °C`);
    }
    const denominator = 1 + alpha * (temperatureC - referenceC);
    if (denominator <= 0.05) {
      throw new RangeError(`α = ${alpha} /°C at ${temperatureC} °C gives a meaningless factor`);
    }
    return 1 / denominator;
  }
  throw new RangeError(`Unknown compensation method ${(method as { kind: string }).kind}`);
}

/**
 * Conductivity at the reference temperature (specific conductance when it is 25 °C):
 * SC = f × C_t with f from compensationFactor (Standard Methods 2510 B linear, or the
 * ISO 7888:1985 natural-water table). RangeError for negative conductivity and for
 * temperatures outside the method's range.
 */
export function specificConductance(
  conductivityUsPerCm: number,
  temperatureC: number,
  method: CompensationMethod,
): number {
  if (!Number.isFinite(conductivityUsPerCm) || conductivityUsPerCm < 0) {
    throw new RangeError(`Conductivity must be a non-negative number of µS/cm, got ${conductivityUsPerCm}`);
  }
  return conductivityUsPerCm * compensationFactor(temperatureC, method);
}

/**
 * Compensation factor for bulk paths: as compensationFactor, but returns NaN instead of
 * throwing when the temperature is outside the method's range. The method's α and
 * reference are not checked here: validate the method once with compensationFactor.
 */
export function compensationFactorOrNaN(temperatureC: number, method: CompensationMethod): number {
  const t = temperatureC;
  if (method.kind === "natural-water") {
    if (!(t >= 0 && t <= 35.9)) return NaN;
    const x = t * 10;
    let i = Math.floor(x);
    let frac = x - i;
    if (i >= 359) {
      i = 358;
      frac = 1;
    }
    const lo = ISO_7888_F25[i];
    const f25 = lo + frac * (ISO_7888_F25[i + 1] - lo);
    return method.referenceC === 20 ? f25 / ISO_7888_F25_AT_20C : f25;
  }
  const denominator = 1 + (method.alphaPerC ?? DEFAULT_ALPHA_PER_C) * (t - (method.referenceC ?? 25));
  return t >= LINEAR_TEMPERATURE_RANGE_C[0] && t <= LINEAR_TEMPERATURE_RANGE_C[1] && denominator > 0.05
    ? 1 / denominator
    : NaN;
}

/**
 * Bulk form of specificConductance for ingest: writes SC into `out` (same length as the
 * inputs) and returns it. Never throws inside the loop and allocates nothing: a reading
 * whose conductivity is negative or not finite, or whose temperature is outside the
 * method's range, gives NaN. The method itself is validated once (RangeError).
 */
export function specificConductanceInto(
  conductivityUsPerCm: Float64Array,
  temperatureC: Float64Array,
  method: CompensationMethod,
  out: Float64Array,
): Float64Array {
  const n = conductivityUsPerCm.length;
  if (temperatureC.length !== n || out.length < n) {
    throw new RangeError("conductivity, temperature and output arrays must have the same length");
  }
  compensationFactor(25, method); // validates α and the reference once
  for (let k = 0; k < n; k++) {
    const c = conductivityUsPerCm[k];
    out[k] = c >= 0 && c < Infinity ? c * compensationFactorOrNaN(temperatureC[k], method) : NaN;
  }
  return out;
}
