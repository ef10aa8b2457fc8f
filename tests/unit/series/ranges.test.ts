import { describe, expect, it } from "vitest";
import { parseInstant, rangeAnchor, resolveRange } from "#app/lib/series/ranges.ts";

const ANCHOR = Date.UTC(2025, 6, 10, 12, 0);

describe("resolveRange", () => {
  it("ends presets at the anchor with fixed lengths", () => {
    expect(resolveRange(new URLSearchParams("range=day"), ANCHOR, "Europe/London")).toEqual({ fromMs: ANCHOR - 86_400_000, toMs: ANCHOR, preset: "day" });
    expect(resolveRange(new URLSearchParams("range=year"), ANCHOR, "UTC").fromMs).toBe(ANCHOR - 365 * 86_400_000);
    // Unknown preset → the default week.
    expect(resolveRange(new URLSearchParams("range=fortnight"), ANCHOR, "UTC").preset).toBe("week");
  });

  it("reads custom wall times at the site's clock", () => {
    // 1 July 2025 00:00 in London is BST (UTC+1): 30 June 23:00 UTC. 1 Jan 2025 is GMT (UTC+0).
    const r = resolveRange(new URLSearchParams("range=custom&from=2025-01-01T00:00&to=2025-07-01T00:00"), ANCHOR, "Europe/London");
    expect(r.preset).toBe("custom");
    expect(new Date(r.fromMs).toISOString()).toBe("2025-01-01T00:00:00.000Z");
    expect(new Date(r.toMs).toISOString()).toBe("2025-06-30T23:00:00.000Z");
  });

  it("accepts ISO instants with a zone as they are", () => {
    const r = resolveRange(new URLSearchParams("from=2025-03-01T00:00:00Z&to=2025-03-02T00:00:00%2B02:00"), ANCHOR, "Europe/London");
    expect(new Date(r.fromMs).toISOString()).toBe("2025-03-01T00:00:00.000Z");
    expect(new Date(r.toMs).toISOString()).toBe("2025-03-01T22:00:00.000Z");
  });

  it("falls back to the last week with a problem for unreadable, backwards or too long ranges", () => {
    for (const q of ["from=yesterday&to=today", "from=2025-03-02T00:00&to=2025-03-01T00:00", "from=1990-01-01T00:00&to=2025-01-01T00:00"]) {
      const r = resolveRange(new URLSearchParams(q), ANCHOR, "UTC");
      expect(r.preset).toBe("week");
      expect(r.fromMs).toBe(ANCHOR - 7 * 86_400_000);
      expect(r.problem).toMatch(/showing the last week/);
    }
  });
});

describe("parseInstant and rangeAnchor", () => {
  it("reads a date alone as midnight at the site", () => {
    // 2025-07-01 midnight BST = 2025-06-30T23:00Z.
    expect(parseInstant("2025-07-01", "Europe/London")).toBe(Date.UTC(2025, 5, 30, 23));
    expect(parseInstant("", "UTC")).toBeNull();
  });

  it("anchors after the latest reading, on a whole minute", () => {
    // Latest reading 12:14:30 → anchor 12:15:00 (the reading falls inside [from, to)).
    expect(rangeAnchor(Date.UTC(2025, 0, 1, 12, 14, 30), 0)).toBe(Date.UTC(2025, 0, 1, 12, 15));
    expect(rangeAnchor(Date.UTC(2025, 0, 1, 12, 14), 0)).toBe(Date.UTC(2025, 0, 1, 12, 15));
    expect(rangeAnchor(null, Date.UTC(2025, 0, 1, 8, 0, 1))).toBe(Date.UTC(2025, 0, 1, 8, 1));
  });
});
