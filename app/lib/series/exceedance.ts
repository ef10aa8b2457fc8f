// Periods when a shown series is beyond a display threshold, for shading on a chart. This is a
// display aid computed over the points on screen, not the alert rules (which add minimum durations
// and a clear level and are evaluated over every reading).
import type { SeriesPoint } from "./bucketing.ts";

export type ExceedancePeriod = {
  fromMs: number;
  toMs: number;
  /** The most extreme value in the period and when it occurred. */
  peak: number;
  peakMs: number;
};

/**
 * Runs of consecutive non-null points beyond `threshold` (strictly above an upper one, strictly
 * below a lower one). A run's edges are put half-way to the neighbouring in-range points, so even a
 * single-point spike gets a visible width; at a gap (null) or the end of the data the edge is the
 * run's own first or last point. Points in time order.
 */
export function exceedancePeriods(points: readonly SeriesPoint[], threshold: number, bound: "upper" | "lower"): ExceedancePeriod[] {
  const beyond = (v: number) => (bound === "upper" ? v > threshold : v < threshold);
  const more = (a: number, b: number) => (bound === "upper" ? a > b : a < b);
  const out: ExceedancePeriod[] = [];
  let i = 0;
  while (i < points.length) {
    const v = points[i][1];
    if (v === null || !beyond(v)) {
      i++;
      continue;
    }
    const start = i;
    let peak = v;
    let peakMs = points[i][0];
    while (i + 1 < points.length && points[i + 1][1] !== null && beyond(points[i + 1][1] as number)) {
      i++;
      if (more(points[i][1] as number, peak)) {
        peak = points[i][1] as number;
        peakMs = points[i][0];
      }
    }
    const end = i;
    const before = start > 0 ? points[start - 1] : undefined;
    const after = end + 1 < points.length ? points[end + 1] : undefined;
    const fromMs = before && before[1] !== null ? (before[0] + points[start][0]) / 2 : points[start][0];
    const toMs = after && after[1] !== null ? (points[end][0] + after[0]) / 2 : points[end][0];
    out.push({ fromMs, toMs, peak, peakMs });
    i++;
  }
  return out;
}
