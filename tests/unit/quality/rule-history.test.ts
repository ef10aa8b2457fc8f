import { describe, expect, it } from "vitest";
import { describeRuleChange, ruleFacts, type RuleSnapshot } from "#app/lib/quality/rule-history.ts";
import { ROLE_LABELS } from "#app/utils/permissions.ts";
import { SITE_KIND_LABELS } from "#app/utils/site-labels.ts";

// The rule history's words (app/lib/quality/rule-history.ts). Invented rules; the expected words are
// the rule page's own (describeCondition, describeScope), so these check the diffing, not wording.
const labels = {
  sites: [{ id: "s1", code: "QF2", kind: "river" as const }],
  kinds: SITE_KIND_LABELS,
  roles: ROLE_LABELS,
};

const rule = (over: Partial<RuleSnapshot> = {}): RuleSnapshot => ({
  name: "QF2 high",
  parameter: "sc25",
  condition: "above",
  params: { threshold: 2500, clear: 2400, minDurationMin: 30, referenceC: 25 },
  site_ids: ["s1"],
  site_kinds: null,
  notify_roles: ["officer"],
  email: false,
  emails_per_hour: 4,
  enabled: true,
  guideline_source: "",
  ...over,
});

describe("rule history", () => {
  it("lists every fact of a new rule", () => {
    const changes = describeRuleChange(null, rule(), labels);
    expect(changes.map((c) => c.label)).toEqual(["Name", "Parameter", "Condition", "Where", "Tells", "State", "Source"]);
    expect(changes.every((c) => c.before === null)).toBe(true);
    expect(changes.find((c) => c.label === "Where")!.after).toBe("QF2");
  });

  it("lists only what differs between two versions", () => {
    const changes = describeRuleChange(rule(), rule({ enabled: false, email: true, emails_per_hour: 2 }), labels);
    expect(changes).toEqual([
      { label: "Tells", before: ROLE_LABELS.officer, after: `${ROLE_LABELS.officer}, and by e-mail (at most 2 an hour)` },
      { label: "State", before: "On", after: "Off" },
    ]);
    expect(describeRuleChange(rule(), rule(), labels)).toEqual([]);
  });

  it("says so when stored settings no longer fit their condition, instead of failing", () => {
    const facts = ruleFacts(rule({ params: { nonsense: true } }), labels);
    expect(facts.find((f) => f.label === "Condition")!.value).toContain("settings that do not fit");
  });

  it("names a site that has been removed since", () => {
    expect(ruleFacts(rule({ site_ids: ["gone"] }), labels).find((f) => f.label === "Where")!.value).toBe("a removed site");
  });
});
