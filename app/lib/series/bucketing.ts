// Turning readings into chart points without losing what matters: a browser never gets more than a
// point budget per series, yet every peak and trough survives. Pure: no I/O, runs anywhere.
//
// The method: the shown range is cut into equal time buckets aligned to a fixed origin (so panning
// does not reshuffle them); for each bucket the smallest and largest reading are kept at the times
// they happened, in time order (two points a bucket at most). A line through these points draws the
// exact envelope of the data at screen resolution, so a one-reading spike above a threshold is
// still drawn at its true height. The database does the heavy part (one aggregate per bucket, see
// app/models/series.server.ts); `bucketize` is the same computation in memory, for small inputs
// and tests.
//
// Gaps stay gaps: a null point goes wherever readings stop for longer than ~2 logging intervals
// (raw points) or a whole bucket is empty (bucketed points); charts draw lines with
// connectNulls: false, so a three-day outage is not bridged by a straight line.

/**
 * A chart point as the series API sends it: `[timeMs, value]` for a reading, `[timeMs, null]` for a
 * gap, `[timeMs, value, min, max]` for a point standing for a bucket (value is the bucket's min or
 * max, taken at the time it occurred; min and max are the bucket's).
 */
export type SeriesPoint = [number, number | null] | [number, number | null, number, number];

export type Sample = { t: number; v: number };

export type Bucket = {
  /** floor((time - origin) / width): consecutive buckets have consecutive indexes. */
  index: number;
  count: number;
  mean: number;
  min: number;
  max: number;
  /** Time of the (earliest) smallest and largest reading in the bucket. */
  minT: number;
  maxT: number;
};

/** Bucket origin: buckets are aligned to whole widths since 2000-01-01T00:00Z (UTC). */
export const BUCKET_ORIGIN_MS = Date.UTC(2000, 0, 1);

/** Bucket widths that read well on a time axis, in seconds (1 min … 28 days). */
export const NICE_BUCKET_SECONDS = [
  60, 120, 300, 600, 900, 1800, 3600, 7200, 10_800, 21_600, 43_200, 86_400, 172_800, 345_600, 604_800, 1_209_600, 2_419_200,
] as const;

/** The most points any series may carry to the browser, whatever was asked. */
export const MAX_POINTS = 2000;

/**
 * The narrowest nice bucket width (seconds) that keeps a range within `maxPoints` points. Each
 * bucket yields at most two points, and a run of empty buckets one gap marker, so at most
 * maxPoints / 2 buckets (counting the partial ones at both ends) may touch the range.
 */
export function chooseBucketSeconds(fromMs: number, toMs: number, maxPoints: number): number {
  const maxBuckets = Math.max(1, Math.floor(maxPoints / 2));
  for (const w of NICE_BUCKET_SECONDS) {
    if (bucketsTouching(fromMs, toMs, w * 1000) <= maxBuckets) return w;
  }
  // Longer than any nice width allows: whole days, as many as needed.
  let days = Math.ceil((toMs - fromMs) / 86_400_000 / maxBuckets);
  while (bucketsTouching(fromMs, toMs, days * 86_400_000) > maxBuckets) days++;
  return days * 86_400;
}

function bucketsTouching(fromMs: number, toMs: number, widthMs: number) {
  const first = Math.floor((fromMs - BUCKET_ORIGIN_MS) / widthMs);
  const last = Math.floor((Math.max(fromMs, toMs - 1) - BUCKET_ORIGIN_MS) / widthMs);
  return last - first + 1;
}

/** In-memory twin of the SQL bucket query: samples (any order) → buckets in index order. */
export function bucketize(samples: readonly Sample[], widthMs: number, originMs = BUCKET_ORIGIN_MS): Bucket[] {
  const byIndex = new Map<number, Bucket & { sum: number }>();
  for (const { t, v } of samples) {
    if (!Number.isFinite(v)) continue;
    const index = Math.floor((t - originMs) / widthMs);
    const b = byIndex.get(index);
    if (!b) {
      byIndex.set(index, { index, count: 1, sum: v, mean: v, min: v, max: v, minT: t, maxT: t });
      continue;
    }
    b.count++;
    b.sum += v;
    if (v < b.min || (v === b.min && t < b.minT)) {
      b.min = v;
      b.minT = t;
    }
    if (v > b.max || (v === b.max && t < b.maxT)) {
      b.max = v;
      b.maxT = t;
    }
  }
  return [...byIndex.values()]
    .sort((a, b) => a.index - b.index)
    .map(({ sum, ...b }) => ({ ...b, mean: sum / b.count }));
}

/**
 * Buckets (in index order) → points: each bucket's min and max at their own times, in time order
 * (one point when they coincide), and a null where one or more buckets are empty.
 */
export function bucketsToPoints(buckets: readonly Bucket[], widthMs: number, originMs = BUCKET_ORIGIN_MS): SeriesPoint[] {
  const out: SeriesPoint[] = [];
  let prev: number | null = null;
  for (const b of buckets) {
    if (prev !== null && b.index > prev + 1) {
      // The gap marker sits at the start of the first empty bucket, between the two runs.
      out.push([originMs + (prev + 1) * widthMs, null]);
    }
    if (b.minT === b.maxT) {
      out.push([b.minT, b.min, b.min, b.max]);
    } else if (b.minT < b.maxT) {
      out.push([b.minT, b.min, b.min, b.max], [b.maxT, b.max, b.min, b.max]);
    } else {
      out.push([b.maxT, b.max, b.min, b.max], [b.minT, b.min, b.min, b.max]);
    }
    prev = b.index;
  }
  return out;
}

/**
 * Raw samples (time order) → points, with a null half-way through every step longer than
 * `maxStepMs` (typically 2 × the logging interval).
 */
export function rawToPoints(samples: readonly Sample[], maxStepMs: number): SeriesPoint[] {
  const out: SeriesPoint[] = [];
  for (let i = 0; i < samples.length; i++) {
    const s = samples[i];
    if (i > 0) {
      const step = s.t - samples[i - 1].t;
      if (step > maxStepMs) out.push([samples[i - 1].t + Math.round(step / 2), null]);
    }
    out.push([s.t, s.v]);
  }
  return out;
}

/** The median time step of samples in time order (ms); null with fewer than two samples. */
export function medianStepMs(samples: readonly Sample[]): number | null {
  if (samples.length < 2) return null;
  const steps: number[] = [];
  for (let i = 1; i < samples.length; i++) {
    const d = samples[i].t - samples[i - 1].t;
    if (d > 0) steps.push(d);
  }
  if (!steps.length) return null;
  steps.sort((a, b) => a - b);
  return steps[Math.floor((steps.length - 1) / 2)];
}

/** The gap threshold: a step longer than this (2 × the logging interval) breaks the line. */
export function gapThresholdMs(loggingIntervalMs: number): number {
  return 2 * loggingIntervalMs;
}

/**
 * Coarse points of a whole range with finer points of a window inside it: coarse before `fromMs`,
 * fine within, coarse after `toMs`. Used when a chart is zoomed: the window gets detail, the rest
 * keeps its overview (the slider still shows the whole range).
 */
export function spliceWindow(coarse: readonly SeriesPoint[], fine: readonly SeriesPoint[], fromMs: number, toMs: number): SeriesPoint[] {
  return [...coarse.filter((p) => p[0] < fromMs), ...fine.filter((p) => p[0] >= fromMs && p[0] <= toMs), ...coarse.filter((p) => p[0] > toMs)];
}
