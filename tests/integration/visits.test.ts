import { beforeAll, describe, expect, it } from "vitest";
import { sql } from "kysely";
import { db } from "#app/utils/db.server.ts";
import { ensureBucket } from "#app/utils/storage.server.ts";
import type { ImportProfile } from "#app/lib/import/profile.ts";
import { READINGS_CHANGED_STEPS, type ReadingsChange } from "#app/jobs/readings-changed.server.ts";
import { runApplyCorrections } from "#app/jobs/apply-corrections.server.ts";
import { request, signIn, type Jar } from "../support/app.ts";
import { createPeople, TEST_PASSWORD } from "../support/people.ts";
import { processUpload, uploadFile } from "../support/uploads.ts";

// The whole field-visit flow against the real PostgreSQL, S3 fake and production build: two visits
// → a proposed fouling correction → an officer approves it → the corrected series and the grade →
// a readings-changed job for exactly that range → an approved period refuses a change without a
// reason → newly ingested readings inside the period are corrected by the job's first step.
const PROFILE: ImportProfile = {
  delimiter: ",",
  decimalMark: ".",
  headerRow: 0,
  dataStartRow: 1,
  timestamp: { kind: "single", column: 0, order: "iso" },
  utcOffsetMinutes: 0,
  missingValues: [""],
  columns: [
    { index: 0, header: "Timestamp (UTC)", parameter: "timestamp", unit: null },
    { index: 1, header: "Cond (uS/cm)", parameter: "conductivity", unit: "µS/cm" },
    { index: 2, header: "Temp (C)", parameter: "temperature", unit: "°C" },
  ],
};

const A = Date.parse("2025-06-01T10:00:00Z"); // first visit
const B = Date.parse("2025-06-11T10:00:00Z"); // second visit, 10 days later
const MID = A + (B - A) / 2;
const STEP = 15 * 60_000;

/** Conductivity at 25 °C (so specific conductance equals it: the linear factor is 1 at 25 °C, Standard Methods 2510 B). */
function condAt(t: number) {
  return 1000 + ((t / STEP) % 10);
}

function loggerFile(fromMs: number, toMs: number, stepMs: number) {
  const lines = ["Timestamp (UTC),Cond (uS/cm),Temp (C)"];
  for (let t = fromMs; t <= toMs; t += stepMs) lines.push(`${new Date(t).toISOString()},${condAt(t)},25`);
  return lines.join("\n") + "\n";
}

let tech: Jar;
let officer: Jar;
let siteId: string;
let loggerId: string;
let profileId: string;
let visitB: string;

async function reading(t: number) {
  return db
    .selectFrom("readings")
    .select(["sc25_us_cm", "sc25_uncorrected_us_cm", "correction_us_cm", "tds_mg_l", "conductivity_us_cm"])
    .where("site_id", "=", siteId)
    .where("time", "=", new Date(t))
    .executeTakeFirstOrThrow();
}

async function correctionJobs() {
  const jobs = await sql<{ payload: ReadingsChange }>`
    select j.payload from graphile_worker._private_jobs j join graphile_worker._private_tasks t on t.id = j.task_id
    where t.identifier = 'readings-changed' order by j.id`.execute(db);
  return jobs.rows.map((j) => j.payload).filter((p) => p.reason === "correction");
}

function visitForm(over: Record<string, string>) {
  return {
    siteId,
    loggerId,
    beforeTemperature: "25",
    afterTemperature: "25",
    meterTemperature: "25.1",
    "checks[0].standard": "1413",
    ...over,
  };
}

async function theCorrection() {
  return db.selectFrom("correction").selectAll().where("site_id", "=", siteId).executeTakeFirstOrThrow();
}

async function thePeriod() {
  return db.selectFrom("record_period").selectAll().where("site_id", "=", siteId).executeTakeFirstOrThrow();
}

beforeAll(async () => {
  await ensureBucket();
  await createPeople(db);
  [tech, officer] = await Promise.all([signIn("technician@test.example", TEST_PASSWORD), signIn("officer@test.example", TEST_PASSWORD)]);
  siteId = (
    await db
      .insertInto("site")
      .values({ code: "VT1", name: "Visit test reach", kind: "river", latitude: 54.3, longitude: -2.9, time_zone: "UTC", compensation_method: "linear", alpha_per_c: 0.0191, reference_c: 25, tds_factor: 0.65 })
      .returning("id")
      .executeTakeFirstOrThrow()
  ).id;
  loggerId = (await db.insertInto("logger").values({ serial: "VT-0001" }).returning("id").executeTakeFirstOrThrow()).id;
  await db.insertInto("logger_deployment").values({ logger_id: loggerId, site_id: siteId, deployed_from: new Date("2025-01-01T00:00:00Z") }).execute();
  profileId = (
    await db.insertInto("import_profile").values({ name: "Visit test layout", header_signature: "x", settings: JSON.stringify(PROFILE) }).returning("id").executeTakeFirstOrThrow()
  ).id;
  // Readings from the first visit to a day after the second, every 15 minutes.
  const up = await uploadFile(tech, { fileName: "vt-june.csv", body: loggerFile(A, B + 86_400_000, STEP), siteId, loggerId, profileId });
  expect((await processUpload(up.uploadId!)).status).toBe("done");
});

describe("field visits to corrected record", () => {
  it("a technician records two visits (one with a photo); the second proposes a fouling correction", async () => {
    // A photo through the same presign → PUT → confirm path as logger files.
    const body = Buffer.from("not really a jpeg, but storage only checks length and type");
    const presign = await request("/api/visits/photos", { jar: tech, form: { intent: "presign", fileName: "sensor before.jpg", sizeBytes: String(body.length), contentType: "image/jpeg" } });
    expect(presign.status).toBe(200);
    const p = (await presign.json()) as { key: string; url: string; headers: Record<string, string> };
    expect(p.key).toMatch(/^visit-photos\/[0-9a-f-]{36}\/sensor_before\.jpg$/);
    expect((await fetch(p.url, { method: "PUT", body: new Uint8Array(body), headers: p.headers })).ok).toBe(true);
    expect((await request("/api/visits/photos", { jar: tech, form: { intent: "confirm", key: p.key } })).status).toBe(200);

    const first = await request("/visits/new", {
      jar: tech,
      form: visitForm({
        visitedAt: "2025-06-01T10:00",
        beforeSc: "1001",
        afterSc: "1002",
        meterSc: "1000",
        "checks[0].temperature": "25",
        "checks[0].sensor": "1410",
        "photoKeys[0]": p.key,
      }),
    });
    expect(first.status).toBe(302);
    expect(first.headers.get("Location")).toMatch(/^\/visits\/[0-9a-f-]{36}\?saved=created$/);

    const second = await request("/visits/new", {
      jar: tech,
      form: visitForm({ visitedAt: "2025-06-11T10:00", beforeSc: "880", afterSc: "1000", meterSc: "1000", "checks[0].temperature": "20", "checks[0].sensor": "1280" }),
    });
    expect(second.status).toBe(302);
    visitB = second.headers.get("Location")!.match(/\/visits\/([0-9a-f-]{36})/)![1];

    // Stored as computed on the server: fouling 1000 − 880 = 120 µS/cm = 12 % of the field meter,
    // outside ±30 µS/cm (3 % of 1000); 1413 at 20 °C expects 1413 × 1273.03 / 1408.23 (CRC/NIST
    // 0.01 mol/kg curve), 1280 is within 3 %.
    const v = await db.selectFrom("field_visit").selectAll().where("id", "=", visitB).executeTakeFirstOrThrow();
    expect(v.fouling_error_us_cm).toBe(120);
    expect(v.fouling_error_percent).toBeCloseTo(12, 9);
    expect(v.fouling_passed).toBe(false);
    const check = await db.selectFrom("calibration_check").selectAll().where("visit_id", "=", visitB).executeTakeFirstOrThrow();
    expect(check.expected_us_cm).toBeCloseTo((1413 * 1273.03) / 1408.23, 6);
    expect(check.passed).toBe(true);

    const c = await theCorrection();
    expect(c.kind).toBe("fouling");
    expect(c.status).toBe("proposed");
    expect(c.author_id).toBeNull();
    expect(c.period_start.getTime()).toBe(A);
    expect(c.period_end.getTime()).toBe(B);
    expect(c.start_offset).toBe(0);
    expect(c.offset_unit).toBe("percent");
    expect(c.end_offset).toBeCloseTo((100 * 120) / 880, 9); // 880 × (1 + 13.64 %) = 1000

    // Proposed only: the readings are not changed yet.
    expect((await reading(B)).correction_us_cm).toBeNull();

    // The visit page shows the stored verdict and the proposal.
    const page = await request(`/visits/${visitB}`, { jar: tech });
    expect(page.status).toBe(200);
    const html = await page.text();
    expect(html).toContain("Fail");
    expect(html).toContain("Awaiting review");
  });

  it("an officer approves it: the series is corrected at the start, middle and end, graded, and a job queued for exactly that range", async () => {
    const before = await correctionJobs();
    const res = await request("/sites/VT1/corrections", { jar: officer, form: { intent: "approve", correctionId: (await theCorrection()).id } });
    expect(res.status).toBe(200);
    expect((await theCorrection()).status).toBe("approved");

    const endPercent = (100 * 120) / 880;
    for (const [t, fraction] of [
      [A, 0],
      [MID, 0.5],
      [B, 1],
    ] as const) {
      const r = await reading(t);
      expect(r.sc25_uncorrected_us_cm).toBeCloseTo(condAt(t), 9); // raw and compensated values unchanged
      expect(r.conductivity_us_cm).toBe(condAt(t));
      const expected = condAt(t) * (1 + (fraction * endPercent) / 100);
      expect(r.sc25_us_cm).toBeCloseTo(expected, 6);
      expect(r.correction_us_cm).toBeCloseTo(expected - condAt(t), 6);
      expect(r.tds_mg_l).toBeCloseTo(0.65 * expected, 6);
    }
    // Outside the period nothing is corrected.
    const after = await reading(B + STEP);
    expect(after.correction_us_cm).toBeNull();
    expect(after.sc25_us_cm).toBe(after.sc25_uncorrected_us_cm);

    // 13.6 % in total: fair (TM 1-D3 ratings: > 10–15 %).
    const period = await thePeriod();
    expect(period.total_correction_percent).toBeCloseTo(endPercent, 9);
    expect(period.grade).toBe("fair");

    const jobs = (await correctionJobs()).slice(before.length);
    expect(jobs).toEqual([{ siteId, fromMs: A, toMs: B, reason: "correction" }]);

    const audit = await db.selectFrom("record_audit").selectAll().where("entity", "=", "correction").execute();
    expect(audit.map((a) => a.action)).toEqual(["approve"]);
  });

  it("corrects readings ingested later inside the period, in the readings-changed job's first step, once", async () => {
    // Four readings at five past the quarter-hour, inside the corrected period.
    const start = MID + 5 * 60_000;
    const up = await uploadFile(tech, { fileName: "vt-extra.csv", body: loggerFile(start, start + 3 * STEP, STEP), siteId, loggerId, profileId });
    await processUpload(up.uploadId!);
    expect((await reading(start)).correction_us_cm).toBeNull(); // arrives uncorrected

    // The job's first step applies the corrections (before detection and summaries read readings).
    expect(READINGS_CHANGED_STEPS[0].name).toBe("apply-corrections");
    const change: ReadingsChange = { siteId, fromMs: start, toMs: start + 3 * STEP, reason: "ingest" };
    await READINGS_CHANGED_STEPS[0].run(change);
    const r = await reading(start);
    const fraction = (start - A) / (B - A);
    expect(r.sc25_us_cm).toBeCloseTo(condAt(start) * (1 + (fraction * (100 * 120)) / 880 / 100), 6);
    // Running it again writes nothing (idempotent).
    expect(await runApplyCorrections(change)).toBe(0);
  });

  it("an approved period is locked: a change without a reason is refused, with one it is audited", async () => {
    const period = await thePeriod();
    const approve = await request("/sites/VT1/corrections", { jar: officer, form: { intent: "approve-period", periodId: period.id } });
    expect(approve.status).toBe(200);
    expect((await thePeriod()).locked).toBe(true);

    const c = await theCorrection();
    const adjust = { intent: "adjust", correctionId: c.id, kind: "fouling", unit: "percent", startOffset: "0", endOffset: "12", reason: "Meter reading was the better reference." };
    const refused = await request("/sites/VT1/corrections", { jar: officer, form: adjust });
    expect(refused.status).toBe(409);
    expect((await theCorrection()).end_offset).toBeCloseTo((100 * 120) / 880, 9);
    expect((await reading(B)).sc25_us_cm).toBeCloseTo(condAt(B) * (1 + 120 / 880), 6);

    const jobsBefore = await correctionJobs();
    const accepted = await request("/sites/VT1/corrections", { jar: officer, form: { ...adjust, note: "Recomputed against the field meter after review." } });
    expect(accepted.status).toBe(200);
    expect((await theCorrection()).end_offset).toBe(12);
    expect((await reading(B)).sc25_us_cm).toBeCloseTo(condAt(B) * 1.12, 6);
    expect((await reading(MID)).sc25_us_cm).toBeCloseTo(condAt(MID) * 1.06, 6);
    expect((await correctionJobs()).slice(jobsBefore.length)).toEqual([{ siteId, fromMs: A, toMs: B, reason: "correction" }]);
    // 12 % is still fair; the period stays approved.
    expect((await thePeriod()).grade).toBe("fair");
    const audit = await db.selectFrom("record_audit").selectAll().where("entity", "=", "correction").where("action", "=", "adjust").executeTakeFirstOrThrow();
    expect(audit.in_locked_period).toBe(true);
    expect(audit.reason).toBe("Recomputed against the field meter after review.");
    expect(audit.after).toMatchObject({ end_offset: 12 });

    // A visit at the end of the approved period: the technician's change needs a reason too.
    const edit = visitForm({ visitedAt: "2025-06-11T10:00", beforeSc: "880", afterSc: "1000", meterSc: "1000", "checks[0].temperature": "20", "checks[0].sensor": "1280", notes: "Weed on the guard." });
    const noReason = await request(`/visits/${visitB}/edit`, { jar: tech, form: edit });
    expect(noReason.status).toBe(409);
    expect((await db.selectFrom("field_visit").select("notes").where("id", "=", visitB).executeTakeFirstOrThrow()).notes).toBe("");
    const withReason = await request(`/visits/${visitB}/edit`, { jar: tech, form: { ...edit, reason: "Forgot the note at the site." } });
    expect(withReason.status).toBe(302);
    const visitAudit = await db.selectFrom("record_audit").selectAll().where("entity", "=", "field_visit").where("action", "=", "update").executeTakeFirstOrThrow();
    expect(visitAudit.in_locked_period).toBe(true);
    expect(visitAudit.reason).toBe("Forgot the note at the site.");
    expect(visitAudit.after).toEqual({ notes: "Weed on the guard." });
  });

  it("charts read the corrected values, the uncorrected ones on request; the export marks the approved period", async () => {
    const range = `from=${new Date(A).toISOString()}&to=${new Date(B + 2 * STEP).toISOString()}&points=5000`;
    const seriesOf = async (parameter: string) => {
      const res = await request(`/api/sites/${siteId}/series?parameter=${parameter}&${range}`, { jar: officer });
      expect(res.status).toBe(200);
      return new Map(((await res.json()) as { points: [number, number | null][] }).points.map(([t, v]) => [t, v]));
    };
    const corrected = await seriesOf("sc25");
    const uncorrected = await seriesOf("sc25_uncorrected");
    expect(corrected.get(B)).toBeCloseTo(condAt(B) * 1.12, 6); // the 12 % set above, at its full value
    expect(uncorrected.get(B)).toBeCloseTo(condAt(B), 9);
    expect(uncorrected.get(MID)).toBeCloseTo(condAt(MID), 9);

    const page = await request("/sites/VT1?uncorrected=1", { jar: officer });
    expect(page.status).toBe(200);
    const html = await page.text();
    expect(html).toContain("Hide the uncorrected values");
    expect(html).toContain("Corrections and approval");

    const csv = await request(`/api/sites/${siteId}/export.csv?from=${new Date(A).toISOString()}&to=${new Date(B + 2 * STEP).toISOString()}`, { jar: officer });
    expect(csv.status).toBe(200);
    const lines = (await csv.text()).replace(/^\uFEFF/, "").split("\r\n").filter(Boolean);
    const header = lines.find((l) => l.startsWith("time_utc"))!.split(",");
    const rows = lines.filter((l) => /^\d{4}-/.test(l)).map((l) => l.split(","));
    const at = (t: number) => rows.find((r) => r[0] === new Date(t).toISOString().replace(".000Z", "Z"))!;
    expect(at(A)[header.indexOf("approved")]).toBe("yes");
    expect(at(B)[header.indexOf("approved")]).toBe("yes");
    expect(at(B + STEP)[header.indexOf("approved")]).toBe(""); // after the second visit: not in an approved period
    expect(Number(at(B)[header.indexOf("specific_conductance_uncorrected_us_cm")])).toBeCloseTo(condAt(B), 9);
  });

  it("rejecting the correction (with a reason, the period being approved) puts the recorded values back", async () => {
    const c = await theCorrection();
    const res = await request("/sites/VT1/corrections", { jar: officer, form: { intent: "reject", correctionId: c.id, note: "Sensor was replaced, not fouled." } });
    expect(res.status).toBe(200);
    for (const t of [A, MID, B]) {
      const r = await reading(t);
      expect(r.correction_us_cm).toBeNull();
      expect(r.sc25_us_cm).toBe(r.sc25_uncorrected_us_cm);
      expect(r.tds_mg_l).toBeCloseTo(0.65 * condAt(t), 9);
    }
    // No correction counts any more: excellent.
    expect((await thePeriod()).grade).toBe("excellent");
  });

  it("another role may not review corrections, and a visit time outside the logger's deployment is refused", async () => {
    expect((await request("/sites/VT1/corrections", { jar: tech })).status).toBe(403);
    const early = await request("/visits/new", {
      jar: tech,
      form: visitForm({ visitedAt: "2024-12-01T10:00", beforeSc: "500", afterSc: "500", "checks[0].temperature": "25", "checks[0].sensor": "1413" }),
    });
    expect(early.status).toBe(400);
    expect(await early.text()).toContain("not deployed at the site at that time");
  });
});
