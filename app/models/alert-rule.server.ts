import { isDeepStrictEqual } from "node:util";
import type { Insertable, Transaction } from "kysely";
import type { AlertRuleTable, DB, RoleName, SiteKind } from "#db/schema.ts";
import { levelAtSiteReference, parseRuleCondition, ruleCoversSite, ruleVisibleTo } from "#app/lib/quality/alert-rules.ts";
import { db } from "#app/utils/db.server.ts";
import { enqueue } from "#app/utils/jobs.server.ts";

type Executor = typeof db | Transaction<DB>;

const RULE_COLUMNS = [
  "id",
  "name",
  "parameter",
  "condition",
  "params",
  "site_ids",
  "site_kinds",
  "notify_roles",
  "email",
  "emails_per_hour",
  "enabled",
  "guideline_source",
  "default_key",
  "updated_at",
  "updated_by",
] as const;

/** Every rule the role may see (app/lib/quality/alert-rules.ts says which), by name. The table is small. */
export async function listRulesFor(role: RoleName, trx: Executor = db) {
  const rows = await trx
    .selectFrom("alert_rule as r")
    .leftJoin("person as p", "p.id", "r.updated_by")
    .select(RULE_COLUMNS.map((c) => `r.${c}` as const))
    .select("p.name as updatedByName")
    .orderBy("r.enabled", "desc")
    .orderBy("r.name")
    .execute();
  return rows.filter((r) => ruleVisibleTo(role, r));
}

export async function findRule(id: string, trx: Executor = db) {
  return trx
    .selectFrom("alert_rule as r")
    .leftJoin("person as p", "p.id", "r.updated_by")
    .select(RULE_COLUMNS.map((c) => `r.${c}` as const))
    .select("p.name as updatedByName")
    .where("r.id", "=", id)
    .executeTakeFirst();
}

export type RuleRow = NonNullable<Awaited<ReturnType<typeof findRule>>>;

export type RuleValues = Omit<Insertable<AlertRuleTable>, "id" | "created_at" | "updated_at" | "updated_by" | "default_key">;

/** After a rule is created or changed, its events are brought in line with it over the whole record (in the background). */
async function evaluateLater(ruleId: string, trx: Executor) {
  await enqueue("evaluate-alert-rule", { ruleId }, { jobKey: `evaluate-rule:${ruleId}`, maxAttempts: 3 }, trx);
}

export async function createRule(actorId: string, values: RuleValues) {
  return db.transaction().execute(async (trx) => {
    const row = await trx
      .insertInto("alert_rule")
      .values({ ...values, updated_by: actorId })
      .returning("id")
      .executeTakeFirstOrThrow();
    if (values.enabled !== false) await evaluateLater(row.id, trx);
    return row.id;
  });
}

/** Saves a rule; returns "unchanged" when nothing differs. Stored events keep the levels they were found with until re-evaluated. */
export async function updateRule(actorId: string, id: string, values: RuleValues) {
  return db.transaction().execute(async (trx) => {
    const before = await trx.selectFrom("alert_rule").selectAll().where("id", "=", id).forUpdate().executeTakeFirst();
    if (!before) return "missing" as const;
    const same =
      before.name === values.name &&
      before.parameter === values.parameter &&
      before.condition === values.condition &&
      // Deep equality, not JSON text: jsonb gives its keys back in its own order.
      isDeepStrictEqual(before.params, JSON.parse(values.params as string)) &&
      isDeepStrictEqual(before.site_ids, values.site_ids ?? null) &&
      isDeepStrictEqual(before.site_kinds, values.site_kinds ?? null) &&
      isDeepStrictEqual(before.notify_roles, values.notify_roles ?? []) &&
      before.email === (values.email ?? false) &&
      before.emails_per_hour === (values.emails_per_hour ?? 4) &&
      before.enabled === (values.enabled ?? true) &&
      before.guideline_source === (values.guideline_source ?? "");
    if (same) return "unchanged" as const;
    await trx
      .updateTable("alert_rule")
      .set({ ...values, updated_by: actorId, updated_at: new Date() })
      .where("id", "=", id)
      .execute();
    if (values.enabled !== false) await evaluateLater(id, trx);
    return "saved" as const;
  });
}

export async function setRuleEnabled(actorId: string, id: string, enabled: boolean) {
  return db.transaction().execute(async (trx) => {
    const r = await trx
      .updateTable("alert_rule")
      .set({ enabled, updated_by: actorId, updated_at: new Date() })
      .where("id", "=", id)
      .where("enabled", "<>", enabled)
      .executeTakeFirst();
    const changed = Number(r.numUpdatedRows) > 0;
    if (changed && enabled) await evaluateLater(id, trx);
    return changed;
  });
}

/** Events found by a rule so far, by status (for the rule page). */
export async function eventCountsOfRule(ruleId: string, trx: Executor = db) {
  const rows = await trx
    .selectFrom("exceedance")
    .select((eb) => ["status", eb.fn.countAll<number>().as("n")])
    .where("rule_id", "=", ruleId)
    .groupBy("status")
    .execute();
  return Object.fromEntries(rows.map((r) => [r.status, Number(r.n)])) as Partial<Record<"open" | "closed" | "withdrawn", number>>;
}

export type ThresholdLine = { ruleId: string; ruleName: string; parameter: RuleRow["parameter"]; direction: "above" | "below"; threshold: number; clear: number };

/**
 * The enabled threshold rules covering a site, with their levels at the site's reference temperature:
 * the lines a site chart draws.
 */
export async function thresholdLinesForSite(
  site: { id: string; kind: SiteKind; compensation_method: "linear" | "natural-water"; alpha_per_c: number; reference_c: number },
  trx: Executor = db,
): Promise<ThresholdLine[]> {
  const rules = await trx
    .selectFrom("alert_rule")
    .select(["id", "name", "parameter", "condition", "params", "site_ids", "site_kinds"])
    .where("enabled", "=", true)
    .where("condition", "in", ["above", "below"])
    .orderBy("name")
    .execute();
  const out: ThresholdLine[] = [];
  for (const r of rules) {
    if (!ruleCoversSite({ siteIds: r.site_ids, siteKinds: r.site_kinds }, site)) continue;
    const rc = parseRuleCondition(r.condition, r.params);
    if (!rc || (rc.condition !== "above" && rc.condition !== "below")) continue;
    const at = r.parameter === "sc25" ? rc.params.referenceC : undefined;
    out.push({
      ruleId: r.id,
      ruleName: r.name,
      parameter: r.parameter,
      direction: rc.condition,
      threshold: levelAtSiteReference(rc.params.threshold, at, site),
      clear: levelAtSiteReference(rc.params.clear, at, site),
    });
  }
  return out;
}

/** Sites for the rule form's choices and for naming a rule's sites. */
export async function siteChoices(trx: Executor = db) {
  return trx.selectFrom("site").select(["id", "code", "name", "kind", "reference_c"]).orderBy("code").execute();
}

/** The rule's saved versions, newest first (written by a trigger on alert_rule, migration 0010). */
export async function ruleHistory(ruleId: string, limit = 50, trx: Executor = db) {
  return trx
    .selectFrom("alert_rule_change as c")
    .leftJoin("person as p", "p.id", "c.person_id")
    .select(["c.id", "c.at", "c.action", "c.before", "c.after", "p.name as personName"])
    .where("c.rule_id", "=", ruleId)
    .orderBy("c.at", "desc")
    .orderBy("c.id", "desc")
    .limit(limit)
    .execute();
}
