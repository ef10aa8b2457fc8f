import type { Kysely } from "kysely";
import type { DB } from "#db/schema.ts";
import type { ImportProfile } from "#app/lib/import/profile.ts";
import { FIXED } from "./fixed-records.ts";

// An import profile and a finished upload with known ids, for tables of routes such as
// /uploads/<id>. The upload belongs to technician@test.example (createPeople) and uses the fixed
// site and logger (createFixedRecords): call both first. Nothing is stored in S3 for it.
export const FIXED_UPLOAD = {
  profileId: "0d4c6f7e-3b1a-4e59-9a1c-5e2f00000011",
  uploadId: "0d4c6f7e-3b1a-4e59-9a1c-5e2f00000012",
} as const;

export const FIXTURE_PROFILE: ImportProfile = {
  delimiter: ",",
  decimalMark: ".",
  headerRow: 0,
  dataStartRow: 1,
  timestamp: { kind: "single", column: 0, order: "iso" },
  utcOffsetMinutes: 0,
  missingValues: ["", "NaN"],
  columns: [
    { index: 0, header: "Time (UTC)", parameter: "timestamp", unit: null },
    { index: 1, header: "EC (uS/cm)", parameter: "conductivity", unit: "µS/cm" },
  ],
};

export async function createFixedUploadRecords(db: Kysely<DB>) {
  const owner = await db.selectFrom("person").select("id").where("email", "=", "technician@test.example").executeTakeFirstOrThrow();
  await db
    .insertInto("import_profile")
    .values({ id: FIXED_UPLOAD.profileId, name: "Fixture layout", header_signature: "time (utc)|ec (us/cm)", settings: JSON.stringify(FIXTURE_PROFILE) })
    .onConflict((oc) => oc.doNothing())
    .execute();
  await db
    .insertInto("upload")
    .values({
      id: FIXED_UPLOAD.uploadId,
      object_key: `uploads/${FIXED_UPLOAD.uploadId}/fixture.csv`,
      file_name: "fixture.csv",
      size_bytes: 120,
      content_type: "text/csv",
      sha256: "f".repeat(64),
      site_id: FIXED.siteId,
      logger_id: FIXED.loggerId,
      profile_id: FIXED_UPLOAD.profileId,
      uploaded_by: owner.id,
      status: "done",
      rows_total: 3,
      rows_accepted: 3,
    })
    .onConflict((oc) => oc.doNothing())
    .execute();
}
