import type { Kysely } from "kysely";
import type { DB } from "#db/schema.ts";
import { DEFAULT_RULES } from "#app/lib/quality/default-rules.ts";

/**
 * Creates the default alert rules (app/lib/quality/default-rules.ts) that are missing, matched by
 * their key; rules already there are left exactly as an officer may have changed them. Idempotent.
 * Takes the database handle so the demo seed can call it with its own connection.
 */
export async function seedDefaultRules(db: Kysely<DB>) {
  let created = 0;
  for (const r of DEFAULT_RULES) {
    const row = await db
      .insertInto("alert_rule")
      .values({
        name: r.name,
        parameter: r.parameter,
        condition: r.condition,
        params: JSON.stringify(r.params),
        site_ids: null,
        site_kinds: r.siteKinds,
        notify_roles: r.notifyRoles,
        email: r.email,
        guideline_source: r.guidelineSource,
        default_key: r.key,
      })
      .onConflict((oc) => oc.column("default_key").doNothing())
      .returning("id")
      .executeTakeFirst();
    if (row) created++;
  }
  return { created, total: DEFAULT_RULES.length };
}
