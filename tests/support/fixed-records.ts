import type { Kysely } from "kysely";
import type { DB } from "#db/schema.ts";
import { labSampleColumns } from "#app/lib/lab/analysis-input.ts";

// Records with ids known before the tests run, so tables of routes (e.g. the authorisation table)
// can name concrete paths such as /admin/sites/<id>. Invented Marrowby data.
export const FIXED = {
  personId: "0d4c6f7e-3b1a-4e59-9a1c-5e2f00000001",
  siteId: "0d4c6f7e-3b1a-4e59-9a1c-5e2f00000002",
  loggerId: "0d4c6f7e-3b1a-4e59-9a1c-5e2f00000003",
  labSampleId: "0d4c6f7e-3b1a-4e59-9a1c-5e2f00000004",
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
  const { check, columns } = labSampleColumns({
    ions: { Ca: 54, Mg: 6.6, Na: 20.5, K: 3.2, Cl: 31, SO4: 30, HCO3: 146, NO3: 12.4 },
    measuredEc: 410,
    notes: "",
  });
  await db
    .insertInto("lab_sample")
    .values({
      ...columns,
      id: FIXED.labSampleId,
      site_id: FIXED.siteId,
      sampled_at: new Date("2025-03-14T09:30:00Z"),
      ions_mg_l: JSON.stringify(columns.ions_mg_l),
      results: JSON.stringify(check),
    })
    .onConflict((oc) => oc.doNothing())
    .execute();
}
