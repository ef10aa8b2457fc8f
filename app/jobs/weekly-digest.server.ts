import { z } from "zod";
import { parseWeekKey } from "#app/lib/series/weeks.ts";
import { sendWeeklyDigest } from "#app/models/weekly-digest.server.ts";

// The `weekly-digest` job: run by the worker's crontab every Monday morning (no week: the week that
// has just ended) and queued by an administrator's "send now" (a given week). A send that failed
// for someone fails the job, so the queue retries; those already mailed are skipped on the retry.
const payloadSchema = z.looseObject({ week: z.string().optional() });

export async function runWeeklyDigestJob(payload: unknown) {
  const p = payloadSchema.parse(payload ?? {});
  const week = p.week ? parseWeekKey(p.week) : null;
  if (p.week && !week) throw new Error(`weekly-digest: not a week: ${p.week}`);
  const result = await sendWeeklyDigest({ week });
  console.log(`[weekly-digest] ${result.week}: ${result.sent} sent, ${result.skipped} already had it, ${result.failed.length} failed`);
  if (result.failed.length) {
    throw new Error(`weekly digest not delivered to ${result.failed.map((f) => `${f.email} (${f.error})`).join(", ")}`);
  }
  return result;
}
