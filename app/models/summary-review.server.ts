import { sql, type Kysely, type RawBuilder, type Transaction } from "kysely";
import type { DB } from "#db/schema.ts";

// The weekly summaries count exceedance events (table `exceedance`, migration 0006) and carry the
// grade and approval of periods of record (table `record_period`, migration 0007). Those tables are
// written by other parts of Ripplemark; this module is the one place that reads them for summaries,
// so when their columns settle only the lists below change. Until a table exists (or while it lacks
// the columns named here) the summaries simply leave events at zero and grade/approval empty.
// Column names reach SQL only from these lists, never from input.

type Db = Kysely<DB> | Transaction<DB>;

async function columnsOf(trx: Db, table: string): Promise<Set<string>> {
  const { rows } = await sql<{ column_name: string }>`
    select column_name from information_schema.columns
    where table_schema = current_schema() and table_name = ${table}`.execute(trx);
  return new Set(rows.map((r) => r.column_name));
}

function firstOf(have: Set<string>, candidates: readonly string[]) {
  return candidates.find((c) => have.has(c)) ?? null;
}

/**
 * A query yielding (week_start, outcome, n): exceedance events of a site that started in
 * [t0, t1), counted by outcome (events not yet classified count as "unclassified"; withdrawn events
 * not at all), by week at the site's clock. Null while the exceedance table is not there.
 */
export async function exceedanceCountsSql(
  trx: Db,
  o: { siteId: string; tz: string; t0: Date; t1: Date },
): Promise<RawBuilder<unknown> | null> {
  const have = await columnsOf(trx, "exceedance");
  const started = firstOf(have, ["started_at", "starts_at", "start_at", "from_at"]);
  if (!have.has("site_id") || !started) return null;
  const startedRef = sql.ref(`e.${started}`);
  const outcomeExpr = have.has("outcome") ? sql`coalesce(nullif(${sql.ref("e.outcome")}::text, ''), 'unclassified')` : sql`'unclassified'`;
  // An event withdrawn by its detector (the data behind it changed) is no event.
  const live = have.has("status") ? sql`and ${sql.ref("e.status")}::text <> 'withdrawn'` : sql``;
  return sql`
    select date_trunc('week', ${startedRef} at time zone ${o.tz})::date as week_start, ${outcomeExpr} as outcome, count(*)::int as n
    from exceedance e
    where e.site_id = ${o.siteId} and ${startedRef} >= ${o.t0} and ${startedRef} < ${o.t1} ${live}
    group by 1, 2`;
}

/**
 * A query yielding (starts_at, ends_at, grade, approved) for each period of record of a site
 * (an open-ended period runs to 'infinity'). Null while the record_period table is not there.
 */
export async function periodGradesSql(trx: Db, o: { siteId: string }): Promise<RawBuilder<unknown> | null> {
  const have = await columnsOf(trx, "record_period");
  const from = firstOf(have, ["starts_at", "period_from", "from_at", "start_at", "valid_from", "period_start"]);
  const to = firstOf(have, ["ends_at", "period_to", "to_at", "end_at", "valid_to", "period_end"]);
  if (!have.has("site_id") || !from || !to) return null;
  const grade = have.has("grade") ? sql`${sql.ref("p.grade")}::text` : sql`null::text`;
  const approved = have.has("approved")
    ? sql`coalesce(${sql.ref("p.approved")}, false)`
    : have.has("approved_at")
      ? sql`${sql.ref("p.approved_at")} is not null`
      : have.has("approval")
        ? sql`${sql.ref("p.approval")}::text = 'approved'`
        : have.has("status")
          ? sql`${sql.ref("p.status")}::text = 'approved'`
          : sql`false`;
  return sql`
    select ${sql.ref(`p.${from}`)}::timestamptz as starts_at, coalesce(${sql.ref(`p.${to}`)}::timestamptz, 'infinity'::timestamptz) as ends_at,
      ${grade} as grade, ${approved} as approved
    from record_period p
    where p.site_id = ${o.siteId}`;
}

export type ReportEvent = { startedAt: Date; endedAt: Date | null; parameter: string | null; peakValue: number | null; outcome: string; status: string | null };

/** Exceedance events of a site that started in [t0, t1), oldest first (none while the table is not there). */
export async function exceedancesInRange(trx: Db, o: { siteId: string; t0: Date; t1: Date; limit?: number }): Promise<ReportEvent[]> {
  const have = await columnsOf(trx, "exceedance");
  if (!have.has("site_id") || !have.has("started_at")) return [];
  const pick = (c: string, cast: string) => (have.has(c) ? sql`${sql.ref(`e.${c}`)}::${sql.raw(cast)}` : sql`null::${sql.raw(cast)}`);
  const live = have.has("status") ? sql`and e.status::text <> 'withdrawn'` : sql``;
  const { rows } = await sql<{ started_at: Date; ended_at: Date | null; parameter: string | null; peak_value: number | null; outcome: string | null; status: string | null }>`
    select e.started_at, ${pick("ended_at", "timestamptz")} as ended_at, ${pick("parameter", "text")} as parameter,
      ${pick("peak_value", "float8")} as peak_value, ${pick("outcome", "text")} as outcome, ${pick("status", "text")} as status
    from exceedance e
    where e.site_id = ${o.siteId} and e.started_at >= ${o.t0} and e.started_at < ${o.t1} ${live}
    order by e.started_at
    limit ${o.limit ?? 500}`.execute(trx);
  return rows.map((r) => ({
    startedAt: r.started_at,
    endedAt: r.ended_at,
    parameter: r.parameter,
    peakValue: r.peak_value,
    outcome: r.outcome ?? "unclassified",
    status: r.status,
  }));
}

export type ReportPeriod = { startsAt: Date; endsAt: Date; grade: string | null; approved: boolean };

/** Periods of record of a site overlapping [t0, t1), oldest first (none while the table is not there). */
export async function periodsInRange(trx: Db, o: { siteId: string; t0: Date; t1: Date }): Promise<ReportPeriod[]> {
  const grades = await periodGradesSql(trx, { siteId: o.siteId });
  if (!grades) return [];
  const { rows } = await sql<{ starts_at: Date; ends_at: Date; grade: string | null; approved: boolean }>`
    select p.starts_at, p.ends_at, p.grade, p.approved from (${grades}) p
    where p.starts_at < ${o.t1} and p.ends_at > ${o.t0}
    order by p.starts_at
    limit 500`.execute(trx);
  return rows.map((r) => ({ startsAt: r.starts_at, endsAt: r.ends_at, grade: r.grade, approved: r.approved }));
}
