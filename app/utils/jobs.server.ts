import { sql, type Kysely, type Transaction } from "kysely";
import type { DB } from "#db/schema.ts";
import { db } from "./db.server.ts";

// The job queue is graphile-worker: jobs live in PostgreSQL (schema graphile_worker), so a job can
// be enqueued in the same transaction as the change that needs it, and more workers on more
// machines simply take jobs from the same database.
export type JobName = "ingest-upload" | "recompute-site" | "readings-changed" | "summarise-weeks" | "weekly-digest" | "send-alert-email" | "evaluate-alert-rule";

export type JobPayloads = {
  "ingest-upload": { uploadId: string };
  "recompute-site": { siteId: string; settingsId: number };
  "readings-changed": import("#app/jobs/readings-changed.server.ts").ReadingsChange;
  /** One alert e-mail (an email_send row), or the summary of a rule's events held back by its hourly limit. */
  "send-alert-email": import("#app/jobs/alert-email.server.ts").AlertEmailPayload;
  /** Run one alert rule over the whole record of every site it covers (after the rule is created or changed). */
  "evaluate-alert-rule": { ruleId: string };
  /** Recompute cached weekly summaries of one site, Mondays fromWeek…toWeek ("YYYY-MM-DD", both included). */
  "summarise-weeks": { siteId: string; fromWeek: string; toWeek: string };
  /** Send the weekly digest of `week` (a Monday; default the last complete week). */
  "weekly-digest": { week?: string; requestedBy?: string };
};

export async function enqueue<N extends JobName>(
  name: N,
  payload: JobPayloads[N],
  options: {
    jobKey?: string;
    maxAttempts?: number;
    runAt?: Date;
    queueName?: string;
    /** What a second job with the same key does: "replace" (default) or "preserve_run_at" (keep the first one's time). */
    jobKeyMode?: "replace" | "preserve_run_at";
  } = {},
  trx: Kysely<DB> | Transaction<DB> = db,
) {
  await sql`select graphile_worker.add_job(
      ${name}::text,
      ${JSON.stringify(payload)}::json,
      queue_name => ${options.queueName ?? null}::text,
      run_at => ${options.runAt ?? null}::timestamptz,
      max_attempts => ${options.maxAttempts ?? 5}::int,
      job_key => ${options.jobKey ?? null}::text,
      job_key_mode => ${options.jobKeyMode ?? "replace"}::text
    )`.execute(trx);
}
