import { describe, expect, it } from "vitest";
import { canonicalTimeZone, formatInZone, toWallTime, wallTimeToInstant } from "#app/lib/zoned-time.ts";

// Expected instants come from the published UK clock-change rule: BST (UTC+1) runs from 01:00 UTC on
// the last Sunday of March to 01:00 UTC on the last Sunday of October (30 Mar and 26 Oct in 2025).
describe("wall times at a site", () => {
  it("reads a winter time in London as UTC and a summer time as UTC+1", () => {
    expect(wallTimeToInstant("2025-01-15T09:30", "Europe/London")).toEqual({ ok: true, instant: new Date("2025-01-15T09:30:00Z") });
    expect(wallTimeToInstant("2025-07-15T09:30", "Europe/London")).toEqual({ ok: true, instant: new Date("2025-07-15T08:30:00Z") });
  });

  it("handles zones east and west of Greenwich", () => {
    expect(wallTimeToInstant("2025-07-01T12:00", "Pacific/Auckland")).toEqual({ ok: true, instant: new Date("2025-07-01T00:00:00Z") });
    expect(wallTimeToInstant("2025-01-01T00:00", "America/New_York")).toEqual({ ok: true, instant: new Date("2025-01-01T05:00:00Z") });
  });

  it("refuses a time skipped when the clocks go forward", () => {
    expect(wallTimeToInstant("2025-03-30T01:30", "Europe/London")).toEqual({ ok: false, reason: "nonexistent" });
    expect(wallTimeToInstant("2025-03-30T02:00", "Europe/London")).toEqual({ ok: true, instant: new Date("2025-03-30T01:00:00Z") });
  });

  it("takes the first of a repeated hour when the clocks go back", () => {
    expect(wallTimeToInstant("2025-10-26T01:30", "Europe/London")).toEqual({ ok: true, instant: new Date("2025-10-26T00:30:00Z") });
  });

  it("refuses malformed and impossible dates", () => {
    for (const bad of ["", "2025-02-30T10:00", "2025-13-01T10:00", "2025-01-01 10:00", "2025-01-01T24:00", "yesterday"]) {
      expect(wallTimeToInstant(bad, "UTC")).toEqual({ ok: false, reason: "format" });
    }
  });

  it("round-trips through the datetime-local form", () => {
    const instant = new Date("2025-08-03T16:45:00Z");
    expect(toWallTime(instant, "Europe/London")).toBe("2025-08-03T17:45");
    expect(wallTimeToInstant(toWallTime(instant, "Europe/London"), "Europe/London")).toEqual({ ok: true, instant });
  });

  it("shows the zone's short name so a reader sees which clock", () => {
    expect(formatInZone(new Date("2025-01-15T09:30:00Z"), "Europe/London")).toMatch(/15 Jan 2025.*09:30.*GMT/);
    expect(formatInZone(new Date("2025-07-15T08:30:00Z"), "Europe/London")).toMatch(/15 Jul 2025.*09:30.*BST/);
  });

  it("knows real zone names and gives their canonical spelling", () => {
    expect(canonicalTimeZone("Europe/London")).toBe("Europe/London");
    expect(canonicalTimeZone("europe/london")).toBe("Europe/London");
    expect(canonicalTimeZone("UTC")).toBe("UTC");
    expect(canonicalTimeZone("Mars/Olympus_Mons")).toBeNull();
    expect(canonicalTimeZone("'; drop table site; --")).toBeNull();
  });
});
