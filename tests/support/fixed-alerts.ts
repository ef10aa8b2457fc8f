import type { Kysely } from "kysely";
import type { DB } from "#db/schema.ts";
import { FIXED } from "./fixed-records.ts";

// An alert rule and one of its events with known ids, for tables of routes such as
// /alert-rules/<id> and /exceedances/<id>. The rule tells officers and managers about the fixed
// site; the manager (createPeople's manager@test.example) has been told about the event. Call
// createPeople and createFixedRecords first.
export const FIXED_ALERTS = {
  ruleId: "0d4c6f7e-3b1a-4e59-9a1c-5e2f00000021",
  exceedanceId: "0d4c6f7e-3b1a-4e59-9a1c-5e2f00000022",
} as const;

export async function createFixedAlertRecords(db: Kysely<DB>) {
  await db
    .insertInto("alert_rule")
    .values({
      id: FIXED_ALERTS.ruleId,
      name: "Fixture: high specific conductance",
      parameter: "sc25",
      condition: "above",
      params: JSON.stringify({ threshold: 1500, clear: 1400, minDurationMin: 30, unit: "µS/cm", durationUnit: "min" }),
      site_ids: [FIXED.siteId],
      notify_roles: ["officer", "manager"],
    })
    .onConflict((oc) => oc.doNothing())
    .execute();
  await db
    .insertInto("exceedance")
    .values({
      id: FIXED_ALERTS.exceedanceId,
      rule_id: FIXED_ALERTS.ruleId,
      site_id: FIXED.siteId,
      parameter: "sc25",
      condition: "above",
      started_at: new Date("2025-03-14T10:00:00Z"),
      ended_at: new Date("2025-03-14T12:00:00Z"),
      last_reading_at: new Date("2025-03-14T11:45:00Z"),
      duration_s: 7200,
      peak_value: 1712,
      peak_at: new Date("2025-03-14T11:00:00Z"),
      threshold_value: 1500,
      clear_value: 1400,
    })
    .onConflict((oc) => oc.doNothing())
    .execute();
  const manager = await db.selectFrom("person").select("id").where("email", "=", "manager@test.example").executeTakeFirst();
  if (manager) {
    await db.insertInto("notification").values({ person_id: manager.id, exceedance_id: FIXED_ALERTS.exceedanceId }).onConflict((oc) => oc.doNothing()).execute();
  }
}
