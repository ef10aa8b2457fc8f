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
/** The SMTP fake's mailbox outlives test runs: this run's messages are told apart by this tag in site codes and rule names. */
const RUN = Math.random().toString(36).slice(2, 6).toUpperCase();

let people: Awaited<ReturnType<typeof createPeople>>;
let technicianJar: Jar;

beforeAll(async () => {
  await ensureBucket();
  people = await createPeople(db);
  technicianJar = await signIn("technician@test.example", TEST_PASSWORD);
});

describe("the readings-changed job", () => {
  it("runs detection after the corrections step and before the summaries", async () => {
    const { READINGS_CHANGED_STEPS } = await import("#app/jobs/readings-changed.server.ts");
    const names = READINGS_CHANGED_STEPS.map((s) => s.name);
    const detect = names.indexOf("detect-exceedances");
    expect(detect).toBeGreaterThanOrEqual(0);
    // Corrections change the values detection reads; summaries count the events detection writes.
    for (const [i, name] of names.entries()) {
      if (/correction/.test(name)) expect(i, name).toBeLessThan(detect);
      if (/summar/.test(name)) expect(i, name).toBeGreaterThan(detect);
    }
  });
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

describe("e-mail", () => {
  it("sends one message per new event up to the rule's hourly limit, then one summary of the rest, escaping names", async () => {
    const code = `M${RUN}`;
    const { siteId, loggerId } = await createSite(db, { code, name: "Weir <b>&</b> \"Mill\" pool" });
    const ruleId = await createRule(db, {
      name: `Spikes & <surges> ${RUN}`,
      params: { threshold: 1000, clear: 1000, minDurationMin: 0, unit: "µS/cm" },
      siteIds: [siteId],
      notifyRoles: ["officer", "manager"],
      email: true,
      emailsPerHour: 2,
    });
    // Four separate excursions above 1000 µS/cm, an hour apart: four events.
    const values = Array.from({ length: 20 }, (_, i) => (i % 5 === 2 ? 1300 + i : 500));
    const range = await insertReadings(db, { siteId, loggerId, startIso: "2025-03-01T00:00:00Z", sc: values });
    const summary = await detectExceedances({ siteId, ...range, reason: "ingest" }, { sendEmail: true });
    expect(summary.inserted).toBe(4);

    const sends = await db.selectFrom("email_send").selectAll().where("rule_id", "=", ruleId).orderBy("created_at").execute();
    expect(sends.map((s) => s.status).sort()).toEqual(["held", "held", "queued", "queued"]);
    // The summary waits in the queue for the hour since the first counted message to pass.
    const { rows: summaryJobs } = await sql<{ run_at: Date; max_attempts: number }>`
      select j.run_at, j.max_attempts from graphile_worker._private_jobs j where j.key = ${`alert-summary:${ruleId}`}`.execute(db);
    expect(summaryJobs).toHaveLength(1);
    expect(summaryJobs[0].run_at.getTime() - sends[0].created_at.getTime()).toBeGreaterThan(59 * 60_000);

    for (const s of sends.filter((x) => x.status === "queued")) await runSendAlertEmail({ sendId: s.id });
    const first = await waitForMessage(MAILBOX(), (m) => m.subject.includes(code) && m.to.includes("officer@test.example"), 10_000);
    expect(first.to.sort()).toEqual(["manager@test.example", "officer@test.example"]);
    expect(first.subject).toContain("specific conductance, highest value 1,3");
    expect(first.text).toContain(`Site: ${code} · Weir <b>&</b> "Mill" pool`);
    // One reading above, the next back at the clear level 15 minutes later.
    expect(first.text).toContain("Duration: 15 min");
    expect(first.text).toMatch(new RegExp(`/exceedances/[0-9a-f-]{36}`));
    // HTML: names are escaped, never markup.
    expect(first.html).toContain("Weir &lt;b&gt;&amp;&lt;/b&gt; &quot;Mill&quot; pool");
    expect(first.html).toContain(`Spikes &amp; &lt;surges&gt; ${RUN}`);
    expect(first.html).not.toContain("<b>&</b>");
    expect(first.text).toContain("screening values");

    const single = (await listMessages(MAILBOX())).filter((m) => m.subject.startsWith(`Ripplemark alert: ${code} `));
    expect(single).toHaveLength(2);

    // Sending the same message again does nothing (the job may run twice).
    await runSendAlertEmail({ sendId: sends.find((x) => x.status === "queued")!.id });
    expect((await listMessages(MAILBOX())).filter((m) => m.subject.startsWith(`Ripplemark alert: ${code} `))).toHaveLength(2);

    await runSendAlertEmail({ summaryForRule: ruleId });
    const digest = await waitForMessage(MAILBOX(), (m) => m.subject.includes("alert summary") && m.subject.includes(RUN), 10_000);
    expect(digest.subject).toBe(`Ripplemark alert summary: 2 more events for "Spikes & <surges> ${RUN}"`);
    expect(digest.html).toContain(`Spikes &amp; &lt;surges&gt; ${RUN}`);
    expect((digest.text ?? "").match(new RegExp(code, "g"))).toHaveLength(2);
    const after = await db.selectFrom("email_send").select(["status", "kind"]).where("rule_id", "=", ruleId).execute();
    expect(after.filter((s) => s.kind === "event").map((s) => s.status).sort()).toEqual(["sent", "sent", "summarised", "summarised"]);
    expect(after.filter((s) => s.kind === "summary").map((s) => s.status)).toEqual(["sent"]);
  });

  it("does not e-mail about events found in a back-fill (the demo seed, a rule re-checking history)", async () => {
    const { siteId, loggerId } = await createSite(db, { code: "ALR3" });
    const ruleId = await createRule(db, { params: { threshold: 1000, clear: 900, minDurationMin: 0 }, siteIds: [siteId], email: true });
    const range = await insertReadings(db, { siteId, loggerId, startIso: "2025-03-02T00:00:00Z", sc: [500, 1200, 800] });
    expect((await detectExceedances({ siteId, ...range, reason: "manual" }, { sendEmail: false })).inserted).toBe(1);
    expect(await db.selectFrom("email_send").select("id").where("rule_id", "=", ruleId).execute()).toEqual([]);
    // The officer is still told in the app.
    const [event] = await eventsOf(ruleId);
    expect(await db.selectFrom("notification").select("person_id").where("exceedance_id", "=", event.id).execute()).toEqual([{ person_id: people.officer.id }]);
  });
});

describe("who sees and changes rules", () => {
  let jars: Record<"technician" | "officer" | "manager" | "admin", Jar>;
  let rules: Record<string, string>;

  beforeAll(async () => {
    jars = {
      technician: technicianJar,
      officer: await signIn("officer@test.example", TEST_PASSWORD),
      manager: await signIn("manager@test.example", TEST_PASSWORD),
      admin: await signIn("admin@test.example", TEST_PASSWORD),
    };
    rules = {
      sensorForTechnicians: await createRule(db, { name: "Stuck probe (for technicians)", parameter: "conductivity", condition: "flat-line", params: { readings: 8, tolerance: 0 }, notifyRoles: ["technician"] }),
      sensorForOfficers: await createRule(db, { name: "Stuck probe (officers only)", parameter: "conductivity", condition: "flat-line", params: { readings: 8, tolerance: 0 }, notifyRoles: ["officer"] }),
      levelForTechnicians: await createRule(db, { name: "High level told to technicians", params: { threshold: 3000, clear: 2900, minDurationMin: 0 }, notifyRoles: ["technician"] }),
      levelForManagers: await createRule(db, { name: "High level told to managers", params: { threshold: 3000, clear: 2900, minDurationMin: 0 }, notifyRoles: ["manager", "officer"] }),
    };
  });

  it("shows a technician only the sensor checks that tell technicians", async () => {
    const html = await (await request("/alert-rules", { jar: jars.technician })).text();
    expect(html).toContain("Stuck probe (for technicians)");
    expect(html).not.toContain("Stuck probe (officers only)");
    expect(html).not.toContain("High level told to technicians");
    expect(html).not.toContain("High level told to managers");
    expect(html).not.toContain("New rule");
    expect((await request(`/alert-rules/${rules.sensorForTechnicians}`, { jar: jars.technician })).status).toBe(200);
    expect((await request(`/alert-rules/${rules.levelForTechnicians}`, { jar: jars.technician })).status).toBe(403);
  });

  it("shows a manager the rules that tell managers, read-only: changing one answers 403", async () => {
    const html = await (await request("/alert-rules", { jar: jars.manager })).text();
    expect(html).toContain("High level told to managers");
    expect(html).not.toContain("Stuck probe");
    const page = await request(`/alert-rules/${rules.levelForManagers}`, { jar: jars.manager });
    expect(page.status).toBe(200);
    expect(await page.text()).not.toContain("Save changes");
    const edit = await request(`/alert-rules/${rules.levelForManagers}`, { jar: jars.manager, form: { intent: "toggle", enabled: "false" } });
    expect(edit.status).toBe(403);
    const create = await request("/alert-rules/new", { jar: jars.manager, form: { intent: "save", name: "Manager's rule" } });
    expect(create.status).toBe(403);
    const toggle = await request("/alert-rules", { jar: jars.manager, form: { intent: "toggle", ruleId: rules.levelForManagers, enabled: "false" } });
    expect(toggle.status).toBe(403);
    expect((await db.selectFrom("alert_rule").select("enabled").where("id", "=", rules.levelForManagers).executeTakeFirstOrThrow()).enabled).toBe(true);
  });

  it("lets an officer create a rule in mS/cm and hours, stored in µS/cm and minutes, with its history re-checked in the background", async () => {
    const { siteId } = await createSite(db, { code: "ALR4" });
    const res = await request("/alert-rules/new", {
      jar: jars.officer,
      form: {
        intent: "save",
        name: "ALR4 above 2.5 mS/cm at 20 °C",
        parameter: "sc25",
        condition: "above",
        threshold: "2.5",
        clearLevel: "2.4",
        valueUnit: "mS/cm",
        minDuration: "1.5",
        durationUnit: "h",
        referenceC: "20",
        scope: "sites",
        siteIds: siteId,
        notifyRoles: "officer",
        email: "on",
        emailsPerHour: "3",
        enabled: "on",
        guidelineSource: "Directive (EU) 2020/2184 Annex I Part C",
      },
    });
    expect(res.status).toBe(302);
    const id = res.headers.get("Location")!.match(/\/alert-rules\/([0-9a-f-]{36})/)![1];
    const rule = await db.selectFrom("alert_rule").selectAll().where("id", "=", id).executeTakeFirstOrThrow();
    expect(rule.params).toEqual({ threshold: 2500, clear: 2400, minDurationMin: 90, referenceC: 20, unit: "mS/cm", durationUnit: "h" });
    expect(rule.site_ids).toEqual([siteId]);
    expect(rule.emails_per_hour).toBe(3);
    const { rows } = await sql`select 1 from graphile_worker._private_jobs where key = ${`evaluate-rule:${id}`}`.execute(db);
    expect(rows).toHaveLength(1);
    // The edit form shows the values in the units they were entered in.
    const html = await (await request(`/alert-rules/${id}`, { jar: jars.officer })).text();
    expect(html).toContain('value="2.5"');
    expect(html).toContain('value="1.5"');
  });

  it("re-checks a saved rule over the record of the sites it covers, without e-mail, and queues the touched weeks' summaries", async () => {
    const { evaluateRuleOverHistory } = await import("#app/jobs/detect-exceedances.server.ts");
    const { siteId, loggerId } = await createSite(db, { code: "ALR7" });
    await insertReadings(db, { siteId, loggerId, startIso: "2025-06-02T00:00:00Z", sc: [400, 400, 900, 950, 400, 400] });
    const ruleId = await createRule(db, { params: { threshold: 800, clear: 700, minDurationMin: 0 }, siteIds: [siteId], email: true });
    await evaluateRuleOverHistory(ruleId);
    const events = await eventsOf(ruleId);
    expect(events.map((e) => [e.started_at.toISOString(), e.ended_at?.toISOString()])).toEqual([["2025-06-02T00:30:00.000Z", "2025-06-02T01:00:00.000Z"]]);
    expect(await db.selectFrom("email_send").select("id").where("rule_id", "=", ruleId).execute()).toEqual([]);
    const { rows } = await sql<{ payload: { siteId: string; fromWeek: string; toWeek: string } }>`
      select j.payload from graphile_worker._private_jobs j join graphile_worker._private_tasks t on t.id = j.task_id
      where t.identifier = 'summarise-weeks' and j.payload->>'siteId' = ${siteId}`.execute(db);
    // 2 June 2025 is a Monday: the week it begins.
    expect(rows.map((r) => r.payload)).toContainEqual({ siteId, fromWeek: "2025-06-02", toWeek: "2025-06-02" });
  });

  it("keeps every saved version of a rule and shows what each one changed, and by whom", async () => {
    const form = {
      intent: "save", name: "ALR9 above 2.5 mS/cm", parameter: "sc25", condition: "above", threshold: "2.5", clearLevel: "2.4",
      valueUnit: "mS/cm", minDuration: "30", durationUnit: "min", referenceC: "25", scope: "all", notifyRoles: "officer",
      emailsPerHour: "4", enabled: "on", guidelineSource: "",
    };
    const res = await request("/alert-rules/new", { jar: jars.officer, form });
    const id = res.headers.get("Location")!.match(/\/alert-rules\/([0-9a-f-]{36})/)![1];
    const save = (changes: Record<string, string>) => request(`/alert-rules/${id}`, { jar: jars.officer, form: { ...form, ...changes } });
    expect((await save({ threshold: "3", clearLevel: "2.8" })).headers.get("Location")).toContain("saved=saved");
    // Saving the same values again is no new version.
    expect((await save({ threshold: "3", clearLevel: "2.8" })).headers.get("Location")).toContain("saved=unchanged");
    await request(`/alert-rules/${id}`, { jar: jars.officer, form: { intent: "toggle", enabled: "false" } });
    // Any writer is recorded, not only the pages (the trigger is on the table).
    await db.updateTable("alert_rule").set({ guideline_source: "Local permit, condition 7" }).where("id", "=", id).execute();

    const versions = await db.selectFrom("alert_rule_change").select(["action", "person_id", "before", "after"]).where("rule_id", "=", id).orderBy("id").execute();
    expect(versions.map((v) => v.action)).toEqual(["created", "changed", "changed", "changed"]);
    expect(versions[0].before).toBeNull();
    expect((versions[1].before as { params: { threshold: number } }).params.threshold).toBe(2500);
    expect((versions[1].after as { params: { threshold: number } }).params.threshold).toBe(3000);
    expect((versions[2].after as { enabled: boolean }).enabled).toBe(false);
    const officerId = (await db.selectFrom("person").select("id").where("email", "=", "officer@test.example").executeTakeFirstOrThrow()).id;
    expect(versions.slice(0, 3).every((v) => v.person_id === officerId)).toBe(true);

    const html = await (await request(`/alert-rules/${id}`, { jar: jars.officer })).text();
    const history = html.slice(html.indexOf('data-testid="rule-history"'));
    expect(history).toContain("Local permit, condition 7");
    expect(history).toMatch(/<del[^>]*>On<\/del>.*?<ins[^>]*>Off<\/ins>/s);
    expect(history).toMatch(/<del[^>]*>Stays above a level: [^<]*2\.5[^<]*<\/del>.*?<ins[^>]*>Stays above a level: [^<]*3[^<]*<\/ins>/s);
    expect(history).toContain("Created");
    expect(history).toContain("by Test officer");
    // The rows' JSON stays on the server: the page carries words, not the stored versions.
    expect(html).not.toContain('"emails_per_hour"');
  });

  it("refuses a clear level on the wrong side of the threshold, naming the field", async () => {
    const res = await request("/alert-rules/new", {
      jar: jars.officer,
      form: { intent: "save", name: "Backwards", parameter: "tds", condition: "above", threshold: "500", clearLevel: "550", minDuration: "0", scope: "all", notifyRoles: "officer", emailsPerHour: "4" },
    });
    expect(res.status).toBe(400);
    expect(await res.text()).toContain("the clear level must be at or below the threshold");
  });
});

describe("reviewing an event", () => {
  it("classifies, flags the readings of a sensor fault, keeps every change in the audit trail, and takes the flag off again", async () => {
    const officer = await signIn("officer@test.example", TEST_PASSWORD);
    const { siteId, loggerId } = await createSite(db, { code: "ALR5" });
    const ruleId = await createRule(db, { params: { threshold: 1000, clear: 900, minDurationMin: 0 }, siteIds: [siteId] });
    const range = await insertReadings(db, { siteId, loggerId, startIso: "2025-03-03T00:00:00Z", sc: [500, 1500, 1600, 1550, 600, 500] });
    await detectExceedances({ siteId, ...range, reason: "ingest" }, { sendEmail: false });
    const [event] = await eventsOf(ruleId);

    const page = await request(`/exceedances/${event.id}`, { jar: officer });
    expect(page.status).toBe(200);
    expect(await page.text()).toContain("screening values");

    const res = await request(`/exceedances/${event.id}`, {
      jar: officer,
      form: { intent: "review", outcome: "sensor-fault", comment: "Probe <fouled> by weed", flagReadings: "on", then: "close" },
    });
    expect(res.status).toBe(302);
    const reviewed = await db.selectFrom("exceedance").selectAll().where("id", "=", event.id).executeTakeFirstOrThrow();
    expect(reviewed).toMatchObject({ status: "closed", outcome: "sensor-fault", comment: "Probe <fouled> by weed", readings_flagged: 3, closed_by: people.officer.id });
    // The event's readings are 00:15–00:45 (1500, 1600, 1550); 600 at 01:00 ended it and is not
    // part of it. Raw values are untouched.
    const flagged = await db.selectFrom("readings").select(["time", "sc25_us_cm", "quality_flag"]).where("site_id", "=", siteId).orderBy("time").execute();
    expect(flagged.map((r) => r.quality_flag)).toEqual([null, "sensor", "sensor", "sensor", null, null]);
    expect(flagged.map((r) => r.sc25_us_cm)).toEqual([500, 1500, 1600, 1550, 600, 500]);
    const audit = await db.selectFrom("exceedance_audit").selectAll().where("exceedance_id", "=", event.id).orderBy("id").execute();
    expect(audit.map((a) => a.action)).toEqual(["detected", "closed"]);
    expect(audit[1].person_id).toBe(people.officer.id);
    expect(audit[1].before).toEqual({ outcome: null, comment: "", status: "open", readings_flagged: 0 });
    expect(audit[1].after).toEqual({ outcome: "sensor-fault", comment: "Probe <fouled> by weed", status: "closed", readings_flagged: 3 });
    // Summaries and detection catch up with the flag: readings-changed is queued for the event's stretch.
    const queued = await queuedChanges(siteId);
    expect(queued).toContainEqual({ siteId, fromMs: event.started_at.getTime(), toMs: event.last_reading_at.getTime(), reason: "manual" });
    // Re-running detection leaves the reviewed event alone (its readings are now left out).
    const again = await detectExceedances({ siteId, ...range, reason: "manual" }, { sendEmail: false });
    expect(again).toMatchObject({ inserted: 0, withdrawn: 0 });

    // The page shows the comment escaped.
    const html = await (await request(`/exceedances/${event.id}`, { jar: officer })).text();
    expect(html).toContain("Probe &lt;fouled&gt; by weed");
    expect(html).not.toContain("Probe <fouled>");

    // Reclassified as real: the flag comes off, the event reopens.
    await request(`/exceedances/${event.id}`, { jar: officer, form: { intent: "review", outcome: "water-quality", comment: "Lab confirmed", then: "reopen" } });
    const back = await db.selectFrom("readings").select("quality_flag").where("site_id", "=", siteId).execute();
    expect(back.every((r) => r.quality_flag === null)).toBe(true);
    const last = await db.selectFrom("exceedance_audit").selectAll().where("exceedance_id", "=", event.id).orderBy("id", "desc").executeTakeFirstOrThrow();
    expect(last.action).toBe("reopened");
    expect(last.after).toMatchObject({ outcome: "water-quality", status: "open", readings_flagged: 0 });
  });

  it("lists events with filters and counts unread notifications in the header", async () => {
    const officer = await signIn("officer@test.example", TEST_PASSWORD);
    const list = await request("/exceedances?site=ALR1&status=closed", { jar: officer });
    expect(await list.text()).toContain("No event matches these filters.");
    const open = await (await request("/exceedances?site=ALR1", { jar: officer })).text();
    expect(open).toContain("ALR1");
    expect(open).toContain("1,500 µS/cm");

    const unread = await db.selectFrom("notification").select((eb) => eb.fn.countAll<number>().as("n")).where("person_id", "=", people.officer.id).where("read_at", "is", null).executeTakeFirstOrThrow();
    const home = await (await request("/notifications", { jar: officer })).text();
    expect(home).toContain(`Notifications, ${Number(unread.n)} unread`);
    await request("/notifications", { jar: officer, form: { intent: "read-all" } });
    expect(await (await request("/notifications", { jar: officer })).text()).toContain("Notifications, none unread");
    // Marking read never touches someone else's notifications.
    const managerUnread = await db.selectFrom("notification").select("id").where("person_id", "=", people.manager.id).where("read_at", "is", null).execute();
    expect(managerUnread.length).toBeGreaterThan(0);
  });
});

describe("on the dashboards", () => {
  it("counts open events per site for the overview, and gives the site chart its events and the rules' threshold lines", async () => {
    const { openExceedanceCounts } = await import("#app/models/overview.server.ts");
    const { eventsForSiteChart } = await import("#app/models/exceedance.server.ts");
    const { thresholdLinesForSite } = await import("#app/models/alert-rule.server.ts");
    const { siteId, loggerId } = await createSite(db, { code: "ALR6", kind: "borehole" });
    const ruleId = await createRule(db, { name: "ALR6 at 20 °C", params: { threshold: 2500, clear: 2375, minDurationMin: 0, referenceC: 20 }, siteIds: [siteId] });
    const range = await insertReadings(db, { siteId, loggerId, startIso: "2025-05-01T00:00:00Z", sc: [2000, 3000, 3100, 2000, 2000, 3000, 2000] });
    await detectExceedances({ siteId, ...range, reason: "ingest" }, { sendEmail: false });

    // Rules for every site from the tests above find events here too: count against the table.
    const openHere = async () => Number((await db.selectFrom("exceedance").select((eb) => eb.fn.countAll<number>().as("n")).where("site_id", "=", siteId).where("status", "=", "open").executeTakeFirstOrThrow()).n);
    const before = await openHere();
    expect(before).toBeGreaterThanOrEqual(2);
    expect((await openExceedanceCounts([siteId])).get(siteId)).toBe(before);
    const mine = await eventsOf(ruleId);
    expect(mine).toHaveLength(2);
    await db.updateTable("exceedance").set({ status: "closed" }).where("id", "=", mine[0].id).execute();
    expect((await openExceedanceCounts([siteId])).get(siteId)).toBe(before - 1);

    // Closed events are still shaded; withdrawn ones would not be.
    const spans = (await eventsForSiteChart(siteId, range.fromMs, range.toMs + 1)).filter((e) => mine.some((m) => m.id === e.id));
    expect(spans.map((e) => [new Date(e.fromMs).toISOString(), new Date(e.toMs).toISOString()])).toEqual([
      ["2025-05-01T00:15:00.000Z", "2025-05-01T00:45:00.000Z"],
      ["2025-05-01T01:15:00.000Z", "2025-05-01T01:30:00.000Z"],
    ]);
    const site = await db.selectFrom("site").select(["id", "kind", "compensation_method", "alpha_per_c", "reference_c"]).where("id", "=", siteId).executeTakeFirstOrThrow();
    const lines = (await thresholdLinesForSite(site)).filter((l) => l.ruleName === "ALR6 at 20 °C");
    // 2,500 µS/cm at 20 °C at a 25 °C site with α = 0.0191: 2500 / (1 − 5 × 0.0191) = 2763.97 (Standard Methods 2510 B linear form, by hand).
    expect(lines).toHaveLength(1);
    expect(lines[0].threshold).toBeCloseTo(2763.97, 1);
  });
});
