import { beforeAll, describe, expect, it } from "vitest";
import { sql } from "kysely";
import { db } from "#app/utils/db.server.ts";
import { ensureBucket } from "#app/utils/storage.server.ts";
import type { ImportProfile } from "#app/lib/import/profile.ts";
import { runRecomputeJob } from "#app/jobs/recompute.server.ts";
import { currentSettingsId } from "#app/models/derivation.server.ts";
import { request, signIn, type Jar } from "../support/app.ts";
import { createPeople, TEST_PASSWORD } from "../support/people.ts";
import { processUpload, uploadFile } from "../support/uploads.ts";

// The whole upload path against the real PostgreSQL and the S3 fake:
// presign → PUT → confirm → ingest job → readings, error report, duplicates, re-process, recompute.
const PROFILE: ImportProfile = {
  delimiter: ",",
  decimalMark: ".",
  headerRow: 0,
  dataStartRow: 1,
  timestamp: { kind: "single", column: 0, order: "iso" },
  utcOffsetMinutes: 0,
  missingValues: ["", "NaN", "-9999"],
  columns: [
    { index: 0, header: "Timestamp (UTC)", parameter: "timestamp", unit: null },
    { index: 1, header: "Cond (uS/cm)", parameter: "conductivity", unit: "µS/cm" },
    { index: 2, header: "Temp (C)", parameter: "temperature", unit: "°C" },
  ],
};

function file(rows: [string, string, string][]) {
  return ["Timestamp (UTC),Cond (uS/cm),Temp (C)", ...rows.map((r) => r.join(","))].join("\n") + "\n";
}

function series(startIso: string, count: number, stepMin = 15, cond = (i: number) => 500 + i, temp = (_i: number) => 12.5) {
  const start = Date.parse(startIso);
  return Array.from({ length: count }, (_, i) => [new Date(start + i * stepMin * 60_000).toISOString(), String(cond(i)), String(temp(i))] as [string, string, string]);
}

let jar: Jar;
let siteId: string;
let loggerId: string;
let profileId: string;

beforeAll(async () => {
  await ensureBucket();
  await createPeople(db);
  jar = await signIn("technician@test.example", TEST_PASSWORD);
  const site = await db
    .insertInto("site")
    .values({ code: "TST1", name: "Test river", kind: "river", latitude: 54.3, longitude: -2.9, compensation_method: "linear", alpha_per_c: 0.0191, reference_c: 25, tds_factor: 0.65 })
    .returning("id")
    .executeTakeFirstOrThrow();
  siteId = site.id;
  loggerId = (await db.insertInto("logger").values({ serial: "TST-0001" }).returning("id").executeTakeFirstOrThrow()).id;
  profileId = (
    await db.insertInto("import_profile").values({ name: "Test layout", header_signature: "x", settings: JSON.stringify(PROFILE) }).returning("id").executeTakeFirstOrThrow()
  ).id;
});

async function readingsOf(uploadId: string) {
  return db.selectFrom("readings").selectAll().where("upload_id", "=", uploadId).orderBy("time").execute();
}

describe("ingest", () => {
  it("loads a file end to end, converting and deriving values", async () => {
    const body = file([
      ["2025-03-01T00:00:00Z", "1000", "25"],
      ["2025-03-01T00:15:00Z", "1000", "15"],
      ["2025-03-01T00:30:00Z", "-5", "15"], // rejected: negative conductivity
      ["2025-03-01T00:45:00Z", "-9999", "15"], // sentinel conductivity, temperature kept
    ]);
    const up = await uploadFile(jar, { fileName: "round-1.csv", body, siteId, loggerId, profileId });
    expect(up.ok).toBe(true);
    expect(up.confirmed?.status).toBe("queued");
    const done = await processUpload(up.uploadId!);
    expect(done.status).toBe("done");
    expect(done.rows_total).toBe(4);
    expect(done.rows_accepted).toBe(3);
    expect(done.rows_rejected).toBe(1);
    expect(done.first_reading_at?.toISOString()).toBe("2025-03-01T00:00:00.000Z");
    expect(done.last_reading_at?.toISOString()).toBe("2025-03-01T00:45:00.000Z");

    const rows = await readingsOf(up.uploadId!);
    expect(rows.map((r) => r.row_number)).toEqual([2, 3, 5]);
    // At 25 °C the linear factor is exactly 1 (Standard Methods 2510 B); TDS = 0.65 × SC.
    expect(rows[0].sc25_us_cm).toBeCloseTo(1000, 9);
    expect(rows[0].tds_mg_l).toBeCloseTo(650, 9);
    // At 15 °C: SC = 1000 / (1 + 0.0191 × (15 − 25)) = 1000 / 0.809 = 1236.09 (worked by hand).
    expect(rows[1].sc25_us_cm).toBeCloseTo(1236.094, 2);
    expect(rows[1].conductivity_us_cm).toBe(1000); // raw value kept as measured
    expect(rows[1].settings_id).not.toBeNull();
    expect(rows[2].conductivity_us_cm).toBeNull();
    expect(rows[2].temperature_c).toBe(15);

    const errors = await db.selectFrom("upload_error").selectAll().where("upload_id", "=", up.uploadId!).execute();
    expect(errors).toHaveLength(1);
    expect(errors[0].row_number).toBe(4);
    expect(errors[0].reason).toMatch(/negative/i);

    // What depends on readings follows as a job for exactly this range.
    const jobs = await sql<{ payload: { siteId: string; fromMs: number; toMs: number } }>`
      select j.payload from graphile_worker._private_jobs j join graphile_worker._private_tasks t on t.id = j.task_id where t.identifier = 'readings-changed'`.execute(db);
    expect(jobs.rows.map((j) => j.payload)).toContainEqual({ siteId, fromMs: Date.parse("2025-03-01T00:00:00Z"), toMs: Date.parse("2025-03-01T00:45:00Z"), reason: "ingest" });

    // The error report downloads as CSV.
    const csv = await request(`/api/uploads/${up.uploadId}/errors.csv`, { jar });
    expect(csv.status).toBe(200);
    expect(csv.headers.get("Content-Type")).toMatch(/text\/csv/);
    const text = await csv.text();
    expect(text).toContain("round-1.csv,4,");
  });

  it("recognises the same file uploaded twice and does not ingest it again", async () => {
    const body = file(series("2025-04-01T00:00:00Z", 10));
    const first = await uploadFile(jar, { fileName: "april.csv", body, siteId, loggerId, profileId });
    await processUpload(first.uploadId!);
    const again = await uploadFile(jar, { fileName: "april-copy.csv", body, siteId, loggerId, profileId });
    expect(again.ok).toBe(false);
    expect(again.status).toBe(409);
    expect(again.duplicate?.uploadId).toBe(first.uploadId);
    expect(again.duplicate?.message).toContain("april.csv");
    const count = await db.selectFrom("readings").select((eb) => eb.fn.countAll<number>().as("n")).where("upload_id", "=", first.uploadId!).executeTakeFirstOrThrow();
    expect(Number(count.n)).toBe(10);
  });

  it("does not double readings from an overlapping dump", async () => {
    const a = await uploadFile(jar, { fileName: "may-a.csv", body: file(series("2025-05-01T00:00:00Z", 8)), siteId, loggerId, profileId });
    const b = await uploadFile(jar, { fileName: "may-b.csv", body: file(series("2025-05-01T01:00:00Z", 8)), siteId, loggerId, profileId });
    await processUpload(a.uploadId!);
    const done = await processUpload(b.uploadId!);
    // b starts at 01:00, a covers 00:00–01:45: 4 of b's 8 timestamps are already stored.
    expect(done.rows_accepted).toBe(4);
    expect(done.rows_duplicate).toBe(4);
    const total = await db
      .selectFrom("readings")
      .select((eb) => eb.fn.countAll<number>().as("n"))
      .where("logger_id", "=", loggerId)
      .where("time", ">=", new Date("2025-05-01T00:00:00Z"))
      .where("time", "<", new Date("2025-05-02T00:00:00Z"))
      .executeTakeFirstOrThrow();
    expect(Number(total.n)).toBe(12);
  });

  it("reports a timestamp repeated later in the file against the row that kept it", async () => {
    const body = file([
      ["2025-10-01T00:00:00Z", "400", "12"],
      ["2025-10-01T00:15:00Z", "401", "12"],
      ["2025-10-01T00:30:00Z", "402", "12"],
      ["2025-10-01T00:15:00Z", "999", "12"], // row 5 repeats row 3's time
      ["2025-10-01T00:10:00Z", "403", "12"], // out of order but new: kept
    ]);
    const up = await uploadFile(jar, { fileName: "october.csv", body, siteId, loggerId, profileId });
    const done = await processUpload(up.uploadId!);
    expect(done.status).toBe("done");
    expect(done.rows_accepted).toBe(4);
    expect(done.rows_rejected).toBe(1);
    const rows = await readingsOf(up.uploadId!);
    expect(rows.map((r) => r.conductivity_us_cm)).toEqual([400, 403, 401, 402]);
    const errors = await db.selectFrom("upload_error").selectAll().where("upload_id", "=", up.uploadId!).execute();
    expect(errors).toHaveLength(1);
    expect(errors[0].row_number).toBe(5);
    expect(errors[0].reason).toContain("earlier in this file (row 3)");
  });

  it("stops a mostly failing file with one clear message and stores no readings", async () => {
    // A semicolon file read with a comma profile: every row is one field.
    const body = ["Timestamp (UTC);Cond (uS/cm);Temp (C)", ...series("2025-06-01T00:00:00Z", 30).map((r) => r.join(";"))].join("\n");
    const up = await uploadFile(jar, { fileName: "semicolons.csv", body, siteId, loggerId, profileId });
    const done = await processUpload(up.uploadId!);
    expect(done.status).toBe("failed");
    expect(done.message).toMatch(/delimiter|;/i);
    expect(await readingsOf(up.uploadId!)).toHaveLength(0);
  });

  it("re-processes an upload after its profile is corrected, replacing only its own readings", async () => {
    const body = ["Timestamp (UTC);Cond (uS/cm);Temp (C)", ...series("2025-07-01T00:00:00Z", 12).map((r) => r.join(";"))].join("\n");
    const up = await uploadFile(jar, { fileName: "july.csv", body, siteId, loggerId, profileId });
    expect((await processUpload(up.uploadId!)).status).toBe("failed");
    const fixed = (
      await db.insertInto("import_profile").values({ name: "Semicolon layout", header_signature: "y", settings: JSON.stringify({ ...PROFILE, delimiter: ";" }) }).returning("id").executeTakeFirstOrThrow()
    ).id;
    const { reprocessUpload } = await import("#app/models/upload.server.ts");
    await reprocessUpload(up.uploadId!, fixed);
    const done = await processUpload(up.uploadId!);
    expect(done.status).toBe("done");
    expect(done.rows_accepted).toBe(12);
    // Running it once more replaces its own readings rather than doubling them.
    await reprocessUpload(up.uploadId!, null);
    const again = await processUpload(up.uploadId!);
    expect(again.rows_accepted).toBe(12);
    expect(await readingsOf(up.uploadId!)).toHaveLength(12);
  });

  it("recomputes derived values after a settings change without touching raw values", async () => {
    const up = await uploadFile(jar, { fileName: "aug.csv", body: file(series("2025-08-01T00:00:00Z", 5, 15, () => 800, () => 10)), siteId, loggerId, profileId });
    await processUpload(up.uploadId!);
    const before = await readingsOf(up.uploadId!);
    // Linear α = 0.0191 at 10 °C: 800 / (1 − 0.2865) = 1121.23 (by hand).
    expect(before[0].sc25_us_cm).toBeCloseTo(1121.23, 1);
    // A correction on one reading (as a field visit would set) survives the recompute.
    await db.updateTable("readings").set({ correction_us_cm: 10 }).where("site_id", "=", siteId).where("time", "=", before[1].time).execute();
    await db.updateTable("site").set({ compensation_method: "natural-water", tds_factor: 0.7 }).where("id", "=", siteId).execute();
    const settingsId = await currentSettingsId(siteId);
    await runRecomputeJob(siteId, settingsId);
    const after = await readingsOf(up.uploadId!);
    // ISO 7888:1985 table, f25 at 10.0 °C = 1.428 (a transcribed entry, see iso7888-table.ts):
    // 800 × 1.428 = 1142.4.
    expect(after[0].sc25_us_cm).toBeCloseTo(1142.4, 1);
    expect(after[0].tds_mg_l).toBeCloseTo(0.7 * 1142.4, 1);
    expect(after[0].settings_id).toBe(settingsId);
    expect(after[0].sc25_uncorrected_us_cm).toBeCloseTo(1142.4, 1);
    expect(after[1].sc25_us_cm! - after[1].sc25_uncorrected_us_cm!).toBeCloseTo(10, 9);
    expect(after[1].tds_mg_l).toBeCloseTo(0.7 * after[1].sc25_us_cm!, 9);
    expect(after.map((r) => [r.conductivity_us_cm, r.temperature_c])).toEqual(before.map((r) => [r.conductivity_us_cm, r.temperature_c]));
    await db.updateTable("site").set({ compensation_method: "linear", tds_factor: 0.65 }).where("id", "=", siteId).execute();
  });

  it("leaves no rows when the job dies mid-way (one transaction)", async () => {
    const up = await uploadFile(jar, { fileName: "killed.csv", body: file(series("2025-09-01T00:00:00Z", 20)), siteId, loggerId, profileId });
    // Simulate a crash after the rows are staged: drop the partition-creating function so the
    // merge step throws, as a killed connection would.
    await sql`alter function ensure_reading_partitions(timestamptz, timestamptz) rename to ensure_reading_partitions_off`.execute(db);
    try {
      await expect(processUpload(up.uploadId!)).rejects.toThrow();
    } finally {
      await sql`alter function ensure_reading_partitions_off(timestamptz, timestamptz) rename to ensure_reading_partitions`.execute(db);
    }
    expect(await readingsOf(up.uploadId!)).toHaveLength(0);
    const upload = await db.selectFrom("upload").select(["status", "message"]).where("id", "=", up.uploadId!).executeTakeFirstOrThrow();
    expect(upload.status).toBe("queued");
    expect(upload.message).toMatch(/retried/);
    // The retry succeeds.
    expect((await processUpload(up.uploadId!)).status).toBe("done");
  });

  it("refuses an upload without a site", async () => {
    const res = await uploadFile(jar, { fileName: "x.csv", body: "a,b\n", siteId: "not-a-uuid", loggerId, profileId });
    expect(res.status).toBe(400);
    expect(res.errors?.siteId?.[0]).toBe("Choose the site");
  });
});
