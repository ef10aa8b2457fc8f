import { describe, expect, test } from "vitest";
import {
  correctedUsPerCm,
  correctionMagnitudePercent,
  proposeCorrections,
  proratedOffset,
  totalCorrectionUsPerCm,
  type ProratedCorrection,
} from "#app/lib/quality/corrections.ts";

// Proration: linear from zero at the earlier visit to the full value at the later one (Wagner et al.
// 2006, USGS TM 1-D3, record computation). Expected values below are worked by hand.
const DAY = 86_400_000;
const T0 = Date.UTC(2025, 5, 2, 10);

describe("linear proration between two visits", () => {
  const c: ProratedCorrection = { startMs: T0, endMs: T0 + 42 * DAY, startOffset: 0, endOffset: 12, unit: "percent" };

  test("zero at the earlier visit, the full value at the later one", () => {
    expect(proratedOffset(c, T0)).toBe(0);
    expect(proratedOffset(c, T0 + 42 * DAY)).toBe(12);
  });

  test("half way in time gives half the value", () => {
    expect(proratedOffset(c, T0 + 21 * DAY)).toBeCloseTo(6, 12);
  });

  test("a quarter of the way gives a quarter", () => {
    expect(proratedOffset(c, T0 + 10.5 * DAY)).toBeCloseTo(3, 12);
  });

  test("outside the period there is no correction", () => {
    expect(proratedOffset(c, T0 - 1)).toBeNull();
    expect(proratedOffset(c, T0 + 42 * DAY + 1)).toBeNull();
  });

  test("an officer's non-zero start offset prorates between the two ends", () => {
    const d = { ...c, startOffset: -2, endOffset: 8 };
    expect(proratedOffset(d, T0 + 21 * DAY)).toBeCloseTo(3, 12); // −2 + (8 − (−2)) / 2
  });

  test("percentages apply to the uncorrected value, µS/cm offsets as they are", () => {
    // 6 % of 500 µS/cm at the middle = 30 µS/cm.
    expect(totalCorrectionUsPerCm([c], T0 + 21 * DAY, 500)).toBeCloseTo(30, 9);
    const abs: ProratedCorrection = { ...c, unit: "us_cm", endOffset: 40 };
    expect(totalCorrectionUsPerCm([abs], T0 + 21 * DAY, 500)).toBeCloseTo(20, 9);
    expect(correctedUsPerCm([abs], T0 + 42 * DAY, 500)).toBeCloseTo(540, 9);
  });
});

describe("irregular visit intervals", () => {
  // Visits 10 days then 35 days apart: each period prorates over its own length.
  const first: ProratedCorrection = { startMs: T0, endMs: T0 + 10 * DAY, startOffset: 0, endOffset: 5, unit: "us_cm" };
  const second: ProratedCorrection = { startMs: T0 + 10 * DAY, endMs: T0 + 45 * DAY, startOffset: 0, endOffset: 14, unit: "us_cm" };

  test("day 4 of the short period: 4/10 of 5 µS/cm = 2 µS/cm", () => {
    expect(totalCorrectionUsPerCm([first, second], T0 + 4 * DAY, 300)).toBeCloseTo(2, 12);
  });

  test("day 7 of the long period: 7/35 of 14 µS/cm = 2.8 µS/cm", () => {
    expect(totalCorrectionUsPerCm([first, second], T0 + 17 * DAY, 300)).toBeCloseTo(2.8, 12);
  });

  test("at the visit between them, the first's full value and the second's zero add", () => {
    expect(totalCorrectionUsPerCm([first, second], T0 + 10 * DAY, 300)).toBeCloseTo(5, 12);
  });
});

describe("overlapping corrections add", () => {
  const fouling: ProratedCorrection = { startMs: T0, endMs: T0 + 40 * DAY, startOffset: 0, endOffset: 10, unit: "percent" };
  const drift: ProratedCorrection = { startMs: T0, endMs: T0 + 40 * DAY, startOffset: 0, endOffset: -4, unit: "percent" };
  const shift: ProratedCorrection = { startMs: T0 + 20 * DAY, endMs: T0 + 30 * DAY, startOffset: 7, endOffset: 7, unit: "us_cm" };

  test("at the middle: +5 % − 2 % of 400 µS/cm + 7 µS/cm = 19 µS/cm", () => {
    expect(totalCorrectionUsPerCm([fouling, drift, shift], T0 + 20 * DAY, 400)).toBeCloseTo(0.05 * 400 - 0.02 * 400 + 7, 9);
  });

  test("where only the two percentages cover: 10 % − 4 % at the end", () => {
    expect(totalCorrectionUsPerCm([fouling, drift, shift], T0 + 40 * DAY, 400)).toBeCloseTo(24, 9);
  });

  test("none covering gives null (stored as no correction)", () => {
    expect(totalCorrectionUsPerCm([fouling, drift, shift], T0 + 41 * DAY, 400)).toBeNull();
  });
});

describe("proposals from two consecutive visits", () => {
  const previous = { id: "a", visitedAtMs: T0 };

  test("a fouled sensor and a drifted calibration give a fouling and a drift proposal, prorated from 0", () => {
    const proposals = proposeCorrections(previous, {
      id: "b",
      visitedAtMs: T0 + 42 * DAY,
      recalibrated: true,
      before: { scUsPerCm: 528 },
      after: { scUsPerCm: 600 },
      meter: { scUsPerCm: 600 },
      checks: [{ standard: "1413", temperatureC: 25, sensorUsPerCm: 1413 * 1.045 }],
    });
    expect(proposals.map((p) => p.kind)).toEqual(["fouling", "drift"]);
    const [fouling, drift] = proposals;
    expect(fouling.startMs).toBe(T0);
    expect(fouling.endMs).toBe(T0 + 42 * DAY);
    expect(fouling.startOffset).toBe(0);
    expect(fouling.unit).toBe("percent");
    expect(fouling.endOffset).toBeCloseTo((100 * 72) / 528, 9); // 13.64 %
    expect(drift.endOffset).toBeCloseTo((1 / 1.045 - 1) * 100, 9); // −4.31 %
    expect(fouling.reason).toMatch(/read low by 72\.0 µS\/cm/);
  });

  test("errors within the criterion are not corrected", () => {
    const proposals = proposeCorrections(previous, {
      id: "b",
      visitedAtMs: T0 + 30 * DAY,
      recalibrated: false,
      before: { scUsPerCm: 598 },
      after: { scUsPerCm: 601 },
      checks: [{ standard: "1413", temperatureC: 25, sensorUsPerCm: 1420 }],
    });
    expect(proposals).toEqual([]);
  });

  test("nothing for visits out of order", () => {
    expect(proposeCorrections({ id: "a", visitedAtMs: T0 + DAY }, { id: "b", visitedAtMs: T0, recalibrated: false, before: { scUsPerCm: 100 }, after: { scUsPerCm: 200 }, checks: [] })).toEqual([]);
  });
});

describe("size of a correction for grading", () => {
  test("the larger end, in %; µS/cm against the reference value", () => {
    expect(correctionMagnitudePercent({ startOffset: -2, endOffset: 1, unit: "percent" }, null)).toBe(2);
    expect(correctionMagnitudePercent({ startOffset: 0, endOffset: 30, unit: "us_cm" }, 600)).toBeCloseTo(5, 12);
    expect(correctionMagnitudePercent({ startOffset: 0, endOffset: 30, unit: "us_cm" }, null)).toBeNull();
  });
});
