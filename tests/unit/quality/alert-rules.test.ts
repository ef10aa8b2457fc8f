import { describe, expect, it } from "vitest";
import {
  compensationRangeC,
  describeCondition,
  levelAtSiteReference,
  parseRuleCondition,
  ruleCoversSite,
  ruleVisibleTo,
  showValue,
} from "#app/lib/quality/alert-rules.ts";
import { DEFAULT_RULES, SCREENING_NOTE } from "#app/lib/quality/default-rules.ts";
import { formatDuration, formatPeak } from "#app/lib/quality/exceedance-words.ts";

describe("levels at a site's reference temperature", () => {
  it("converts 2,500 µS/cm at 20 °C to 25 °C with the linear coefficient", () => {
    // Standard Methods 2510 B linear form: κ25 = κ20 / (1 + α (20 − 25)); α = 0.0191 /°C:
    // 2500 / 0.9045 = 2763.97 (worked by hand).
    const site = { compensation_method: "linear" as const, alpha_per_c: 0.0191, reference_c: 25 };
    expect(levelAtSiteReference(2500, 20, site)).toBeCloseTo(2763.97, 1);
  });

  it("converts with the ISO 7888 natural-water table (f25 at 20 °C = 1.116)", () => {
    // ISO 7888:1985: κ25 = f25(20 °C) × κ20 with f25(20.0) = 1.116 (the table's value, as in app/lib/water).
    const site = { compensation_method: "natural-water" as const, alpha_per_c: 0.0191, reference_c: 25 };
    expect(levelAtSiteReference(2500, 20, site)).toBeCloseTo(2790, 0);
  });

  it("leaves a level alone when the site reports at the stated temperature", () => {
    const site = { compensation_method: "linear" as const, alpha_per_c: 0.0191, reference_c: 20 };
    expect(levelAtSiteReference(2500, 20, site)).toBe(2500);
    expect(levelAtSiteReference(2500, undefined, site)).toBe(2500);
  });

  it("names the temperatures each compensation method is valid for", () => {
    expect(compensationRangeC({ compensation_method: "natural-water" })).toEqual([0, 35.9]);
    expect(compensationRangeC({ compensation_method: "linear" })).toEqual([-5, 100]);
  });
});

describe("stored rule settings", () => {
  it("accepts a threshold with its clear level on the right side and refuses the wrong side", () => {
    expect(parseRuleCondition("above", { threshold: 500, clear: 475, minDurationMin: 60 })).not.toBeNull();
    expect(parseRuleCondition("above", { threshold: 500, clear: 525, minDurationMin: 60 })).toBeNull();
    expect(parseRuleCondition("below", { threshold: 250, clear: 240, minDurationMin: 0 })).toBeNull();
    expect(parseRuleCondition("flat-line", { readings: 1, tolerance: 0 })).toBeNull();
    expect(parseRuleCondition("out-of-range", { min: 10, max: 5 })).toBeNull();
  });

  it("describes a condition in the units it was entered in", () => {
    const rc = parseRuleCondition("above", { threshold: 2500, clear: 2375, minDurationMin: 60, referenceC: 20, unit: "mS/cm", durationUnit: "h" })!;
    expect(describeCondition("sc25", rc)).toBe("above 2.5 mS/cm at 20 °C for at least 1 h; clears at 2.375 mS/cm");
    expect(showValue("tds", 500)).toBe("500 mg/L");
    expect(showValue("ph", 6.5)).toBe("pH 6.5");
  });

  it("parses every default rule, and every water-level default names its source and the screening caution", () => {
    for (const r of DEFAULT_RULES) {
      expect(parseRuleCondition(r.condition, r.params), r.key).not.toBeNull();
      if (r.condition === "above" || r.condition === "below") expect(r.guidelineSource, r.key).toContain(SCREENING_NOTE);
    }
    // The guideline values themselves (US EPA 40 CFR 143.3; WHO GDWQ 4th ed.; Directive (EU) 2020/2184 Annex I Part C; all from memory).
    const byKey = Object.fromEntries(DEFAULT_RULES.map((r) => [r.key, r.params]));
    expect(byKey["us-epa-smcl-tds"]).toMatchObject({ threshold: 500 });
    expect(byKey["who-gdwq-tds-good"]).toMatchObject({ threshold: 600 });
    expect(byKey["who-gdwq-tds-unpalatable"]).toMatchObject({ threshold: 1000 });
    expect(byKey["eu-dwd-2020-conductivity"]).toMatchObject({ threshold: 2500, referenceC: 20 });
  });
});

describe("who sees a rule, and where it applies", () => {
  const sensor = { condition: "flat-line" as const, notify_roles: ["technician" as const] };
  const officersOnly = { condition: "above" as const, notify_roles: ["officer" as const] };
  const managers = { condition: "above" as const, notify_roles: ["officer" as const, "manager" as const] };
  const levelForTechnicians = { condition: "above" as const, notify_roles: ["technician" as const] };

  it("shows officers and admins every rule", () => {
    for (const r of [sensor, officersOnly, managers]) {
      expect(ruleVisibleTo("officer", r)).toBe(true);
      expect(ruleVisibleTo("admin", r)).toBe(true);
    }
  });

  it("shows managers the rules that notify managers, technicians the sensor checks that notify technicians", () => {
    expect(ruleVisibleTo("manager", managers)).toBe(true);
    expect(ruleVisibleTo("manager", officersOnly)).toBe(false);
    expect(ruleVisibleTo("technician", sensor)).toBe(true);
    expect(ruleVisibleTo("technician", levelForTechnicians)).toBe(false);
    expect(ruleVisibleTo("technician", officersOnly)).toBe(false);
  });

  it("covers listed sites, sites of listed kinds, or every site", () => {
    const river = { id: "a", kind: "river" as const };
    expect(ruleCoversSite({ siteIds: ["a"], siteKinds: null }, river)).toBe(true);
    expect(ruleCoversSite({ siteIds: ["b"], siteKinds: null }, river)).toBe(false);
    expect(ruleCoversSite({ siteIds: null, siteKinds: ["borehole"] }, river)).toBe(false);
    expect(ruleCoversSite({ siteIds: null, siteKinds: null }, river)).toBe(true);
  });
});

describe("event words", () => {
  it("formats durations and peaks with units", () => {
    expect(formatDuration(3 * 3600 + 20 * 60)).toBe("3 h 20 min");
    expect(formatDuration(2 * 86400 + 4 * 3600)).toBe("2 days 4 h");
    expect(formatDuration(0)).toBe("a single reading");
    expect(formatPeak("above", "sc25", 3171.4)).toBe("3,171.4 µS/cm");
    expect(formatPeak("rate-of-change", "sc25", -220)).toBe("fell by 220 µS/cm");
    expect(formatPeak("missing-data", "conductivity", 72)).toBe("no readings for 3 days");
  });
});
