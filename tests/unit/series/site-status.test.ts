import { describe, expect, it } from "vitest";
import { formatAge, siteStatus, type LatestReading } from "#app/lib/quality/site-status.ts";
import type { DisplayThreshold } from "#app/lib/series/parameters.ts";

const NOW = Date.UTC(2025, 5, 1, 12);
const reading = (over: Partial<LatestReading> = {}): LatestReading => ({
  timeMs: NOW - 3600_000,
  conductivityUsPerCm: 480,
  loggerScUsPerCm: null,
  temperatureC: 12,
  qualityFlag: null,
  values: { sc25: 520, temperature: 12 },
  ...over,
});
const TH: DisplayThreshold[] = [
  { parameter: "sc25", bound: "upper", value: 1000 },
  { parameter: "sc25", bound: "lower", value: 100 },
];

describe("siteStatus", () => {
  it("says in range, above or below from the latest reading", () => {
    expect(siteStatus(reading(), TH, NOW).status).toBe("in-range");
    const above = siteStatus(reading({ values: { sc25: 1200 } }), TH, NOW);
    expect(above.status).toBe("above");
    expect(above.reasons[0]).toContain("above 1,000 µS/cm");
    expect(siteStatus(reading({ values: { sc25: 50 } }), TH, NOW).status).toBe("below");
    // Exactly at the threshold is not beyond it.
    expect(siteStatus(reading({ values: { sc25: 1000 } }), TH, NOW).status).toBe("in-range");
  });

  it("says no recent data when the latest reading is older than the limit or missing", () => {
    expect(siteStatus(reading({ timeMs: NOW - 8 * 86_400_000 }), TH, NOW).status).toBe("no-recent-data");
    expect(siteStatus(reading({ timeMs: NOW - 6 * 86_400_000 }), TH, NOW).status).toBe("in-range");
    expect(siteStatus(null, TH, NOW).status).toBe("no-recent-data");
  });

  it("says sensor problem for a flag, missing or implausible conductivity, implausible temperature", () => {
    expect(siteStatus(reading({ qualityFlag: "fouling" }), TH, NOW).status).toBe("sensor-problem");
    expect(siteStatus(reading({ conductivityUsPerCm: null }), TH, NOW).status).toBe("sensor-problem");
    expect(siteStatus(reading({ conductivityUsPerCm: null, loggerScUsPerCm: 500 }), TH, NOW).status).toBe("in-range");
    expect(siteStatus(reading({ conductivityUsPerCm: -3 }), TH, NOW).status).toBe("sensor-problem");
    expect(siteStatus(reading({ temperatureC: 71 }), TH, NOW).status).toBe("sensor-problem");
  });

  it("says so when no thresholds are set", () => {
    expect(siteStatus(reading(), [], NOW).status).toBe("no-thresholds");
  });
});

describe("formatAge", () => {
  it("reads naturally", () => {
    expect(formatAge(30_000)).toBe("just now");
    expect(formatAge(45 * 60_000)).toBe("45 min ago");
    expect(formatAge(5 * 3600_000)).toBe("5 h ago");
    expect(formatAge(3 * 86_400_000)).toBe("3 days ago");
  });
});
