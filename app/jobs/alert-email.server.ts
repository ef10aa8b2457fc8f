// Alert e-mail. Detection decides, in the transaction that creates an event, whether its rule may
// send one more message this hour (queueAlertEmail); the message itself goes out from the
// `send-alert-email` job, so a failed send is retried by the queue and the event — already
// committed — is never lost. A rule sends at most `emails_per_hour` single-event messages in any
// rolling hour; events beyond that are held and go out together in one summary when the hour since
// the first counted message has passed.
import { sql, type Transaction } from "kysely";
import type { DB } from "#db/schema.ts";
import { PARAMETER_NAMES, type AlertConditionName, type AlertParameterName } from "#app/lib/quality/alert-rules.ts";
import { formatDuration, formatPeak, peakLabel } from "#app/lib/quality/exceedance-words.ts";
import { formatInZone } from "#app/lib/zoned-time.ts";
import { db } from "#app/utils/db.server.ts";
import { getEnv } from "#app/utils/env.server.ts";
import { enqueue } from "#app/utils/jobs.server.ts";
import { escapeHtml, sendMail } from "#app/utils/mail.server.ts";

export type AlertEmailPayload = { sendId: string } | { summaryForRule: string };

/** Attempts before the queue gives up on one message (graphile-worker backs off exponentially between them). */
export const ALERT_EMAIL_MAX_ATTEMPTS = 8;

const HOUR_MS = 3_600_000;

/**
 * Called inside the transaction that created the event. Either queues a message for it (and its
 * job) or, when the rule has used its hourly allowance, holds it for the rule's next summary.
 */
export async function queueAlertEmail(trx: Transaction<DB>, rule: { id: string; emails_per_hour: number }, exceedanceId: string) {
  // One decision at a time per rule, so two workers cannot both take the last slot of the hour.
  await sql`select pg_advisory_xact_lock(hashtext(${`alert-email:${rule.id}`}))`.execute(trx);
  const recent = await trx
    .selectFrom("email_send")
    .select((eb) => [eb.fn.countAll<number>().as("n"), eb.fn.min("created_at").as("oldest")])
    .where("rule_id", "=", rule.id)
    .where("kind", "=", "event")
    .where("status", "in", ["queued", "sent", "failed"])
    .where("created_at", ">", sql<Date>`now() - interval '1 hour'`)
    .executeTakeFirstOrThrow();
  if (Number(recent.n) < rule.emails_per_hour) {
    const row = await trx
      .insertInto("email_send")
      .values({ rule_id: rule.id, exceedance_id: exceedanceId, kind: "event", status: "queued" })
      .returning("id")
      .executeTakeFirstOrThrow();
    await enqueue("send-alert-email", { sendId: row.id }, { jobKey: `alert-email:${row.id}`, maxAttempts: ALERT_EMAIL_MAX_ATTEMPTS }, trx);
    return { queued: row.id, held: false };
  }
  await trx.insertInto("email_send").values({ rule_id: rule.id, exceedance_id: exceedanceId, kind: "event", status: "held" }).execute();
  const oldest = recent.oldest ? new Date(recent.oldest as Date).getTime() : Date.now();
  // The first held event fixes when the summary goes; later ones join it (preserve_run_at).
  await enqueue(
    "send-alert-email",
    { summaryForRule: rule.id },
    { jobKey: `alert-summary:${rule.id}`, runAt: new Date(oldest + HOUR_MS), jobKeyMode: "preserve_run_at", maxAttempts: ALERT_EMAIL_MAX_ATTEMPTS },
    trx,
  );
  return { queued: null, held: true };
}

type EventForMail = {
  id: string;
  parameter: AlertParameterName;
  condition: AlertConditionName;
  started_at: Date;
  ended_at: Date | null;
  duration_s: number;
  peak_value: number;
  peak_at: Date;
  threshold_value: number | null;
  site_code: string;
  site_name: string;
  time_zone: string;
  rule_name: string;
  params: unknown;
};

async function eventsForMail(ids: string[]): Promise<EventForMail[]> {
  if (!ids.length) return [];
  return db
    .selectFrom("exceedance as e")
    .innerJoin("site as s", "s.id", "e.site_id")
    .innerJoin("alert_rule as r", "r.id", "e.rule_id")
    .select([
      "e.id",
      "e.parameter",
      "e.condition",
      "e.started_at",
      "e.ended_at",
      "e.duration_s",
      "e.peak_value",
      "e.peak_at",
      "e.threshold_value",
      "s.code as site_code",
      "s.name as site_name",
      "s.time_zone",
      "r.name as rule_name",
      "r.params",
    ])
    .where("e.id", "in", ids)
    .orderBy("e.started_at")
    .execute();
}

/** Who is told about these events: the people notified in the app, still active, with their addresses. */
async function recipientsOf(exceedanceIds: string[]): Promise<string[]> {
  if (!exceedanceIds.length) return [];
  const rows = await db
    .selectFrom("notification as n")
    .innerJoin("person as p", "p.id", "n.person_id")
    .select("p.email")
    .distinct()
    .where("n.exceedance_id", "in", exceedanceIds)
    .where("p.disabled_at", "is", null)
    .orderBy("p.email")
    .execute();
  return rows.map((r) => r.email);
}

function unitOf(params: unknown): string | undefined {
  return params && typeof params === "object" && "unit" in params && typeof (params as { unit: unknown }).unit === "string"
    ? (params as { unit: string }).unit
    : undefined;
}

function eventLines(e: EventForMail) {
  const origin = getEnv().APP_ORIGIN.replace(/\/+$/, "");
  const unit = unitOf(e.params);
  return {
    link: `${origin}/exceedances/${e.id}`,
    site: `${e.site_code} · ${e.site_name}`,
    parameter: PARAMETER_NAMES[e.parameter],
    rule: e.rule_name,
    started: formatInZone(e.started_at, e.time_zone),
    ended: e.ended_at ? formatInZone(e.ended_at, e.time_zone) : "still going on at the latest reading",
    duration: formatDuration(e.duration_s),
    peakLabel: peakLabel(e.condition),
    peakValue: formatPeak(e.condition, e.parameter, e.peak_value, unit),
    peak: `${formatPeak(e.condition, e.parameter, e.peak_value, unit)} at ${formatInZone(e.peak_at, e.time_zone)}`,
  };
}

const CAUTION =
  "Levels taken from drinking-water guidance are screening values: local permits, regulations, accredited laboratory analyses and licensed practice govern any decision.";

/** The single-event message. Every interpolated value is escaped in the HTML part. */
export function eventMessage(e: EventForMail) {
  const l = eventLines(e);
  const subject = `Ripplemark alert: ${e.site_code} ${l.parameter.toLowerCase()}, ${l.peakLabel.toLowerCase()} ${l.peakValue}`;
  const rows: [string, string][] = [
    ["Site", l.site],
    ["Parameter", l.parameter],
    ["Rule", l.rule],
    ["Started", l.started],
    ["Ended", l.ended],
    ["Duration", l.duration],
    [l.peakLabel, l.peak],
  ];
  const text = [
    `A new event was found by the rule "${l.rule}".`,
    "",
    ...rows.map(([k, v]) => `${k}: ${v}`),
    "",
    `Review it: ${l.link}`,
    "",
    CAUTION,
  ].join("\n");
  const html = [
    `<p>A new event was found by the rule “${escapeHtml(l.rule)}”.</p>`,
    `<table cellpadding="4" style="border-collapse:collapse">`,
    ...rows.map(([k, v]) => `<tr><th align="left">${escapeHtml(k)}</th><td>${escapeHtml(v)}</td></tr>`),
    `</table>`,
    `<p><a href="${escapeHtml(l.link)}">Review the event in Ripplemark</a></p>`,
    `<p style="color:#5b7387">${escapeHtml(CAUTION)}</p>`,
  ].join("\n");
  return { subject, text, html };
}

/** The summary of events a rule held back over its hourly limit. */
export function summaryMessage(ruleName: string, events: EventForMail[]) {
  const subject = `Ripplemark alert summary: ${events.length} more ${events.length === 1 ? "event" : "events"} for "${ruleName}"`;
  const lines = events.map((e) => eventLines(e));
  const text = [
    `The rule "${ruleName}" found more events than its hourly e-mail limit allows. These were held back:`,
    "",
    ...lines.map((l) => `- ${l.site}, ${l.parameter}: ${l.peakLabel.toLowerCase()} ${l.peak}; started ${l.started}; ${l.duration}. ${l.link}`),
    "",
    CAUTION,
  ].join("\n");
  const html = [
    `<p>The rule “${escapeHtml(ruleName)}” found more events than its hourly e-mail limit allows. These were held back:</p>`,
    "<ul>",
    ...lines.map(
      (l) =>
        `<li><a href="${escapeHtml(l.link)}">${escapeHtml(l.site)}</a>, ${escapeHtml(l.parameter)}: ${escapeHtml(l.peakLabel.toLowerCase())} ${escapeHtml(l.peak)}; started ${escapeHtml(l.started)}; ${escapeHtml(l.duration)}</li>`,
    ),
    "</ul>",
    `<p style="color:#5b7387">${escapeHtml(CAUTION)}</p>`,
  ].join("\n");
  return { subject, text, html };
}

async function deliver(sendId: string, exceedanceIds: string[], build: (events: EventForMail[]) => { subject: string; text: string; html: string }) {
  const events = await eventsForMail(exceedanceIds);
  const recipients = await recipientsOf(exceedanceIds);
  await db.updateTable("email_send").set((eb) => ({ attempts: eb("attempts", "+", 1), recipients })).where("id", "=", sendId).execute();
  if (!events.length || !recipients.length) {
    // Nobody to tell (everyone notified has left, or the events are gone): nothing to retry.
    await db.updateTable("email_send").set({ status: "sent", sent_at: new Date(), last_error: "No active recipient; nothing was sent." }).where("id", "=", sendId).execute();
    return;
  }
  try {
    const { messageId } = await sendMail({ to: recipients, ...build(events) });
    await db.updateTable("email_send").set({ status: "sent", sent_at: new Date(), message_id: messageId, last_error: null }).where("id", "=", sendId).execute();
  } catch (e) {
    await db
      .updateTable("email_send")
      .set({ status: "failed", last_error: String((e as Error).message ?? e).slice(0, 500) })
      .where("id", "=", sendId)
      .execute();
    // The queue retries the job; the event and its notifications are already stored.
    throw e;
  }
}

/** The `send-alert-email` job. Idempotent: a message already sent is not sent again. */
export async function runSendAlertEmail(payload: AlertEmailPayload) {
  if ("sendId" in payload) {
    const row = await db.selectFrom("email_send").select(["id", "status", "exceedance_id"]).where("id", "=", payload.sendId).executeTakeFirst();
    if (!row || row.status === "sent" || !row.exceedance_id) return;
    await deliver(row.id, [row.exceedance_id], (events) => eventMessage(events[0]));
    return;
  }
  const ruleId = payload.summaryForRule;
  // A summary that failed before is sent again (with anything held since); otherwise the held
  // events are gathered into a new one.
  const summaryId = await db.transaction().execute(async (trx) => {
    await sql`select pg_advisory_xact_lock(hashtext(${`alert-email:${ruleId}`}))`.execute(trx);
    let summary = await trx
      .selectFrom("email_send")
      .select("id")
      .where("rule_id", "=", ruleId)
      .where("kind", "=", "summary")
      .where("status", "in", ["queued", "failed"])
      .orderBy("created_at")
      .executeTakeFirst();
    const held = await trx.selectFrom("email_send").select("id").where("rule_id", "=", ruleId).where("status", "=", "held").execute();
    if (!summary && !held.length) return null;
    summary ??= await trx.insertInto("email_send").values({ rule_id: ruleId, kind: "summary", status: "queued" }).returning("id").executeTakeFirstOrThrow();
    if (held.length) {
      await trx
        .updateTable("email_send")
        .set({ status: "summarised", summary_id: summary.id })
        .where("id", "in", held.map((h) => h.id))
        .execute();
    }
    return summary.id;
  });
  if (!summaryId) return;
  const rule = await db.selectFrom("alert_rule").select("name").where("id", "=", ruleId).executeTakeFirst();
  const ids = (await db.selectFrom("email_send").select("exceedance_id").where("summary_id", "=", summaryId).execute())
    .map((r) => r.exceedance_id)
    .filter((x): x is string => !!x);
  await deliver(summaryId, ids, (events) => summaryMessage(rule?.name ?? "(a deleted rule)", events));
}
