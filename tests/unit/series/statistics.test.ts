import { describe, expect, it } from "vitest";
import { completeness, expectedReadings, quantileSorted, readingDurationsMs, shareOfTime, summarize } from "#app/lib/series/statistics.ts";

const MIN = 60_000;

describe("quantileSorted (Hyndman & Fan definition 7, as percentile_cont)", () => {
  it("interpolates between closest ranks", () => {
    const x = [1, 2, 3, 4, 5, 6, 7, 8, 9, 10];
    // By hand: h = 9p. p=0.05 → h=0.45 → 1 + 0.45×1 = 1.45; p=0.5 → h=4.5 → 5.5; p=0.95 → h=8.55 → 9.55.
    expect(quantileSorted(x, 0.05)).toBeCloseTo(1.45, 12);
    expect(quantileSorted(x, 0.5)).toBeCloseTo(5.5, 12);
    expect(quantileSorted(x, 0.95)).toBeCloseTo(9.55, 12);
    expect(quantileSorted(x, 0)).toBe(1);
    expect(quantileSorted(x, 1)).toBe(10);
    expect(quantileSorted([], 0.5)).toBeNull();
    expect(() => quantileSorted(x, 1.5)).toThrow(RangeError);
  });
});

describe("summarize", () => {
  it("ignores nulls and non-finite values", () => {
    // Values 4, 1, 3, 2 (+ null, NaN): sorted 1 2 3 4; mean 2.5; median h=1.5 → 2.5;
    // p05 h=0.15 → 1.15; p95 h=2.85 → 3.85.
    const s = summarize([4, null, 1, 3, Number.NaN, 2]);
    expect(s.count).toBe(4);
    expect(s.min).toBe(1);
    expect(s.max).toBe(4);
    expect(s.mean).toBe(2.5);
    expect(s.median).toBeCloseTo(2.5, 12);
    expect(s.p05).toBeCloseTo(1.15, 12);
    expect(s.p95).toBeCloseTo(3.85, 12);
    expect(summarize([]).count).toBe(0);
  });
});

describe("time-weighted shares", () => {
  it("weights each reading by the step to the next, one interval before a gap and at the end", () => {
    // Readings at 0, 15, 30, 45 min, then a gap, then 120, 135 min. Interval 15 min, gap threshold 30.
    // Durations by hand: 15, 15, 15, 15 (gap → one interval), 15, 15 (last → one interval) = 90 min.
    const times = [0, 15, 30, 45, 120, 135].map((m) => m * MIN);
    expect(readingDurationsMs(times, 30 * MIN, 15 * MIN)).toEqual([15, 15, 15, 15, 15, 15].map((m) => m * MIN));
    const values = [1, 1, 9, 1, 9, 1];
    const share = shareOfTime(times.map((t, i) => ({ t, v: values[i] })), (v) => v > 5, 30 * MIN, 15 * MIN);
    // Above 5 at 30 min and 120 min: 30 of 90 minutes.
    expect(share).toBeCloseTo(1 / 3, 12);
  });

  it("gives uneven steps their own length", () => {
    // Steps 10 and 20 min (both within a 30-min threshold), last reading one interval (15 min).
    // The reading above the threshold is the second (20 min of 45).
    const s = [0, 10, 30].map((m, i) => ({ t: m * MIN, v: i === 1 ? 9 : 0 }));
    expect(shareOfTime(s, (v) => v > 5, 30 * MIN, 15 * MIN)).toBeCloseTo(20 / 45, 12);
    expect(shareOfTime([], () => true, 1, 1)).toBeNull();
  });
});

describe("expectedReadings and completeness", () => {
  it("sums each deployment's overlap with the range over its interval", () => {
    // Range 0–10 h. Logger A (15 min) from −5 h to 4 h → 4 h / 15 min = 16;
    // logger B (10 min) from 4 h, still deployed → 6 h / 10 min = 36. Total 52.
    const h = 3600_000;
    const n = expectedReadings(
      [
        { fromMs: -5 * h, untilMs: 4 * h, intervalS: 900 },
        { fromMs: 4 * h, untilMs: null, intervalS: 600 },
      ],
      0,
      10 * h,
    );
    expect(n).toBe(52);
    expect(completeness(39, 52)).toBeCloseTo(0.75, 12);
    expect(completeness(60, 52)).toBe(1);
    expect(completeness(5, 0)).toBeNull();
  });
});
