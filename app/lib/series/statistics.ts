// Summary statistics of a series. The site page computes these in SQL over every reading of the
// shown range (app/models/series.server.ts); these pure versions define what the numbers mean, and
// the tests hold the SQL to them.
import type { SeriesPoint } from "./bucketing.ts";

/**
 * The p-quantile (0 ≤ p ≤ 1) of values sorted ascending, by linear interpolation between closest
 * ranks: h = (n − 1)p, x[⌊h⌋] + (h − ⌊h⌋)(x[⌊h⌋+1] − x[⌊h⌋]). This is Hyndman & Fan's definition 7
 * (Statistical Computing 50(4), 1996), the one PostgreSQL's percentile_cont uses.
 */
export function quantileSorted(sorted: readonly number[], p: number): number | null {
  if (!sorted.length) return null;
  if (!(p >= 0 && p <= 1)) throw new RangeError(`quantile must be within 0–1, got ${p}`);
  const h = (sorted.length - 1) * p;
  const lo = Math.floor(h);
  const hi = Math.min(lo + 1, sorted.length - 1);
  return sorted[lo] + (h - lo) * (sorted[hi] - sorted[lo]);
}

export type Summary = {
  count: number;
  min: number | null;
  max: number | null;
  mean: number | null;
  median: number | null;
  p05: number | null;
  p95: number | null;
};

/** Count, extremes, mean, median and 5th/95th percentiles of finite values (others ignored). */
export function summarize(values: readonly (number | null)[]): Summary {
  const v = values.filter((x): x is number => x !== null && Number.isFinite(x)).sort((a, b) => a - b);
  if (!v.length) return { count: 0, min: null, max: null, mean: null, median: null, p05: null, p95: null };
  let sum = 0;
  for (const x of v) sum += x;
  return {
    count: v.length,
    min: v[0],
    max: v[v.length - 1],
    mean: sum / v.length,
    median: quantileSorted(v, 0.5),
    p05: quantileSorted(v, 0.05),
    p95: quantileSorted(v, 0.95),
  };
}

/**
 * How long each reading stands for, for time-weighted shares: the time to the next reading when the
 * step is at most `maxStepMs` (continuous data), otherwise one logging interval (the reading before
 * a gap, and the last one). Times in ascending order.
 */
export function readingDurationsMs(times: readonly number[], maxStepMs: number, intervalMs: number): number[] {
  return times.map((t, i) => {
    const next = times[i + 1];
    if (next === undefined) return intervalMs;
    const step = next - t;
    return step <= maxStepMs ? step : intervalMs;
  });
}

/**
 * Share (0–1) of the covered time during which `test` holds, time-weighted by readingDurationsMs.
 * Null when there are no readings. Samples in ascending time order.
 */
export function shareOfTime(
  samples: readonly { t: number; v: number }[],
  test: (v: number) => boolean,
  maxStepMs: number,
  intervalMs: number,
): number | null {
  if (!samples.length) return null;
  const d = readingDurationsMs(samples.map((s) => s.t), maxStepMs, intervalMs);
  let total = 0;
  let hit = 0;
  for (let i = 0; i < samples.length; i++) {
    total += d[i];
    if (test(samples[i].v)) hit += d[i];
  }
  return total > 0 ? hit / total : null;
}

/**
 * Readings a deployed logger should have produced within [fromMs, toMs): for each deployment, the
 * overlap with the range divided by its logging interval.
 */
export function expectedReadings(
  deployments: readonly { fromMs: number; untilMs: number | null; intervalS: number }[],
  fromMs: number,
  toMs: number,
): number {
  let n = 0;
  for (const d of deployments) {
    const start = Math.max(fromMs, d.fromMs);
    const end = Math.min(toMs, d.untilMs ?? Number.POSITIVE_INFINITY);
    if (end > start && d.intervalS > 0) n += (end - start) / (d.intervalS * 1000);
  }
  return n;
}

/** Received ÷ expected as a share (capped at 1: overlapping loggers may send more); null if nothing was expected. */
export function completeness(received: number, expected: number): number | null {
  if (!(expected > 0)) return null;
  return Math.min(1, received / expected);
}

/** Non-null values of points, e.g. to summarise what a chart shows. */
export function pointValues(points: readonly SeriesPoint[]): number[] {
  const out: number[] = [];
  for (const p of points) if (p[1] !== null) out.push(p[1]);
  return out;
}
