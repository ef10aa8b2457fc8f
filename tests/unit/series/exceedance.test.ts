import { describe, expect, it } from "vitest";
import { exceedancePeriods } from "#app/lib/series/exceedance.ts";
import type { SeriesPoint } from "#app/lib/series/bucketing.ts";

describe("exceedancePeriods", () => {
  const pts: SeriesPoint[] = [
    [0, 1],
    [10, 5],
    [20, 6],
    [30, 1],
    [40, null],
    [50, 7],
    [60, 1],
  ];

  it("finds runs above an upper threshold, edged half-way to in-range neighbours", () => {
    // Threshold 4: run 10–20 (edges (0+10)/2 = 5 and (20+30)/2 = 25, peak 6 at 20);
    // run at 50 right after a gap (edge at 50 itself) to (50+60)/2 = 55, peak 7.
    expect(exceedancePeriods(pts, 4, "upper")).toEqual([
      { fromMs: 5, toMs: 25, peak: 6, peakMs: 20 },
      { fromMs: 50, toMs: 55, peak: 7, peakMs: 50 },
    ]);
  });

  it("finds runs below a lower threshold, and none when nothing crosses", () => {
    // Below 2: points at 0 (edge 0, to 5), 30 (from 25, null after → 30), 60 (from 55, end → 60).
    expect(exceedancePeriods(pts, 2, "lower")).toEqual([
      { fromMs: 0, toMs: 5, peak: 1, peakMs: 0 },
      { fromMs: 25, toMs: 30, peak: 1, peakMs: 30 },
      { fromMs: 55, toMs: 60, peak: 1, peakMs: 60 },
    ]);
    expect(exceedancePeriods(pts, 100, "upper")).toEqual([]);
  });

  it("counts a value equal to the threshold as within it", () => {
    expect(exceedancePeriods([[0, 5], [1, 5]], 5, "upper")).toEqual([]);
  });
});
