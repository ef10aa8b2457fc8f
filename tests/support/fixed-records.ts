import type { Kysely } from "kysely";
import type { DB } from "#db/schema.ts";

// Records with ids known before the tests run, so tables of routes (e.g. the authorisation table)
// can name concrete paths such as /admin/sites/<id>. Invented Marrowby data.
export const FIXED = {
  personId: "0d4c6f7e-3b1a-4e59-9a1c-5e2f00000001",
  siteId: "0d4c6f7e-3b1a-4e59-9a1c-5e2f00000002",
  loggerId: "0d4c6f7e-3b1a-4e59-9a1c-5e2f00000003",
} as const;

export async function createFixedRecords(db: Kysely<DB>) {
  await db
    .insertInto("person")
    .values({ id: FIXED.personId, email: "fixed.person@test.example", name: "Fixed Person", role: "technician", password_hash: null })
    .onConflict((oc) => oc.doNothing())
    .execute();
  await db
    .insertInto("site")
    .values({ id: FIXED.siteId, code: "FX-01", name: "Fixture Weir", kind: "river", latitude: 51.5, longitude: -2.6, time_zone: "Europe/London" })
    .onConflict((oc) => oc.doNothing())
    .execute();
  await db
    .insertInto("logger")
    .values({ id: FIXED.loggerId, serial: "FX-LOGGER-1", model: "Fixture conductivity logger", logging_interval_s: 900 })
    .onConflict((oc) => oc.doNothing())
    .execute();
}
