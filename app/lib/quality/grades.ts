// Grades of a period of record from the size of its corrections. Pure, shared by the review pages,
// the site chart's grade band and the summaries.
//
// Bands: Wagner et al. 2006, USGS Techniques and Methods 1-D3, table "Ratings of accuracy for
// continuous water-quality records" (table 17 in the 2006 edition), graded on the sum of the
// absolute values of the fouling and drift corrections applied; and its table "Maximum allowable
// limits for reporting continuous water-quality monitoring data" (table 16), beyond which the data
// are not to be published. Table numbers and band values are from memory.
import { correctionMagnitudePercent, type ProratedCorrection } from "./corrections.ts";

export type Grade = "excellent" | "good" | "fair" | "poor" | "beyond-limit";
export const GRADES = ["excellent", "good", "fair", "poor", "beyond-limit"] as const satisfies readonly Grade[];

/** Words for people; no colour or symbol carries the meaning alone. */
export const GRADE_LABELS: Record<Grade, string> = {
  excellent: "Excellent",
  good: "Good",
  fair: "Fair",
  poor: "Poor",
  "beyond-limit": "Beyond the publishing limit",
};

export const GRADE_DESCRIPTIONS: Record<Grade, string> = {
  excellent: "Corrections small: the record is as good as the method gets.",
  good: "Moderate corrections.",
  fair: "Large corrections: use with care.",
  poor: "Very large corrections: estimates more than measurements.",
  "beyond-limit": "Corrections larger than the limit for publishing: withhold these data.",
};

export type GradeBands = {
  /** Upper bounds (inclusive) of excellent, good, fair; poor above; beyond-limit above `limit`. */
  excellent: number;
  good: number;
  fair: number;
  limit: number;
  unit: "%" | "°C";
};

/** Specific conductance, % (TM 1-D3 ratings of accuracy: ≤3, >3–10, >10–15, >15; limit ±30 %; from memory). */
export const SC_GRADE_BANDS: GradeBands = { excellent: 3, good: 10, fair: 15, limit: 30, unit: "%" };

/** Temperature, °C (TM 1-D3 ratings of accuracy: ≤0.2, >0.2–0.5, >0.5–0.8, >0.8; limit ±2.0 °C; from memory). */
export const TEMPERATURE_GRADE_BANDS: GradeBands = { excellent: 0.2, good: 0.5, fair: 0.8, limit: 2.0, unit: "°C" };

// Inputs are often computed (sums of percentages); a hair over a band edge from float rounding
// must not drop a grade.
const EDGE = 1e-9;

export function gradeFor(totalAbsCorrection: number, bands: GradeBands): Grade {
  const x = Math.abs(totalAbsCorrection);
  if (!Number.isFinite(x)) return "beyond-limit";
  if (x <= bands.excellent + EDGE) return "excellent";
  if (x <= bands.good + EDGE) return "good";
  if (x <= bands.fair + EDGE) return "fair";
  if (x <= bands.limit + EDGE) return "poor";
  return "beyond-limit";
}

/** Grade of specific conductance from the total absolute correction in %. */
export function scGrade(totalAbsCorrectionPercent: number): Grade {
  return gradeFor(totalAbsCorrectionPercent, SC_GRADE_BANDS);
}

/** Grade of temperature from the total absolute correction in °C. */
export function temperatureGrade(totalAbsCorrectionC: number): Grade {
  return gradeFor(totalAbsCorrectionC, TEMPERATURE_GRADE_BANDS);
}

/**
 * The total absolute correction of a period (%): the sum of each correction's magnitude, so a
 * fouling correction of +12 % and a drift correction of −3 % count 15 %, not 9 % (TM 1-D3 grades
 * on the sum of absolute values). µS/cm corrections count against `referenceUsPerCm`; one that
 * cannot be converted makes the total null.
 */
export function totalCorrectionPercent(corrections: readonly Pick<ProratedCorrection, "startOffset" | "endOffset" | "unit">[], referenceUsPerCm: number | null): number | null {
  let total = 0;
  for (const c of corrections) {
    const m = correctionMagnitudePercent(c, referenceUsPerCm);
    if (m === null) return null;
    total += m;
  }
  return total;
}

/** A short text of the bands for a page, e.g. "Excellent ≤ 3 %, good ≤ 10 %, …". */
export function describeBands(b: GradeBands): string {
  const u = b.unit === "%" ? " %" : " °C";
  return `Excellent ≤ ${b.excellent}${u}, good ≤ ${b.good}${u}, fair ≤ ${b.fair}${u}, poor above that; beyond ${b.limit}${u} the data are not published.`;
}
