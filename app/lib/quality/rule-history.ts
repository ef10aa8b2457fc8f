import type { AlertConditionName, AlertParameterName, RoleName, SiteKind } from "#db/schema.ts";
import { CONDITION_LABELS, describeCondition, describeScope, PARAMETER_NAMES, parseRuleCondition, type ScopeSite } from "./alert-rules.ts";

// A rule's history in words: each stored version (alert_rule_change, migration 0010) is turned into
// the same facts the rule page shows, and a change is the facts that differ. Pure: the page passes
// the site list and the labels.

/** The columns of an alert_rule row that a person sets (a stored row, or one version from the history table). */
export type RuleSnapshot = {
  name: string;
  parameter: AlertParameterName;
  condition: AlertConditionName;
  params: unknown;
  site_ids: string[] | null;
  site_kinds: SiteKind[] | null;
  notify_roles: RoleName[];
  email: boolean;
  emails_per_hour: number;
  enabled: boolean;
  guideline_source: string;
};

export type RuleFact = { label: string; value: string };
export type FactChange = { label: string; before: string | null; after: string };

type Labels = { sites: readonly ScopeSite[]; kinds: Record<SiteKind, string>; roles: Record<RoleName, string> };

export function ruleFacts(rule: RuleSnapshot, labels: Labels): RuleFact[] {
  const rc = parseRuleCondition(rule.condition, rule.params);
  const roles = rule.notify_roles.length ? rule.notify_roles.map((r) => labels.roles[r]).join(", ") : "nobody";
  return [
    { label: "Name", value: rule.name },
    { label: "Parameter", value: PARAMETER_NAMES[rule.parameter] ?? rule.parameter },
    { label: "Condition", value: `${CONDITION_LABELS[rule.condition] ?? rule.condition}: ${rc ? describeCondition(rule.parameter, rc) : "settings that do not fit the condition"}` },
    { label: "Where", value: describeScope({ siteIds: rule.site_ids, siteKinds: rule.site_kinds }, labels.sites, labels.kinds) },
    { label: "Tells", value: rule.email ? `${roles}, and by e-mail (at most ${rule.emails_per_hour} an hour)` : roles },
    { label: "State", value: rule.enabled ? "On" : "Off" },
    { label: "Source", value: rule.guideline_source || "none given" },
  ];
}

/** What a saved version changed: every fact for a new rule, otherwise only the facts that differ. */
export function describeRuleChange(before: RuleSnapshot | null, after: RuleSnapshot, labels: Labels): FactChange[] {
  const now = ruleFacts(after, labels);
  if (!before) return now.map((f) => ({ label: f.label, before: null, after: f.value }));
  const then = new Map(ruleFacts(before, labels).map((f) => [f.label, f.value]));
  return now.filter((f) => then.get(f.label) !== f.value).map((f) => ({ label: f.label, before: then.get(f.label) ?? null, after: f.value }));
}
