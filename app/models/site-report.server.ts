import { sql } from "kysely";
import type { ThresholdParameterName } from "#db/schema.ts";
import { weeklyTrend } from "#app/lib/series/trend.ts";
import { weekStatus } from "#app/lib/series/week-status.ts";
import { db } from "#app/utils/db.server.ts";
import { exceedancesInRange, periodsInRange } from "./summary-review.server.ts";

// A site's report over any run of whole days (at the site's clock): statistics of every reading in
// the range (quality-flagged readings left out, as in the weekly summaries), daily medians and
// extremes for the chart, the cached weeks inside the range, exceedance events and periods of
// record with their grades.

const THRESHOLD_COLUMN: Record<ThresholdParameterName, string> = {
  sc25: "sc25_us_cm",
  temperature: "temperature_c",
  tds: "tds_mg_l",
  salinity: "salinity_psu",
  ph: "ph",
  depth: "depth_m",
};

/** The longest range a report covers, in days. */
export const REPORT_MAX_DAYS = 3 * 366;

type Stats = { count: number; min: number | null; mean: number | null; median: number | null; p95: number | null; max: number | null };

export async function loadSiteReport(siteCode: string, fromDate: string, toDate: string) {
  const site = await db
    .selectFrom("site")
    .select(["id", "code", "name", "kind", "time_zone", "reference_c", "tds_factor"])
    .where("code", "=", siteCode)
    .executeTakeFirst();
  if (!site) return null;
  const tz = site.time_zone;
  const bounds = (
    await sql<{ t0: Date; t1: Date }>`select (${fromDate}::date::timestamp at time zone ${tz}) as t0, ((${toDate}::date + 1)::timestamp at time zone ${tz}) as t1`.execute(db)
  ).rows[0];
  const thresholds = await db.selectFrom("site_threshold").select(["parameter", "bound", "value"]).where("site_id", "=", site.id).orderBy("parameter").execute();
  const interval = await db
    .selectFrom("logger_deployment as d")
    .innerJoin("logger as l", "l.id", "d.logger_id")
    .select((eb) => eb.fn.min("l.logging_interval_s").as("s"))
    .where("d.site_id", "=", site.id)
    .where("d.deployed_from", "<", bounds.t1)
    .where((eb) => eb.or([eb("d.deployed_until", "is", null), eb("d.deployed_until", ">", bounds.t0)]))
    .executeTakeFirst();
  const intervalS = Number(interval?.s ?? 900) || 900;

  const shareSelects = thresholds.map((th, i) => {
    const c = sql.ref(`x.${THRESHOLD_COLUMN[th.parameter]}`);
    const beyond = th.bound === "upper" ? sql`${c} > ${th.value}::float8` : sql`${c} < ${th.value}::float8`;
    return sql`coalesce(sum(x.dur) filter (where x.ok and ${beyond}), 0) / nullif(sum(x.dur) filter (where x.ok and ${c} is not null), 0) as ${sql.ref(`share_${i}`)}`;
  });

  const [statsRow, daily, expected, weeks, events, periods] = await Promise.all([
    sql<Record<string, unknown>>`
      select count(*)::int as readings, (count(*) filter (where not x.ok))::int as excluded,
        (count(x.sc25_us_cm) filter (where x.ok))::int as sc_n, min(x.sc25_us_cm) filter (where x.ok) as sc_min, avg(x.sc25_us_cm) filter (where x.ok) as sc_mean,
        percentile_cont(array[0.5, 0.95]::float8[]) within group (order by x.sc25_us_cm) filter (where x.ok) as sc_q, max(x.sc25_us_cm) filter (where x.ok) as sc_max,
        (count(x.tds_mg_l) filter (where x.ok))::int as tds_n, min(x.tds_mg_l) filter (where x.ok) as tds_min, avg(x.tds_mg_l) filter (where x.ok) as tds_mean,
        percentile_cont(array[0.5, 0.95]::float8[]) within group (order by x.tds_mg_l) filter (where x.ok) as tds_q, max(x.tds_mg_l) filter (where x.ok) as tds_max,
        avg(x.temperature_c) filter (where x.ok) as temp_mean, min(x.temperature_c) filter (where x.ok) as temp_min, max(x.temperature_c) filter (where x.ok) as temp_max
        ${shareSelects.length ? sql`, ${sql.join(shareSelects)}` : sql``}
      from (
        select r.sc25_us_cm, r.tds_mg_l, r.temperature_c, r.salinity_psu, r.ph, r.depth_m, r.quality_flag is null as ok,
          case when lead(r.time) over (order by r.time) - r.time <= make_interval(secs => ${2 * intervalS})
            then extract(epoch from lead(r.time) over (order by r.time) - r.time)::float8 else ${intervalS}::float8 end as dur
        from readings r
        where r.site_id = ${site.id} and r.time >= ${bounds.t0} and r.time < ${bounds.t1}
      ) x`.execute(db),
    sql<{ day: string; median: number | null; min: number | null; max: number | null }>`
      select (r.time at time zone ${tz})::date::text as day,
        percentile_cont(0.5) within group (order by r.sc25_us_cm) as median, min(r.sc25_us_cm) as min, max(r.sc25_us_cm) as max
      from readings r
      where r.site_id = ${site.id} and r.time >= ${bounds.t0} and r.time < ${bounds.t1} and r.quality_flag is null and r.sc25_us_cm is not null
      group by 1 order by 1`.execute(db),
    sql<{ n: number | null }>`
      select sum(extract(epoch from least(coalesce(d.deployed_until, 'infinity'::timestamptz), ${bounds.t1}::timestamptz) - greatest(d.deployed_from, ${bounds.t0}::timestamptz)) / l.logging_interval_s) as n
      from logger_deployment d join logger l on l.id = d.logger_id
      where d.site_id = ${site.id} and d.deployed_from < ${bounds.t1} and (d.deployed_until is null or d.deployed_until > ${bounds.t0}) and l.logging_interval_s > 0`.execute(db),
    db
      .selectFrom("weekly_summary")
      .select([
        sql<string>`week_start::text`.as("week"),
        "starts_at",
        "readings",
        "completeness",
        "sc25_median",
        "sc25_p95",
        "sc25_max",
        "tds_median",
        "events_total",
        "thresholds",
        "grade",
        "approved",
      ])
      .where("site_id", "=", site.id)
      .where("starts_at", ">=", bounds.t0)
      .where("ends_at", "<=", bounds.t1)
      .orderBy("week_start")
      .execute(),
    exceedancesInRange(db, { siteId: site.id, t0: bounds.t0, t1: bounds.t1 }),
    periodsInRange(db, { siteId: site.id, t0: bounds.t0, t1: bounds.t1 }),
  ]);
  const r = statsRow.rows[0] ?? {};
  const num = (v: unknown) => (v === null || v === undefined ? null : Number(v));
  const q = (v: unknown) => (Array.isArray(v) ? v.map(num) : [null, null]);
  const sc: Stats = { count: Number(r.sc_n ?? 0), min: num(r.sc_min), mean: num(r.sc_mean), median: q(r.sc_q)[0], p95: q(r.sc_q)[1], max: num(r.sc_max) };
  const tds: Stats = { count: Number(r.tds_n ?? 0), min: num(r.tds_min), mean: num(r.tds_mean), median: q(r.tds_q)[0], p95: q(r.tds_q)[1], max: num(r.tds_max) };
  const readings = Number(r.readings ?? 0);
  const exp = num(expected.rows[0]?.n);
  const trend = weeklyTrend(weeks.map((w) => ({ tMs: w.starts_at.getTime(), value: w.sc25_median })));
  return {
    site,
    fromDate,
    toDate,
    fromMs: bounds.t0.getTime(),
    toMs: bounds.t1.getTime(),
    readings,
    excluded: Number(r.excluded ?? 0),
    expected: exp,
    completeness: exp && exp > 0 ? Math.min(1, readings / exp) : null,
    sc25: sc,
    tds,
    temperature: { mean: num(r.temp_mean), min: num(r.temp_min), max: num(r.temp_max) },
    thresholds: thresholds.map((t, i) => ({ ...t, share: num(r[`share_${i}`]) })),
    daily: daily.rows.map((d) => ({ day: d.day, median: d.median, min: d.min, max: d.max })),
    weeks: weeks.map((w) => {
      const { status } = weekStatus({ readings: w.readings, completeness: w.completeness, eventsTotal: w.events_total, thresholds: w.thresholds, grade: w.grade });
      return { ...w, startsAtMs: w.starts_at.getTime(), status };
    }),
    events,
    periods,
    trend,
  };
}

export type SiteReport = NonNullable<Awaited<ReturnType<typeof loadSiteReport>>>;
