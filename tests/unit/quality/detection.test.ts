import { describe, expect, it } from "vitest";
import {
  defaultMaxGapMs,
  detectFlatLine,
  detectMissingData,
  detectOutOfRange,
  detectRateOfChange,
  detectSpikes,
  detectThreshold,
  GAP_INTERVALS,
  medianIntervalMs,
  windowChanges,
  type Reading,
} from "#app/lib/quality/detection.ts";

// Hand-made series: every expected event below was worked out by reading the series by eye.
const T0 = Date.UTC(2025, 0, 22, 0, 0);
const MIN = 60_000;
const STEP = 15 * MIN;
const GAP = defaultMaxGapMs(STEP); // 4 × 15 min = 1 h

/** Readings every `step` from T0 (null = no reading at that slot). */
function series(values: (number | null)[], step = STEP, t0 = T0): Reading[] {
  return values.flatMap((value, i) => (value === null ? [] : [{ timeMs: t0 + i * step, value }]));
}
const at = (i: number, step = STEP) => T0 + i * step;

describe("helpers", () => {
  it("estimates the logging interval as the median step", () => {
    expect(medianIntervalMs(series([1, 2, 3, null, 5, 6]))).toBe(STEP);
    expect(medianIntervalMs(series([1]))).toBeNull();
  });

  it("ends events after GAP_INTERVALS logging intervals", () => {
    expect(GAP_INTERVALS).toBe(4);
    expect(defaultMaxGapMs(10 * MIN)).toBe(40 * MIN);
    expect(defaultMaxGapMs(null)).toBe(60 * MIN); // falls back to 15 minutes
  });

  it("rejects readings out of time order", () => {
    const bad = [{ timeMs: 2, value: 1 }, { timeMs: 1, value: 1 }];
    expect(() => detectOutOfRange(bad, { min: 0, max: 10 }, { maxGapMs: GAP })).toThrow(RangeError);
  });
});

describe("threshold held for a minimum duration, with a clear level", () => {
  const above = { direction: "above" as const, threshold: 2500, clear: 2300, minDurationMs: 60 * MIN };

  it("raises an event once the value has stayed above for the minimum duration and ends it at the clear level", () => {
    //        0    1     2     3     4     5     6     7     8     9    10
    const r = series([2000, 2600, 2700, 2900, 2800, 2650, 2400, 2350, 2200, 2100, 2000]);
    // Above from index 1; at index 5 it has held for 4 × 15 = 60 min → event. 2400 and 2350 are
    // below the threshold but above the clear level, so the event stays open until 2200 (index 8).
    expect(detectThreshold(r, above, { maxGapMs: GAP })).toEqual([
      { startMs: at(1), endMs: at(8), peakValue: 2900, peakMs: at(3), lastMs: at(7) },
    ]);
  });

  it("drops a candidate that falls back before the minimum duration", () => {
    const r = series([2000, 2600, 2700, 2900, 2400, 2600, 2000]);
    // Above for 1–3 (30 min), back below the threshold at 4: not held long enough.
    expect(detectThreshold(r, above, { maxGapMs: GAP })).toEqual([]);
  });

  it("raises an event on the first reading when the minimum duration is zero", () => {
    const r = series([2000, 2600, 2000]);
    expect(detectThreshold(r, { ...above, minDurationMs: 0 }, { maxGapMs: GAP })).toEqual([
      { startMs: at(1), endMs: at(2), peakValue: 2600, peakMs: at(1), lastMs: at(1) },
    ]);
  });

  it("leaves an event open (endMs null) when the data ends above the clear level", () => {
    const r = series([2000, 2600, 2700, 2800, 2900, 3000, 2400]);
    expect(detectThreshold(r, above, { maxGapMs: GAP })).toEqual([
      { startMs: at(1), endMs: null, peakValue: 3000, peakMs: at(5), lastMs: at(6) },
    ]);
  });

  it("ends an event at the last reading before a gap longer than the limit and starts again after it", () => {
    // Readings 0–6, nothing for 2 h (slots 7–14), then 15–20.
    const values: (number | null)[] = [2000, 2600, 2700, 2800, 2900, 3000, 2900, ...Array(8).fill(null), 2800, 2800, 2800, 2800, 2800, 2800];
    const r = series(values);
    expect(detectThreshold(r, above, { maxGapMs: GAP })).toEqual([
      { startMs: at(1), endMs: at(6), peakValue: 3000, peakMs: at(5), lastMs: at(6) },
      { startMs: at(15), endMs: null, peakValue: 2800, peakMs: at(15), lastMs: at(20) },
    ]);
  });

  it("rides over a short gap without ending the event", () => {
    // One reading missing (30 min step) is within the 1 h limit.
    const r = series([2000, 2600, 2700, null, 2800, 2900, 2950, 2000]);
    expect(detectThreshold(r, above, { maxGapMs: GAP })).toEqual([
      { startMs: at(1), endMs: at(7), peakValue: 2950, peakMs: at(6), lastMs: at(6) },
    ]);
  });

  it("works the same way below a threshold (storm dilution)", () => {
    const below = { direction: "below" as const, threshold: 250, clear: 280, minDurationMs: 30 * MIN };
    const r = series([410, 240, 200, 185, 260, 270, 300, 400]);
    // Below from 1; held 30 min at 3; 260 and 270 stay under the clear level 280; 300 clears.
    expect(detectThreshold(r, below, { maxGapMs: GAP })).toEqual([
      { startMs: at(1), endMs: at(6), peakValue: 185, peakMs: at(3), lastMs: at(5) },
    ]);
  });

  it("continues an event that was open before the evaluated window instead of starting a second one", () => {
    const open = { startMs: at(-10), peakValue: 3100, peakMs: at(-4), lastMs: at(-1) };
    const r = series([2900, 3200, 2600, 2200]);
    expect(detectThreshold(r, above, { maxGapMs: GAP, open })).toEqual([
      { startMs: at(-10), endMs: at(3), peakValue: 3200, peakMs: at(1), lastMs: at(2) },
    ]);
    // The stored peak stays when nothing in the window beats it.
    expect(detectThreshold(series([2900, 2200]), above, { maxGapMs: GAP, open })[0]).toMatchObject({ startMs: at(-10), endMs: at(1), peakValue: 3100, peakMs: at(-4) });
    // An open event whose first new reading is already past the clear level ends there.
    expect(detectThreshold(series([2000]), above, { maxGapMs: GAP, open })).toEqual([
      { startMs: at(-10), endMs: at(0), peakValue: 3100, peakMs: at(-4), lastMs: at(-1) },
    ]);
  });

  it("gives the same events for a series cut in two at an open event as for the whole series", () => {
    const whole = series([2000, 2600, 2700, 2800, 2900, 3000, 2950, 2900, 2600, 2100, 2000]);
    const all = detectThreshold(whole, above, { maxGapMs: GAP });
    const first = detectThreshold(whole.slice(0, 7), above, { maxGapMs: GAP });
    expect(first[0].endMs).toBeNull();
    const rest = detectThreshold(whole.slice(7), above, { maxGapMs: GAP, open: first[0] });
    expect(rest).toEqual(all);
  });

  it("refuses a clear level on the wrong side of the threshold", () => {
    expect(() => detectThreshold([], { ...above, clear: 2600 }, { maxGapMs: GAP })).toThrow(/clear level/);
    expect(() => detectThreshold([], { direction: "below", threshold: 250, clear: 200, minDurationMs: 0 }, { maxGapMs: GAP })).toThrow(/clear level/);
  });
});

describe("rate of change", () => {
  it("computes the largest rise and fall within the window before each reading", () => {
    const r = series([100, 150, 120, 400, 380]);
    const { rise, fall } = windowChanges(r, 30 * MIN);
    // A 30-minute window holds the two readings before. Index 2 (120): lowest 100 → rise 20,
    // highest 150 → fall 30. Index 3 (400): lowest 120 → rise 280; highest 150 → no fall.
    expect(Array.from(rise)).toEqual([0, 50, 20, 280, 260]);
    expect(Array.from(fall)).toEqual([0, 0, 30, 0, 20]);
  });

  it("finds a salt pulse rising more than the limit within the window", () => {
    // A road-salt pulse: 450 → 2450 µS/cm over an hour and a half, then a slow decay.
    const r = series([450, 452, 451, 800, 1300, 1900, 2300, 2450, 2440, 2420, 2400, 2380, 2370, 2360]);
    const rule = { change: 500, windowMs: 60 * MIN, direction: "rise" as const };
    // A 60-minute window holds the four readings before. Index 3 (800): lowest 450 → 350, not
    // enough. Index 4 (1300): 450 → 850, a hit. Index 6 (2300): lowest of 2–5 = 451 → 1849, the
    // largest. Index 9 (2420): lowest of 5–8 = 1900 → 520, the last hit. Index 10 (2400): lowest
    // of 6–9 = 2300 → 100, no hit; nor 11 and 12. Index 13 is a full hour after the last hit: the
    // event ends there.
    expect(detectRateOfChange(r, rule, { maxGapMs: GAP })).toEqual([
      { startMs: at(4), endMs: at(13), peakValue: 1849, peakMs: at(6), lastMs: at(12) },
    ]);
  });

  it("keeps a rate that hovers around the limit as one event", () => {
    // A 20-minute window holds the one reading before. Rises of 60, 40, 60, 2, 1 against a limit of
    // 50: the 40 (index 2) does not end the event because the next hit (index 3) follows within the
    // window. Index 5 is 30 minutes after the last hit: the event ends there.
    const r = series([100, 160, 200, 260, 262, 263]);
    expect(detectRateOfChange(r, { change: 50, windowMs: 20 * MIN, direction: "rise" }, { maxGapMs: GAP })).toEqual([
      { startMs: at(1), endMs: at(5), peakValue: 60, peakMs: at(1), lastMs: at(4) },
    ]);
  });

  it("reports a fall as a negative change and ignores it when only rises are asked for", () => {
    const r = series([410, 405, 300, 200, 185, 190, 195, 200, 205]);
    const fall = detectRateOfChange(r, { change: 150, windowMs: 45 * MIN, direction: "fall" }, { maxGapMs: GAP });
    // Index 3: highest of 0–2 = 410 → fall 210. Index 4: highest of 1–3 = 405 → 220, the last hit.
    // Index 5: highest of 2–4 = 300 → 110, no hit. Index 7 is 45 minutes after the last hit: ends.
    expect(fall).toEqual([{ startMs: at(3), endMs: at(7), peakValue: -220, peakMs: at(4), lastMs: at(6) }]);
    expect(detectRateOfChange(r, { change: 150, windowMs: 45 * MIN, direction: "rise" }, { maxGapMs: GAP })).toEqual([]);
    expect(detectRateOfChange(r, { change: 150, windowMs: 45 * MIN, direction: "either" }, { maxGapMs: GAP })).toEqual(fall);
  });
});

describe("sensor checks", () => {
  it("finds a flat line of N identical readings", () => {
    const r = series([512.1, 512.4, 512.4, 512.4, 512.4, 512.4, 513.0, 512.8]);
    expect(detectFlatLine(r, { readings: 5, tolerance: 0 }, { maxGapMs: GAP })).toEqual([
      { startMs: at(1), endMs: at(6), peakValue: 512.4, peakMs: at(1), lastMs: at(5) },
    ]);
    // Six identical readings are needed for N = 6: none here.
    expect(detectFlatLine(r, { readings: 6, tolerance: 0 }, { maxGapMs: GAP })).toEqual([]);
    // With a tolerance of 0.5 the run 512.1 … 512.4 is one stuck stretch until 513.0 (0.9 away).
    expect(detectFlatLine(r, { readings: 5, tolerance: 0.5 }, { maxGapMs: GAP })).toEqual([
      { startMs: at(0), endMs: at(6), peakValue: 512.1, peakMs: at(0), lastMs: at(5) },
    ]);
  });

  it("leaves a flat line open at the end of data and does not bridge a gap", () => {
    const r = series([7, 7, 7, null, null, null, null, null, 7, 7, 7, 7]);
    // The 75-minute step after index 2 is longer than the 1 h limit: two runs, 3 and 4 long.
    expect(detectFlatLine(r, { readings: 4, tolerance: 0 }, { maxGapMs: GAP })).toEqual([
      { startMs: at(8), endMs: null, peakValue: 7, peakMs: at(8), lastMs: at(11) },
    ]);
    expect(detectFlatLine(r, { readings: 3, tolerance: 0 }, { maxGapMs: GAP })).toEqual([
      { startMs: at(0), endMs: at(2), peakValue: 7, peakMs: at(0), lastMs: at(2) },
      { startMs: at(8), endMs: null, peakValue: 7, peakMs: at(8), lastMs: at(11) },
    ]);
  });

  it("continues a flat line open before the window", () => {
    const open = { startMs: at(-6), peakValue: 7, peakMs: at(-6), lastMs: at(-1) };
    expect(detectFlatLine(series([7, 7, 8]), { readings: 4, tolerance: 0 }, { maxGapMs: GAP, open })).toEqual([
      { startMs: at(-6), endMs: at(2), peakValue: 7, peakMs: at(-6), lastMs: at(1) },
    ]);
  });

  it("finds a single-reading spike far from both neighbours, but not a step", () => {
    const r = series([600, 602, 1450, 603, 601, 601, 900, 905, 903]);
    // 1450: +848 and +847 from its neighbours → spike. 900 is a step (next reading is close to it).
    expect(detectSpikes(r, { jump: 200 }, { maxGapMs: GAP })).toEqual([
      { startMs: at(2), endMs: at(2), peakValue: 1450, peakMs: at(2), lastMs: at(2) },
    ]);
    // A flickering sensor: 600 (up 595 and 580) and 20 (down 580 and 590) are spikes on
    // neighbouring readings, so one event; 610 is not (604 follows it). The first and last readings
    // cannot be judged. The peak is the first of the two equally large spikes.
    expect(detectSpikes(series([5, 600, 20, 610, 604]), { jump: 200 }, { maxGapMs: GAP })).toEqual([
      { startMs: at(1), endMs: at(2), peakValue: 600, peakMs: at(1), lastMs: at(2) },
    ]);
  });

  it("does not call a reading next to a gap a spike", () => {
    const r = series([600, null, null, null, null, null, 1450, 600]);
    expect(detectSpikes(r, { jump: 200 }, { maxGapMs: GAP })).toEqual([]);
  });

  it("finds readings outside the sensor's physical range", () => {
    const r = series([640, -3, -5, 630, 250_000, 620]);
    expect(detectOutOfRange(r, { min: 0, max: 200_000 }, { maxGapMs: GAP })).toEqual([
      { startMs: at(1), endMs: at(3), peakValue: -5, peakMs: at(2), lastMs: at(2) },
      { startMs: at(4), endMs: at(5), peakValue: 250_000, peakMs: at(4), lastMs: at(4) },
    ]);
  });

  it("finds temperatures outside the ISO 7888 table (0.0–35.9 °C) that the linear method (−5…100 °C) accepts", () => {
    // Ranges from app/lib/water/compensation.ts (ISO 7888:1985 table; linear range accepted there).
    const r = series([1.2, 0.4, -0.3, -0.6, 0.2, 36.4, 20]);
    expect(detectOutOfRange(r, { min: 0, max: 35.9 }, { maxGapMs: GAP })).toEqual([
      { startMs: at(2), endMs: at(4), peakValue: -0.6, peakMs: at(3), lastMs: at(3) },
      { startMs: at(5), endMs: at(6), peakValue: 36.4, peakMs: at(5), lastMs: at(5) },
    ]);
    expect(detectOutOfRange(r, { min: -5, max: 100 }, { maxGapMs: GAP })).toEqual([]);
  });

  it("finds missing data longer than N logging intervals", () => {
    // Three days without readings (the demo's flat battery at QH1) and one missing reading.
    const before = series([96, 96, 97]);
    const afterStart = at(2) + 3 * 86_400_000;
    const after = [{ timeMs: afterStart, value: 95 }, { timeMs: afterStart + STEP, value: 95 }, { timeMs: afterStart + 3 * STEP, value: 96 }];
    const events = detectMissingData([...before, ...after], { intervals: 4, intervalMs: STEP });
    expect(events).toEqual([{ startMs: at(2), endMs: afterStart, peakValue: 72, peakMs: at(2), lastMs: afterStart }]);
    // With N = 1.5 the 30-minute step (one reading missing) counts as well.
    expect(detectMissingData([...before, ...after], { intervals: 1.5, intervalMs: STEP })).toHaveLength(2);
  });
});
