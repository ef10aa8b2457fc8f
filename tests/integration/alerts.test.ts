import { beforeAll, describe, expect, it } from "vitest";
import { sql } from "kysely";
import { db } from "#app/utils/db.server.ts";
import { ensureBucket } from "#app/utils/storage.server.ts";
import type { ImportProfile } from "#app/lib/import/profile.ts";
import type { ReadingsChange } from "#app/jobs/readings-changed.server.ts";
import { detectExceedances, detectExceedancesStep } from "#app/jobs/detect-exceedances.server.ts";
import { runSendAlertEmail } from "#app/jobs/alert-email.server.ts";
import { waitForMessage, listMessages } from "#fakes/smtp/client.ts";
import { request, signIn, type Jar } from "../support/app.ts";
import { createPeople, TEST_PASSWORD } from "../support/people.ts";
import { processUpload, uploadFile } from "../support/uploads.ts";
import { createRule, createSite, insertReadings } from "../support/alerts.ts";

// Alert rules end to end against the real PostgreSQL, S3 and SMTP fakes: detection through the
// upload path, idempotence, notifications, e-mail and its hourly limit, and who may see and change
// rules and events.
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

/** A logger file of 15-minute readings at 25 °C (so specific conductance = conductivity, Standard Methods 2510 B at the reference temperature). */
function loggerFile(startIso: string, values: number[]) {
  const start = Date.parse(startIso);
  const rows = values.map((v, i) => `${new Date(start + i * 15 * 60_000).toISOString()},${v},25`);
  return ["Timestamp (UTC),Cond (uS/cm),Temp (C)", ...rows].join("\n") + "\n";
}

async function queuedChanges(siteId: string): Promise<ReadingsChange[]> {
  const { rows } = await sql<{ payload: ReadingsChange }>`
    select j.payload from graphile_worker._private_jobs j join graphile_worker._private_tasks t on t.id = j.task_id
    where t.identifier = 'readings-changed' and j.payload->>'siteId' = ${siteId} order by j.id`.execute(db);
  return rows.map((r) => r.payload);
}

async function eventsOf(ruleId: string) {
  return db.selectFrom("exceedance").selectAll().where("rule_id", "=", ruleId).orderBy("started_at").execute();
}

const MAILBOX = () => process.env.MAILBOX_URL!;

let people: Awaited<ReturnType<typeof createPeople>>;
let technicianJar: Jar;

beforeAll(async () => {
  await ensureBucket();
  people = await createPeople(db);
  technicianJar = await signIn("technician@test.example", TEST_PASSWORD);
});

describe("detection through the upload path", () => {
  it("keeps an exceedance spanning two overlapping files as one event, and re-running changes nothing", async () => {
    const { siteId, loggerId } = await createSite(db, { code: "ALR1" });
    const profileId = (
      await db.insertInto("import_profile").values({ name: "Alert test layout", header_signature: "a", settings: JSON.stringify(PROFILE) }).returning("id").executeTakeFirstOrThrow()
    ).id;
    const ruleId = await createRule(db, {
      name: "High conductance at ALR1",
      params: { threshold: 1000, clear: 900, minDurationMin: 30, unit: "µS/cm", durationUnit: "min" },
      siteIds: [siteId],
      notifyRoles: ["officer"],
      email: true,
      emailsPerHour: 10,
    });

    // File A: 00:00–05:45; above 1000 from 03:00 to its end.
    const a = Array.from({ length: 24 }, (_, i) => (i < 12 ? 500 : 1200 + i));
    // File B: 05:00–10:45, overlapping A by an hour; the peak 1500 at 07:00, back to 800 at 08:00.
    const b = Array.from({ length: 24 }, (_, i) => (i < 8 ? 1200 + 20 + i : i === 8 ? 1500 : i < 12 ? 1100 : 800));
    const upA = await uploadFile(technicianJar, { fileName: "alr1-a.csv", body: loggerFile("2025-02-01T00:00:00Z", a), siteId, loggerId, profileId });
    expect((await processUpload(upA.uploadId!)).status).toBe("done");
    for (const change of await queuedChanges(siteId)) await detectExceedancesStep.run(change);

    let events = await eventsOf(ruleId);
    expect(events).toHaveLength(1);
    expect(events[0].started_at.toISOString()).toBe("2025-02-01T03:00:00.000Z");
    expect(events[0].ended_at).toBeNull(); // still above at the end of file A

    const upB = await uploadFile(technicianJar, { fileName: "alr1-b.csv", body: loggerFile("2025-02-01T05:00:00Z", b), siteId, loggerId, profileId });
    const doneB = await processUpload(upB.uploadId!);
    expect(doneB.rows_duplicate).toBe(4); // 05:00–05:45 were already stored from A
    for (const change of await queuedChanges(siteId)) await detectExceedancesStep.run(change);

    events = await eventsOf(ruleId);
    expect(events).toHaveLength(1);
    const [event] = events;
    expect(event.started_at.toISOString()).toBe("2025-02-01T03:00:00.000Z");
    // File B index 12 (08:00) is 800, the first reading at or below the clear level 900.
    expect(event.ended_at?.toISOString()).toBe("2025-02-01T08:00:00.000Z");
    expect(event.peak_value).toBe(1500);
    expect(event.peak_at.toISOString()).toBe("2025-02-01T07:00:00.000Z");
    expect(event.duration_s).toBe(5 * 3600);
    expect(event.threshold_value).toBe(1000);

    // Running the job again for every change changes nothing: same row, no new audit lines.
    const auditBefore = await db.selectFrom("exceedance_audit").select("id").where("exceedance_id", "=", event.id).execute();
    const updatedBefore = event.updated_at.getTime();
    for (const change of await queuedChanges(siteId)) {
      const s = await detectExceedances(change, { sendEmail: true, ruleIds: [ruleId] });
      expect(s).toMatchObject({ inserted: 0, updated: 0, withdrawn: 0 });
    }
    const again = await eventsOf(ruleId);
    expect(again).toHaveLength(1);
    expect(again[0].updated_at.getTime()).toBe(updatedBefore);
    expect(await db.selectFrom("exceedance_audit").select("id").where("exceedance_id", "=", event.id).execute()).toHaveLength(auditBefore.length);
    // Detected, then extended once by file B.
    expect(auditBefore).toHaveLength(2);

    // One notification for the officer (the rule names officers only), one e-mail queued.
    const notes = await db.selectFrom("notification").select(["person_id"]).where("exceedance_id", "=", event.id).execute();
    expect(notes.map((n) => n.person_id)).toEqual([people.officer.id]);
    const sends = await db.selectFrom("email_send").selectAll().where("rule_id", "=", ruleId).execute();
    expect(sends).toHaveLength(1);
    expect(sends[0].status).toBe("queued");
  });
});
