import { describe, expect, it } from "vitest";
import {
  BUCKET_ORIGIN_MS,
  bucketize,
  bucketsToPoints,
  chooseBucketSeconds,
  medianStepMs,
  rawToPoints,
  spliceWindow,
  type Sample,
  type SeriesPoint,
} from "#app/lib/series/bucketing.ts";

const MIN = 60_000;
const T0 = Date.UTC(2025, 0, 1); // a whole day after the bucket origin, so buckets of ≤ 1 day start here

function regular(n: number, stepMs: number, value: (i: number) => number, start = T0): Sample[] {
  return Array.from({ length: n }, (_, i) => ({ t: start + i * stepMs, v: value(i) }));
}

describe("chooseBucketSeconds", () => {
  it("picks 12 h for a year at 1,500 points", () => {
    // By hand: at most 750 buckets (2 points each). 6 h buckets → 4 a day × 365 = 1,460 > 750;
    // 12 h → 2 × 365 = 730 (+1 partial) ≤ 750.
    expect(chooseBucketSeconds(T0, T0 + 365 * 86_400_000, 1500)).toBe(43_200);
  });

  it("picks 15 min for a week at 1,500 points", () => {
    // 7 days = 10,080 min. 10 min → 1,008 buckets > 750; 15 min → 672 ≤ 750.
    expect(chooseBucketSeconds(T0, T0 + 7 * 86_400_000, 1500)).toBe(900);
  });

  it("counts the partial buckets at both ends of an unaligned range", () => {
    // 100 points → 50 buckets. A 49-hour range starting at 00:30 touches 50 one-hour buckets
    // (00:00 … 01:00 of day 3) — exactly the limit — so 1 h fits; a 49.6 h one would touch 51.
    const from = T0 + 30 * MIN;
    expect(chooseBucketSeconds(from, from + 49 * 3600_000, 100)).toBe(3600);
    expect(chooseBucketSeconds(from, from + 49.6 * 3600_000, 100)).toBe(7200);
  });

  it("falls back to whole days beyond the longest nice width", () => {
    // 20 years at 20 points: 10 buckets of ≥ 730.5 days each → 731-day buckets at least.
    const w = chooseBucketSeconds(T0, T0 + 7305 * 86_400_000, 20);
    expect(w % 86_400).toBe(0);
    expect(w).toBeGreaterThanOrEqual(731 * 86_400);
  });
});

describe("bucketize", () => {
  it("computes count, mean, extremes and their times per bucket, with uneven spacing", () => {
    // Uneven times (minutes after T0) and values; 1-hour buckets. Worked by hand:
    // bucket 0 (00:00–01:00): t=0 v=5, t=7 v=2, t=50 v=9, t=51 v=2 → n=4, mean 4.5, min 2 first at 7, max 9 at 50
    // bucket 2 (02:00–03:00): t=125 v=4 → n=1
    const s: Sample[] = [
      { t: T0 + 0 * MIN, v: 5 },
      { t: T0 + 7 * MIN, v: 2 },
      { t: T0 + 50 * MIN, v: 9 },
      { t: T0 + 51 * MIN, v: 2 },
      { t: T0 + 125 * MIN, v: 4 },
    ];
    const b = bucketize(s, 3600_000);
    const base = (T0 - BUCKET_ORIGIN_MS) / 3600_000;
    expect(b).toEqual([
      { index: base, count: 4, mean: 4.5, min: 2, max: 9, minT: T0 + 7 * MIN, maxT: T0 + 50 * MIN },
      { index: base + 2, count: 1, mean: 4, min: 4, max: 4, minT: T0 + 125 * MIN, maxT: T0 + 125 * MIN },
    ]);
  });
});

describe("bucketsToPoints", () => {
  it("keeps a one-reading spike at its true height and time within the point budget", () => {
    // A week of 1-minute readings (10,080) gently varying around 500, one spike of 5,000 at
    // reading 4,321 and one dip to 10 at reading 7,000. Budget 200 points.
    const spikeAt = 4321;
    const dipAt = 7000;
    const s = regular(10_080, MIN, (i) => (i === spikeAt ? 5000 : i === dipAt ? 10 : 500 + (i % 17)));
    const widthS = chooseBucketSeconds(s[0].t, s[s.length - 1].t + MIN, 200);
    const points = bucketsToPoints(bucketize(s, widthS * 1000), widthS * 1000);
    expect(points.length).toBeLessThanOrEqual(200);
    const values = points.map((p) => p[1]).filter((v): v is number => v !== null);
    expect(Math.max(...values)).toBe(5000);
    expect(Math.min(...values)).toBe(10);
    expect(points.find((p) => p[1] === 5000)?.[0]).toBe(T0 + spikeAt * MIN);
    expect(points.find((p) => p[1] === 10)?.[0]).toBe(T0 + dipAt * MIN);
    // Each bucket's max/min (brute force over the readings in it) equals what its points carry.
    const w = widthS * 1000;
    for (const p of points as [number, number, number, number][]) {
      const k = Math.floor((p[0] - BUCKET_ORIGIN_MS) / w);
      const inBucket = s.filter((x) => Math.floor((x.t - BUCKET_ORIGIN_MS) / w) === k).map((x) => x.v);
      expect(p[2]).toBe(Math.min(...inBucket));
      expect(p[3]).toBe(Math.max(...inBucket));
    }
  });

  it("puts points in time order within a bucket (max before min when it came first)", () => {
    const s: Sample[] = [
      { t: T0, v: 3 },
      { t: T0 + 10 * MIN, v: 8 },
      { t: T0 + 20 * MIN, v: 1 },
    ];
    expect(bucketsToPoints(bucketize(s, 3600_000), 3600_000)).toEqual([
      [T0 + 10 * MIN, 8, 1, 8],
      [T0 + 20 * MIN, 1, 1, 8],
    ]);
  });

  it("marks a run of empty buckets with one null at the start of the first empty bucket", () => {
    // 1 h buckets; readings in hours 0 and 1, none in hours 2–4, then hour 5.
    const s: Sample[] = [0, 30, 60, 90, 300, 330].map((m, i) => ({ t: T0 + m * MIN, v: i }));
    const pts = bucketsToPoints(bucketize(s, 3600_000), 3600_000);
    const nulls = pts.filter((p) => p[1] === null);
    expect(nulls).toEqual([[T0 + 2 * 3600_000, null]]);
    // The null sits between the last point of hour 1 and the first of hour 5.
    const i = pts.findIndex((p) => p[1] === null);
    expect(pts[i - 1][0]).toBeLessThan(pts[i][0]);
    expect(pts[i + 1][0]).toBeGreaterThan(pts[i][0]);
  });
});

describe("rawToPoints", () => {
  it("inserts a null half-way through a step longer than the gap threshold, and only there", () => {
    // 15-minute readings, then a 3-day gap, then more; threshold 30 min (2 × interval).
    const before = regular(4, 15 * MIN, (i) => i);
    const after = regular(3, 15 * MIN, (i) => 10 + i, T0 + 45 * MIN + 3 * 86_400_000);
    const pts = rawToPoints([...before, ...after], 30 * MIN);
    expect(pts.length).toBe(8);
    const gapAt = T0 + 45 * MIN + 1.5 * 86_400_000;
    expect(pts[4]).toEqual([gapAt, null]);
    expect(pts.filter((p) => p[1] === null)).toHaveLength(1);
  });

  it("does not break the line for uneven steps within the threshold", () => {
    const s: Sample[] = [0, 14, 31, 44, 60].map((m) => ({ t: T0 + m * MIN, v: m }));
    expect(rawToPoints(s, 30 * MIN).every((p) => p[1] !== null)).toBe(true);
  });
});

describe("medianStepMs", () => {
  it("is the median of positive steps", () => {
    // Steps 15, 15, 30, 15 min → sorted 15, 15, 15, 30 → lower median 15.
    const s: Sample[] = [0, 15, 30, 60, 75].map((m) => ({ t: T0 + m * MIN, v: 0 }));
    expect(medianStepMs(s)).toBe(15 * MIN);
    expect(medianStepMs(s.slice(0, 1))).toBeNull();
  });
});

describe("spliceWindow", () => {
  it("replaces the window's coarse points with the fine ones and keeps the rest", () => {
    const coarse: SeriesPoint[] = [[0, 1], [100, 2], [200, 3], [300, 4]];
    const fine: SeriesPoint[] = [[90, 9], [120, 8], [150, 7], [210, 6]];
    expect(spliceWindow(coarse, fine, 100, 200)).toEqual([[0, 1], [120, 8], [150, 7], [300, 4]]);
  });
});
