// Corrections of specific conductance for fouling and calibration drift, prorated over the time
// between two field visits. Pure: the review page previews with it, the server's SQL does the same
// arithmetic over the readings (app/models/correction.server.ts), and the tests pin both.
//
// Method: Wagner et al. 2006, USGS Techniques and Methods 1-D3, "Record computation" — fouling and
// drift errors found at a visit are assumed to have grown linearly since the previous visit, so the
// correction is prorated from zero at the earlier visit to the full value at the later one, and
// corrections for different errors over the same time add.
import { assessVisit, correctionPercentFor, type VisitReadings } from "./calibration.ts";

export type CorrectionKind = "fouling" | "drift" | "other";
export const CORRECTION_KINDS = ["fouling", "drift", "other"] as const satisfies readonly CorrectionKind[];
export type OffsetUnit = "us_cm" | "percent";
export const OFFSET_UNITS = ["us_cm", "percent"] as const satisfies readonly OffsetUnit[];

export type ProratedCorrection = {
  startMs: number;
  endMs: number;
  /** Offset at the start of the period (µS/cm or % of the recorded value). */
  startOffset: number;
  /** Offset at the end of the period. */
  endOffset: number;
  unit: OffsetUnit;
};

/**
 * The offset a correction gives at time `tMs`: linear from `startOffset` at the start to
 * `endOffset` at the end, both ends included; null outside the period.
 */
export function proratedOffset(c: ProratedCorrection, tMs: number): number | null {
  if (!(tMs >= c.startMs && tMs <= c.endMs)) return null;
  if (c.endMs === c.startMs) return c.endOffset;
  const f = (tMs - c.startMs) / (c.endMs - c.startMs);
  return c.startOffset + (c.endOffset - c.startOffset) * f;
}

/** The offset in µS/cm: percentages apply to the uncorrected (compensated) specific conductance. */
export function offsetUsPerCm(c: ProratedCorrection, tMs: number, uncorrectedUsPerCm: number): number | null {
  const o = proratedOffset(c, tMs);
  if (o === null) return null;
  return c.unit === "percent" ? (o / 100) * uncorrectedUsPerCm : o;
}

/**
 * The total correction (µS/cm) at `tMs` from every correction covering it (overlapping corrections
 * add); null when none covers it, as stored in readings.correction_us_cm.
 */
export function totalCorrectionUsPerCm(corrections: readonly ProratedCorrection[], tMs: number, uncorrectedUsPerCm: number): number | null {
  let total: number | null = null;
  for (const c of corrections) {
    const o = offsetUsPerCm(c, tMs, uncorrectedUsPerCm);
    if (o !== null) total = (total ?? 0) + o;
  }
  return total;
}

/** The value to show: uncorrected + total correction (readings.sc25_us_cm). */
export function correctedUsPerCm(corrections: readonly ProratedCorrection[], tMs: number, uncorrectedUsPerCm: number): number {
  return uncorrectedUsPerCm + (totalCorrectionUsPerCm(corrections, tMs, uncorrectedUsPerCm) ?? 0);
}

export type VisitForProposal = VisitReadings & { id: string; visitedAtMs: number; recalibrated: boolean };

export type CorrectionProposal = {
  kind: "fouling" | "drift";
  fromVisitId: string;
  toVisitId: string;
  startMs: number;
  endMs: number;
  startOffset: number;
  endOffset: number;
  unit: OffsetUnit;
  /** Why Ripplemark proposes it, in words for the reviewer. */
  reason: string;
};

function pct(x: number) {
  return `${x >= 0 ? "+" : "−"}${Math.abs(x).toFixed(1)} %`;
}

/**
 * The corrections Ripplemark proposes for the record between two consecutive visits at a logger,
 * from what the later visit found: a fouling correction when the fouling error is outside the
 * calibration criterion, a drift correction when the check nearest the water is. Both in % of the
 * recorded value, prorated from 0 at the earlier visit to the full value at the later one.
 * Errors within the criterion are not corrected (TM 1-D3: corrections are applied when the error
 * exceeds the criterion).
 */
export function proposeCorrections(previous: { id: string; visitedAtMs: number }, visit: VisitForProposal): CorrectionProposal[] {
  if (!(visit.visitedAtMs > previous.visitedAtMs)) return [];
  const a = assessVisit(visit);
  const out: CorrectionProposal[] = [];
  const base = { fromVisitId: previous.id, toVisitId: visit.id, startMs: previous.visitedAtMs, endMs: visit.visitedAtMs, startOffset: 0, unit: "percent" as const };
  if (a.fouling && !a.fouling.passed) {
    out.push({
      ...base,
      kind: "fouling",
      endOffset: a.fouling.correctionPercent,
      reason: `Fouling: the sensor read ${a.fouling.errorUsPerCm > 0 ? "low" : "high"} by ${Math.abs(a.fouling.errorUsPerCm).toFixed(1)} µS/cm before cleaning (${pct(a.fouling.errorPercent)} of the ${a.fouling.reference === "field-meter" ? "field meter" : "cleaned sensor"}), outside ±${a.fouling.allowanceUsPerCm.toFixed(1)} µS/cm.`,
    });
  }
  const i = a.driftCheckIndex;
  const check = i === null ? null : a.checks[i];
  if (check && !check.passed && i !== null) {
    out.push({
      ...base,
      kind: "drift",
      endOffset: correctionPercentFor(check.errorUsPerCm, visit.checks[i].sensorUsPerCm),
      reason: `Calibration drift: in the ${visit.checks[i].standard === "custom" ? "custom" : visit.checks[i].standard} standard the cleaned sensor read ${check.errorUsPerCm > 0 ? "low" : "high"} by ${Math.abs(check.errorUsPerCm).toFixed(1)} µS/cm (${Math.abs(check.errorPercent).toFixed(1)} % ${check.errorUsPerCm > 0 ? "below" : "above"} the expected ${check.expectedUsPerCm.toFixed(1)} µS/cm), outside ±${check.allowanceUsPerCm.toFixed(1)} µS/cm.`,
    });
  }
  return out;
}

/**
 * The size of a correction for grading, in % of the recorded value: the larger of its two ends.
 * µS/cm offsets are turned into % of `referenceUsPerCm` (the period's typical uncorrected value).
 */
export function correctionMagnitudePercent(c: Pick<ProratedCorrection, "startOffset" | "endOffset" | "unit">, referenceUsPerCm: number | null): number | null {
  const m = Math.max(Math.abs(c.startOffset), Math.abs(c.endOffset));
  if (c.unit === "percent") return m;
  if (!referenceUsPerCm || !(referenceUsPerCm > 0)) return null;
  return (100 * m) / referenceUsPerCm;
}
