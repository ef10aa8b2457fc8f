import { sql, type Transaction } from "kysely";
import type { AlertParameterName, DB, ExceedanceOutcome, ExceedanceStatus } from "#db/schema.ts";
import { SENSOR_FLAG } from "#app/lib/quality/exceedance-words.ts";
import { db } from "#app/utils/db.server.ts";
import { enqueue } from "#app/utils/jobs.server.ts";
import { enqueueSummariseWeeks } from "./weekly-summary.server.ts";
import type { SortDir } from "#app/utils/table-params.ts";

type Executor = typeof db | Transaction<DB>;

// ---- the list -----------------------------------------------------------------------------------

export const EXCEEDANCE_SORT_KEYS = ["started", "site", "parameter", "duration", "status"] as const;
export type ExceedanceSortKey = (typeof EXCEEDANCE_SORT_KEYS)[number];

export type ExceedanceFilter = {
  siteCode?: string;
  parameter?: AlertParameterName;
  status?: ExceedanceStatus;
  /** "unclassified" = no outcome yet. */
  outcome?: ExceedanceOutcome | "unclassified";
  /** Events overlapping [fromMs, toMs). */
  fromMs?: number;
  toMs?: number;
};

function filtered(f: ExceedanceFilter, trx: Executor) {
  let q = trx.selectFrom("exceedance as e").innerJoin("site as s", "s.id", "e.site_id").innerJoin("alert_rule as r", "r.id", "e.rule_id");
  if (f.siteCode) q = q.where("s.code", "=", f.siteCode);
  if (f.parameter) q = q.where("e.parameter", "=", f.parameter);
  if (f.status) q = q.where("e.status", "=", f.status);
  if (f.outcome === "unclassified") q = q.where("e.outcome", "is", null);
  else if (f.outcome) q = q.where("e.outcome", "=", f.outcome);
  if (f.toMs !== undefined) q = q.where("e.started_at", "<", new Date(f.toMs));
  if (f.fromMs !== undefined) {
    const from = new Date(f.fromMs);
    q = q.where((eb) => eb(eb.fn.coalesce("e.ended_at", "e.last_reading_at"), ">=", from));
  }
  return q;
}

export async function countExceedances(f: ExceedanceFilter, trx: Executor = db) {
  const row = await filtered(f, trx).select((eb) => eb.fn.countAll<number>().as("n")).executeTakeFirstOrThrow();
  return Number(row.n);
}

export async function listExceedancesPage(f: ExceedanceFilter, page: { sort: ExceedanceSortKey; dir: SortDir; limit: number; offset: number }, trx: Executor = db) {
  const q = filtered(f, trx).select([
    "e.id",
    "e.parameter",
    "e.condition",
    "e.started_at",
    "e.ended_at",
    "e.duration_s",
    "e.peak_value",
    "e.status",
    "e.outcome",
    "e.readings_flagged",
    "s.code as site_code",
    "s.name as site_name",
    "s.time_zone",
    "r.name as rule_name",
    "r.params",
  ]);
  const ordered =
    page.sort === "site"
      ? q.orderBy("s.code", page.dir).orderBy("e.started_at", "desc")
      : page.sort === "parameter"
        ? q.orderBy("e.parameter", page.dir).orderBy("e.started_at", "desc")
        : page.sort === "duration"
          ? q.orderBy("e.duration_s", page.dir)
          : page.sort === "status"
            ? q.orderBy("e.status", page.dir).orderBy("e.started_at", "desc")
            : q.orderBy("e.started_at", page.dir);
  return ordered.orderBy("e.id").limit(page.limit).offset(page.offset).execute();
}

// ---- one event ------------------------------------------------------------------------------------

export async function findExceedance(id: string, trx: Executor = db) {
  return trx
    .selectFrom("exceedance as e")
    .innerJoin("site as s", "s.id", "e.site_id")
    .innerJoin("alert_rule as r", "r.id", "e.rule_id")
    .leftJoin("person as c", "c.id", "e.closed_by")
    .select([
      "e.id",
      "e.rule_id",
      "e.site_id",
      "e.parameter",
      "e.condition",
      "e.started_at",
      "e.ended_at",
      "e.last_reading_at",
      "e.duration_s",
      "e.peak_value",
      "e.peak_at",
      "e.threshold_value",
      "e.clear_value",
      "e.status",
      "e.outcome",
      "e.comment",
      "e.readings_flagged",
      "e.detected_at",
      "e.closed_at",
      "c.name as closed_by_name",
      "s.code as site_code",
      "s.name as site_name",
      "s.time_zone",
      "s.reference_c",
      "r.name as rule_name",
      "r.params",
      "r.notify_roles",
      "r.guideline_source",
    ])
    .where("e.id", "=", id)
    .executeTakeFirst();
}

export type ExceedanceRow = NonNullable<Awaited<ReturnType<typeof findExceedance>>>;

export async function listExceedanceAudit(id: string, trx: Executor = db) {
  return trx
    .selectFrom("exceedance_audit as a")
    .leftJoin("person as p", "p.id", "a.person_id")
    .select(["a.id", "a.at", "a.action", "a.before", "a.after", "a.person_id", "p.name as personName"])
    .where("a.exceedance_id", "=", id)
    .orderBy("a.at", "desc")
    .orderBy("a.id", "desc")
    .limit(200)
    .execute();
}

// ---- review ---------------------------------------------------------------------------------------

export type ReviewInput = {
  outcome: ExceedanceOutcome | null;
  comment: string;
  /** "close" closes the event after saving, "reopen" opens a closed one; "save" keeps the status. */
  then: "save" | "close" | "reopen";
  /** For a sensor fault: flag the event's readings so summaries and later checks leave them out. */
  flagReadings: boolean;
};

type Reviewed = { outcome: ExceedanceOutcome | null; comment: string; status: ExceedanceStatus; readings_flagged: number };

/**
 * The readings an event covers: its first reading to its last one. The reading that ended it (back
 * past the clear level) is not part of it.
 */
function spanOf(e: { started_at: Date; last_reading_at: Date }) {
  return { from: e.started_at, to: e.last_reading_at };
}

/**
 * Sets the sensor flag on the readings of an event that have no flag yet; raw values stay as they
 * are. Returns how many readings were flagged.
 */
async function flagReadings(trx: Transaction<DB>, e: { site_id: string; started_at: Date; last_reading_at: Date }) {
  const { from, to } = spanOf(e);
  const r = await trx
    .updateTable("readings")
    .set({ quality_flag: SENSOR_FLAG })
    .where("site_id", "=", e.site_id)
    .where("time", ">=", from)
    .where("time", "<=", to)
    .where("quality_flag", "is", null)
    .executeTakeFirst();
  return Number(r.numUpdatedRows);
}

/** Takes the sensor flag off an event's readings, except where another flagged event still covers them. */
async function unflagReadings(trx: Transaction<DB>, e: { id: string; site_id: string; started_at: Date; last_reading_at: Date }) {
  const { from, to } = spanOf(e);
  const r = await sql`
    update readings r set quality_flag = null
    where r.site_id = ${e.site_id} and r.time >= ${from} and r.time <= ${to} and r.quality_flag = ${SENSOR_FLAG}
      and not exists (
        select 1 from exceedance o
        where o.site_id = r.site_id and o.id <> ${e.id} and o.readings_flagged > 0
          and r.time >= o.started_at and r.time <= o.last_reading_at)`.execute(trx);
  return Number(r.numAffectedRows ?? 0);
}

/**
 * An officer's review: outcome, comment, closing or reopening, and the sensor flag on the event's
 * readings. Every change is written to exceedance_audit (who, when, before → after) in the same
 * transaction. Flagging or unflagging readings queues the readings-changed job for the stretch, so
 * summaries and detection catch up with what is now left out.
 */
export async function reviewExceedance(actorId: string, id: string, input: ReviewInput) {
  return db.transaction().execute(async (trx) => {
    const e = await trx
      .selectFrom("exceedance")
      .select(["id", "site_id", "started_at", "ended_at", "last_reading_at", "outcome", "comment", "status", "readings_flagged", "closed_at"])
      .where("id", "=", id)
      .forUpdate()
      .executeTakeFirst();
    if (!e) return { outcome: "missing" as const };
    if (e.status === "withdrawn") return { outcome: "withdrawn" as const };
    const before: Reviewed = { outcome: e.outcome, comment: e.comment, status: e.status, readings_flagged: e.readings_flagged };
    const after: Reviewed = { ...before, outcome: input.outcome, comment: input.comment };
    if (input.then === "close") after.status = "closed";
    if (input.then === "reopen") after.status = "open";

    let flagged = 0;
    let unflagged = 0;
    if (input.flagReadings && input.outcome === "sensor-fault") {
      flagged = await flagReadings(trx, e);
      after.readings_flagged = e.readings_flagged + flagged;
    } else if (e.readings_flagged > 0 && (!input.flagReadings || input.outcome !== "sensor-fault")) {
      unflagged = await unflagReadings(trx, e);
      after.readings_flagged = 0;
    }

    const changed = (Object.keys(after) as (keyof Reviewed)[]).filter((k) => after[k] !== before[k]);
    if (!changed.length) return { outcome: "unchanged" as const };
    const closing = after.status === "closed" && before.status !== "closed";
    await trx
      .updateTable("exceedance")
      .set({
        outcome: after.outcome,
        comment: after.comment,
        status: after.status,
        readings_flagged: after.readings_flagged,
        updated_at: new Date(),
        ...(closing ? { closed_by: actorId, closed_at: new Date() } : after.status === "open" ? { closed_by: null, closed_at: null } : {}),
      })
      .where("id", "=", id)
      .execute();
    await trx
      .insertInto("exceedance_audit")
      .values({
        exceedance_id: id,
        person_id: actorId,
        action: closing ? "closed" : after.status === "open" && before.status === "closed" ? "reopened" : "reviewed",
        before: JSON.stringify(Object.fromEntries(changed.map((k) => [k, before[k]]))),
        after: JSON.stringify(Object.fromEntries(changed.map((k) => [k, after[k]]))),
      })
      .execute();
    if (flagged || unflagged) {
      const { from, to } = spanOf(e);
      await enqueue("readings-changed", { siteId: e.site_id, fromMs: from.getTime(), toMs: to.getTime(), reason: "manual" }, { maxAttempts: 10 }, trx);
    } else if (changed.includes("outcome")) {
      // The weekly summary of the week the event began counts events by outcome.
      await enqueueSummariseWeeks(e.site_id, e.started_at.getTime(), e.started_at.getTime(), trx);
    }
    return { outcome: closing ? ("closed" as const) : ("saved" as const), flagged, unflagged };
  });
}

// ---- for other pages --------------------------------------------------------------------------------

/** Open events per site (the overview's count). */
export async function openCountsBySite(siteIds: readonly string[], trx: Executor = db) {
  const counts = new Map<string, number>(siteIds.map((id) => [id, 0]));
  if (!siteIds.length) return counts;
  const rows = await trx
    .selectFrom("exceedance")
    .select((eb) => ["site_id", eb.fn.countAll<number>().as("n")])
    .where("status", "=", "open")
    .where("site_id", "in", [...siteIds])
    .groupBy("site_id")
    .execute();
  for (const r of rows) counts.set(r.site_id, Number(r.n));
  return counts;
}

/** Events at a site overlapping [from, to) that are not withdrawn: a site chart shades them. */
export async function eventsForSiteChart(siteId: string, fromMs: number, toMs: number, trx: Executor = db) {
  const rows = await trx
    .selectFrom("exceedance as e")
    .innerJoin("alert_rule as r", "r.id", "e.rule_id")
    .select(["e.id", "e.parameter", "e.condition", "e.started_at", "e.ended_at", "e.last_reading_at", "e.status", "e.outcome", "r.name as rule_name"])
    .where("e.site_id", "=", siteId)
    .where("e.status", "<>", "withdrawn")
    .where("e.started_at", "<", new Date(toMs))
    .where((eb) => eb(eb.fn.coalesce("e.ended_at", "e.last_reading_at"), ">=", new Date(fromMs)))
    .orderBy("e.started_at")
    .limit(500)
    .execute();
  return rows.map((r) => ({
    id: r.id,
    parameter: r.parameter,
    condition: r.condition,
    fromMs: r.started_at.getTime(),
    toMs: (r.ended_at ?? r.last_reading_at).getTime(),
    ongoing: r.ended_at === null,
    status: r.status,
    outcome: r.outcome,
    ruleName: r.rule_name,
  }));
}

export type ChartEvent = Awaited<ReturnType<typeof eventsForSiteChart>>[number];
