import { getISOWeek, getISOWeekYear, startOfISOWeek } from "date-fns";
import { describe, expect, it } from "vitest";
import { addWeeks, isoWeekOf, isoWeekStart, lastCompleteWeek, mondayOf, parseWeekKey, sameWeekLastYear, weekKey, weekLabel, weekStartAt } from "#app/lib/series/weeks.ts";

// ISO weeks checked against date-fns (an independent implementation) over six years of days, and a
// few calendar facts stated beside each expectation.

function ymd(d: Date) {
  return `${d.getFullYear()}-${String(d.getMonth() + 1).padStart(2, "0")}-${String(d.getDate()).padStart(2, "0")}`;
}

describe("ISO weeks", () => {
  it("agree with date-fns for every day from 2020 to 2025", () => {
    for (let t = new Date(2020, 0, 1, 12); t.getFullYear() < 2026; t = new Date(t.getFullYear(), t.getMonth(), t.getDate() + 1, 12)) {
      const date = ymd(t);
      expect(isoWeekOf(date)).toEqual({ year: getISOWeekYear(t), week: getISOWeek(t) });
      expect(mondayOf(date)).toBe(ymd(startOfISOWeek(t)));
    }
  });

  it("knows the edges of ISO years (calendar)", () => {
    expect(isoWeekOf("2024-12-30")).toEqual({ year: 2025, week: 1 }); // Monday 30 Dec 2024 starts 2025-W01
    expect(isoWeekOf("2021-01-03")).toEqual({ year: 2020, week: 53 }); // 2020 had 53 ISO weeks
    expect(isoWeekStart(2020, 53)).toBe("2020-12-28");
    expect(isoWeekStart(2025, 53)).toBeNull(); // 2025 has 52
    expect(sameWeekLastYear("2021-12-27")).toBe("2020-12-21"); // 2021-W52 → 2020-W52 (2020-W53 begins on the 28th)
    expect(sameWeekLastYear(isoWeekStart(2026, 53)!)).toBeNull(); // 2026 has 53 weeks, 2025 does not
  });

  it("parses and names weeks", () => {
    expect(parseWeekKey("2025-W11")).toBe("2025-03-10");
    expect(parseWeekKey("2025-03-13")).toBe("2025-03-10");
    expect(parseWeekKey("2025-W54")).toBeNull();
    expect(parseWeekKey("2025-02-30")).toBeNull();
    expect(parseWeekKey("'; drop table x")).toBeNull();
    expect(weekKey("2025-03-10")).toBe("2025-W11");
    expect(weekLabel("2025-03-10")).toBe("Week 11 of 2025 · 10–16 Mar 2025");
    expect(weekLabel("2025-04-28")).toBe("Week 18 of 2025 · 28 Apr–4 May 2025");
    expect(weekLabel("2025-12-29")).toBe("Week 1 of 2026 · 29 Dec 2025–4 Jan 2026");
    expect(addWeeks("2025-03-10", -2)).toBe("2025-02-24");
  });

  it("finds the week at a site's clock, across the clock change", () => {
    // 23:30 UTC on Sunday 30 March 2025 is 00:30 BST on Monday 31 March in London.
    expect(weekStartAt(new Date("2025-03-30T23:30:00Z"), "Europe/London")).toBe("2025-03-31");
    expect(weekStartAt(new Date("2025-03-30T23:30:00Z"), "UTC")).toBe("2025-03-24");
    // Monday 9:00 London: the last complete week is the one before.
    expect(lastCompleteWeek(new Date("2025-03-17T09:00:00Z"), "Europe/London")).toBe("2025-03-10");
  });
});
