import { describe, expect, it } from "vitest";
import { heatmapValueText, percentText, weekStatus } from "#app/lib/series/week-status.ts";

const quiet = { readings: 672, completeness: 1, eventsTotal: 0, thresholds: [{ parameter: "sc25", bound: "upper" as const, value: 900, share: 0 }], grade: "good" };

describe("weekStatus", () => {
  it("is steady when nothing stands out", () => {
    expect(weekStatus(quiet)).toEqual({ status: "steady", reasons: [] });
  });
  it("asks for a look at events and time beyond a threshold, listing watch reasons after", () => {
    const r = weekStatus({ ...quiet, eventsTotal: 1, completeness: 0.5, thresholds: [{ parameter: "sc25", bound: "upper", value: 900, share: 0.125 }] });
    expect(r.status).toBe("act");
    expect(r.reasons).toEqual([
      "1 exceedance event began this week.",
      "specific conductance above its threshold 12.5 % of the time.",
      "Only 50 % of expected readings received.",
    ]);
  });
  it("watches low completeness, a poor grade and a rising trend", () => {
    expect(weekStatus({ ...quiet, completeness: 0.89 }).status).toBe("watch");
    expect(weekStatus({ ...quiet, completeness: 0.9 }).status).toBe("steady"); // the limit itself is enough
    expect(weekStatus({ ...quiet, grade: "poor" }).reasons).toEqual(["Poor data grade."]);
    expect(weekStatus({ ...quiet, grade: "beyond-limit" }).status).toBe("act");
    expect(weekStatus(quiet, { direction: "rising", slopePerYear: 12.5 }).reasons).toEqual(["Long-term rise of +12.5 µS/cm a year."]);
    expect(weekStatus(quiet, { direction: "falling", slopePerYear: -3 }).status).toBe("steady");
  });
  it("says when a week had no readings", () => {
    expect(weekStatus(null).status).toBe("silent");
    expect(weekStatus({ ...quiet, readings: 0 }).status).toBe("silent");
  });
  it("formats shares and heat-map cells", () => {
    expect(percentText(0.0004)).toBe("< 0.1 %");
    expect(percentText(null)).toBe("—");
    expect(heatmapValueText("completeness", 0.716)).toBe("72 %");
    expect(heatmapValueText("sc25-median", 1234.4)).toBe("1,234 µS/cm");
    expect(heatmapValueText("events", 3)).toBe("3");
  });
});
