import { describe, expect, it, vi } from "vitest";

// The SMTP server is unreachable for this file: mail goes to a closed port on loopback (port 1;
// nothing listens there, so the connection is refused). Set before any module reads the
// environment; every other file keeps the SMTP fake.
vi.hoisted(() => {
  process.env.SMTP_PORT = "1";
});

import { sql } from "kysely";
import { Logger, runOnce } from "graphile-worker";
import { db } from "#app/utils/db.server.ts";
import { getEnv } from "#app/utils/env.server.ts";
import { detectExceedances } from "#app/jobs/detect-exceedances.server.ts";
import { ALERT_EMAIL_MAX_ATTEMPTS } from "#app/jobs/alert-email.server.ts";
import { ALERT_TASKS } from "#app/jobs/alert-tasks.server.ts";
import { createPeople } from "../support/people.ts";
import { createRule, createSite, insertReadings } from "../support/alerts.ts";

describe("a failed alert e-mail", () => {
  it("keeps the event and its notifications, records the failure and leaves the job to the queue's retries", async () => {
    expect(getEnv().SMTP_PORT).toBe(1);
    await createPeople(db);
    const { siteId, loggerId } = await createSite(db, { code: "ALRF" });
    const ruleId = await createRule(db, { params: { threshold: 1000, clear: 900, minDurationMin: 0 }, siteIds: [siteId], email: true, notifyRoles: ["officer"] });
    const range = await insertReadings(db, { siteId, loggerId, startIso: "2025-04-01T00:00:00Z", sc: [500, 1400, 1300, 700] });
    expect((await detectExceedances({ siteId, ...range, reason: "ingest" }, { sendEmail: true })).inserted).toBe(1);

    // What the worker does: take the queued send-alert-email job and run it.
    await runOnce({ connectionString: getEnv().DATABASE_URL, taskList: ALERT_TASKS, logger: new Logger(() => () => {}) });

    const { rows: jobs } = await sql<{ attempts: number; max_attempts: number; last_error: string | null; run_at: Date }>`
      select j.attempts, j.max_attempts, j.last_error, j.run_at
      from graphile_worker._private_jobs j join graphile_worker._private_tasks t on t.id = j.task_id
      where t.identifier = 'send-alert-email'`.execute(db);
    expect(jobs).toHaveLength(1);
    expect(jobs[0].attempts).toBe(1);
    expect(jobs[0].max_attempts).toBe(ALERT_EMAIL_MAX_ATTEMPTS);
    expect(jobs[0].last_error).toMatch(/ECONNREFUSED|connect/i);
    // Scheduled again for later (graphile-worker backs off exponentially).
    expect(jobs[0].run_at.getTime()).toBeGreaterThan(Date.now());

    const [send] = await db.selectFrom("email_send").selectAll().where("rule_id", "=", ruleId).execute();
    expect(send).toMatchObject({ status: "failed", attempts: 1 });
    expect(send.last_error).toMatch(/ECONNREFUSED|connect/i);
    const events = await db.selectFrom("exceedance").select(["id", "status"]).where("rule_id", "=", ruleId).execute();
    expect(events).toEqual([{ id: send.exceedance_id, status: "open" }]);
    expect(await db.selectFrom("notification").select("id").where("exceedance_id", "=", events[0].id).execute()).toHaveLength(1);
  });
});
