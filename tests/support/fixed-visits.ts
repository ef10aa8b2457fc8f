import type { Kysely } from "kysely";
import type { DB } from "#db/schema.ts";
import { FIXED } from "./fixed-records.ts";

// A field visit with a known id, for tables of routes such as /visits/<id>. It was recorded by
// technician@test.example (createPeople) at the fixed site and logger (createFixedRecords): call
// both first. Invented Marrowby-style values.
export const FIXED_VISIT = {
  visitId: "0d4c6f7e-3b1a-4e59-9a1c-5e2f00000021",
} as const;

export async function createFixedVisitRecords(db: Kysely<DB>) {
  const technician = await db.selectFrom("person").select("id").where("email", "=", "technician@test.example").executeTakeFirstOrThrow();
  await db
    .insertInto("logger_deployment")
    .values({ logger_id: FIXED.loggerId, site_id: FIXED.siteId, deployed_from: new Date("2025-01-01T00:00:00Z") })
    .execute();
  await db
    .insertInto("field_visit")
    .values({
      id: FIXED_VISIT.visitId,
      site_id: FIXED.siteId,
      logger_id: FIXED.loggerId,
      visited_at: new Date("2025-03-14T10:00:00Z"),
      technician_id: technician.id,
      before_sc_us_cm: 402,
      after_sc_us_cm: 405,
      meter_sc_us_cm: 404,
      fouling_error_us_cm: 3,
      fouling_error_percent: (100 * 3) / 404,
      fouling_passed: true,
      created_by: technician.id,
      updated_by: technician.id,
    })
    .onConflict((oc) => oc.doNothing())
    .execute();
}
