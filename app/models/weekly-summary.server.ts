import { sql, type Kysely, type RawBuilder, type Transaction } from "kysely";
import type { DB, ThresholdParameterName } from "#db/schema.ts";
import { GRADES } from "#app/lib/quality/grades.ts";
import { addWeeks, weekStartAt } from "#app/lib/series/weeks.ts";
import { db } from "#app/utils/db.server.ts";
import { enqueue } from "#app/utils/jobs.server.ts";
import { periodGradesSql, exceedanceCountsSql } from "./summary-review.server.ts";

// Writing the weekly summary cache (table weekly_summary, migration 0008). Everything is computed in
// PostgreSQL, one statement per site and run of weeks: the week of a reading is
// date_trunc('week', time at time zone <site zone>) — Monday 00:00 at the site's clock, so a
// clock-change week holds 167 or 169 hours of readings — and the statistics are the database's own
// (percentile_cont is Hyndman & Fan definition 7, as quantileSorted in app/lib/series/statistics.ts).
// Readings with a quality flag count as received but are left out of every statistic.

type Db = Kysely<DB> | Transaction<DB>;

/** Threshold parameters → reading columns (an allow-list: identifiers never come from input). */
const THRESHOLD_COLUMN: Record<ThresholdParameterName, string> = {
  sc25: "sc25_us_cm",
  temperature: "temperature_c",
  tds: "tds_mg_l",
  salinity: "salinity_psu",
  ph: "ph",
  depth: "depth_m",
};

/** Logging interval assumed when no deployment names one (the common 15 minutes). */
const FALLBACK_INTERVAL_S = 900;

export type WeekRange = { fromWeek: string; toWeek: string };

async function siteZone(siteId: string, trx: Db = db) {
  return trx.selectFrom("site").select(["id", "time_zone"]).where("id", "=", siteId).executeTakeFirst();
}

/** The weeks (at the site's clock) that readings between `fromMs` and `toMs` (both included) fall in. */
export async function weeksCovering(siteId: string, fromMs: number, toMs: number): Promise<WeekRange | null> {
  const site = await siteZone(siteId);
  if (!site) return null;
  const a = weekStartAt(new Date(Math.min(fromMs, toMs)), site.time_zone);
  const b = weekStartAt(new Date(Math.max(fromMs, toMs)), site.time_zone);
  return { fromWeek: a, toWeek: b };
}

/**
 * Queues the `summarise-weeks` job for the weeks a change of readings touched. One queue for all
 * summaries, so the jobs run one at a time (they are CPU-heavy and the machine is shared).
 */
export async function enqueueSummariseWeeks(siteId: string, fromMs: number, toMs: number, trx: Db = db) {
  const weeks = await weeksCovering(siteId, fromMs, toMs);
  if (!weeks) return null;
  await enqueue("summarise-weeks", { siteId, ...weeks }, { queueName: "weekly-summaries", maxAttempts: 5 }, trx);
  return weeks;
}

/**
 * Recomputes the cached summaries of one site for every week from `fromWeek` to `toWeek` (Mondays,
 * both included): rows of weeks with readings or a deployed logger are written, rows of weeks that
 * have neither any more are removed. Idempotent; concurrent runs for one site wait for each other.
 */
export async function summariseWeeks(siteId: string, fromWeek: string, toWeek: string): Promise<{ weeks: number }> {
  return db.transaction().execute(async (trx) => {
    const site = await siteZone(siteId, trx);
    if (!site) return { weeks: 0 };
    // Two runs over the same weeks of a site (a queued job and a rebuild) wait for each other; runs
    // over different weeks of one site go ahead side by side.
    await sql`select pg_advisory_xact_lock(hashtext('weekly-summary:' || ${siteId}), hashtext(${fromWeek}))`.execute(trx);
    // Sorting for the percentiles stays in memory at this size (a week of 1-minute readings is ~10k
    // rows). JIT compiling this statement costs seconds and saves nothing at this size.
    await sql`set local work_mem = '64MB'`.execute(trx);
    await sql`set local jit = off`.execute(trx);
    const tz = site.time_zone;
    const bounds = (
      await sql<{ t0: Date; t1: Date }>`
        select (${fromWeek}::date::timestamp at time zone ${tz}) as t0, ((${toWeek}::date + 7)::timestamp at time zone ${tz}) as t1`.execute(trx)
    ).rows[0];

    const thresholds = await trx
      .selectFrom("site_threshold")
      .select(["parameter", "bound", "value"])
      .where("site_id", "=", siteId)
      .orderBy("parameter")
      .orderBy("bound", "desc")
      .execute();
    const interval = await trx
      .selectFrom("logger_deployment as d")
      .innerJoin("logger as l", "l.id", "d.logger_id")
      .select((eb) => eb.fn.min("l.logging_interval_s").as("s"))
      .where("d.site_id", "=", siteId)
      .where("d.deployed_from", "<", bounds.t1)
      .where((eb) => eb.or([eb("d.deployed_until", "is", null), eb("d.deployed_until", ">", bounds.t0)]))
      .executeTakeFirst();
    const intervalS = Number(interval?.s ?? FALLBACK_INTERVAL_S) || FALLBACK_INTERVAL_S;
    // A reading stands for the time to the next one when that is at most two logging intervals
    // (continuous data), otherwise for one interval (before a gap): as readingDurationsMs.
    const gapS = 2 * intervalS;

    // Time-weighted share beyond each display threshold, as a JSON array per week.
    const shareItems: RawBuilder<unknown>[] = thresholds.map((th) => {
      const c = sql.ref(`x.${THRESHOLD_COLUMN[th.parameter]}`);
      const beyond = th.bound === "upper" ? sql`${c} > ${th.value}::float8` : sql`${c} < ${th.value}::float8`;
      return sql`jsonb_build_object('parameter', ${th.parameter}::text, 'bound', ${th.bound}::text, 'value', ${th.value}::float8,
        'share', coalesce(sum(x.dur) filter (where x.ok and ${beyond}), 0) / nullif(sum(x.dur) filter (where x.ok and ${c} is not null), 0))`;
    });
    const thresholdsJson = shareItems.length ? sql`jsonb_build_array(${sql.join(shareItems)})` : sql`'[]'::jsonb`;
    const scUpper = thresholds.find((t) => t.parameter === "sc25" && t.bound === "upper");
    const aboveShare = scUpper
      ? sql`coalesce(sum(x.dur) filter (where x.ok and x.sc25_us_cm > ${scUpper.value}::float8), 0) / nullif(sum(x.dur) filter (where x.ok and x.sc25_us_cm is not null), 0)`
      : sql`null::float8`;

    await sql`delete from weekly_summary where site_id = ${siteId} and week_start between ${fromWeek}::date and ${toWeek}::date`.execute(trx);
    // One pass over each week's readings (an index range scan of the primary key, no sort of the
    // whole range): `grouping sets ((), (day))` yields the week's figures and each day's median
    // together. A reading's duration is the step to the next reading of the week when that is at most
    // two logging intervals, otherwise one interval.
    const inserted = await sql<{ n: number }>`
      with weeks as (
        select w::date as week_start,
          (w::date::timestamp at time zone ${tz}) as starts_at,
          ((w::date + 7)::timestamp at time zone ${tz}) as ends_at
        from generate_series(${fromWeek}::date::timestamp, ${toWeek}::date::timestamp, interval '7 days') as w
      ),
      stats as (
        select w.week_start, w.starts_at, w.ends_at, a.*
        from weeks w
        cross join lateral (
          select
            max(gs.readings) filter (where gs.g = 1) as readings,
            max(gs.readings_excluded) filter (where gs.g = 1) as readings_excluded,
            max(gs.sc25_count) filter (where gs.g = 1) as sc25_count,
            max(gs.sc25_min) filter (where gs.g = 1) as sc25_min,
            max(gs.sc25_mean) filter (where gs.g = 1) as sc25_mean,
            max(gs.sc25_q) filter (where gs.g = 1) as sc25_q,
            max(gs.sc25_max) filter (where gs.g = 1) as sc25_max,
            max(gs.tds_count) filter (where gs.g = 1) as tds_count,
            max(gs.tds_min) filter (where gs.g = 1) as tds_min,
            max(gs.tds_mean) filter (where gs.g = 1) as tds_mean,
            max(gs.tds_q) filter (where gs.g = 1) as tds_q,
            max(gs.tds_max) filter (where gs.g = 1) as tds_max,
            max(gs.temperature_mean) filter (where gs.g = 1) as temperature_mean,
            (array_agg(gs.thresholds) filter (where gs.g = 1))[1] as thresholds,
            max(gs.sc25_above_share) filter (where gs.g = 1) as sc25_above_share,
            jsonb_object_agg((gs.day - w.week_start)::text, gs.sc25_q[1]) filter (where gs.g = 0) as days
          from (
            select grouping(x.day) as g, x.day,
              count(*)::int as readings,
              (count(*) filter (where not x.ok))::int as readings_excluded,
              (count(x.sc25_us_cm) filter (where x.ok))::int as sc25_count,
              min(x.sc25_us_cm) filter (where x.ok) as sc25_min,
              avg(x.sc25_us_cm) filter (where x.ok) as sc25_mean,
              percentile_cont(array[0.5, 0.95]::float8[]) within group (order by x.sc25_us_cm) filter (where x.ok) as sc25_q,
              max(x.sc25_us_cm) filter (where x.ok) as sc25_max,
              (count(x.tds_mg_l) filter (where x.ok))::int as tds_count,
              min(x.tds_mg_l) filter (where x.ok) as tds_min,
              avg(x.tds_mg_l) filter (where x.ok) as tds_mean,
              percentile_cont(array[0.5, 0.95]::float8[]) within group (order by x.tds_mg_l) filter (where x.ok) as tds_q,
              max(x.tds_mg_l) filter (where x.ok) as tds_max,
              avg(x.temperature_c) filter (where x.ok) as temperature_mean,
              ${thresholdsJson} as thresholds,
              ${aboveShare} as sc25_above_share
            from (
              select r.time, r.sc25_us_cm, r.tds_mg_l, r.temperature_c, r.salinity_psu, r.ph, r.depth_m,
                r.quality_flag is null as ok,
                (r.time at time zone ${tz})::date as day,
                case when lead(r.time) over (order by r.time) - r.time <= make_interval(secs => ${gapS})
                  then extract(epoch from lead(r.time) over (order by r.time) - r.time)::float8 else ${intervalS}::float8 end as dur
              from readings r
              where r.site_id = ${siteId} and r.time >= w.starts_at and r.time < w.ends_at
            ) x
            group by grouping sets ((), (x.day))
          ) gs
        ) a
      ),
      expected as (
        select w.week_start,
          -- Up to now at most: the week in progress expects only the readings due so far.
          sum(greatest(0, extract(epoch from least(coalesce(d.deployed_until, 'infinity'::timestamptz), w.ends_at, now()) - greatest(d.deployed_from, w.starts_at)))
              / l.logging_interval_s) as n
        from weeks w
        join logger_deployment d on d.site_id = ${siteId} and d.deployed_from < w.ends_at and (d.deployed_until is null or d.deployed_until > w.starts_at)
        join logger l on l.id = d.logger_id
        where l.logging_interval_s > 0
        group by w.week_start
      )
      insert into weekly_summary (
        site_id, week_start, iso_year, iso_week, starts_at, ends_at, readings, readings_excluded, readings_expected, completeness,
        sc25_count, sc25_min, sc25_mean, sc25_median, sc25_p95, sc25_max,
        tds_count, tds_min, tds_mean, tds_median, tds_p95, tds_max,
        temperature_mean, thresholds, sc25_above_share, daily_sc25_medians, computed_at)
      select ${siteId}::uuid, s.week_start, extract(isoyear from s.week_start)::int, extract(week from s.week_start)::int, s.starts_at, s.ends_at,
        s.readings, s.readings_excluded, e.n,
        case when e.n > 0 then least(1, s.readings / e.n) end,
        s.sc25_count, s.sc25_min, s.sc25_mean, s.sc25_q[1], s.sc25_q[2], s.sc25_max,
        s.tds_count, s.tds_min, s.tds_mean, s.tds_q[1], s.tds_q[2], s.tds_max,
        s.temperature_mean, case when s.readings > 0 then s.thresholds else '[]'::jsonb end, s.sc25_above_share,
        (select jsonb_agg(s.days -> g.i::text order by g.i) from generate_series(0, 6) as g(i)),
        now()
      from stats s
      left join expected e on e.week_start = s.week_start
      where s.readings > 0 or e.n > 0
      on conflict (site_id, week_start) do update set
        iso_year = excluded.iso_year, iso_week = excluded.iso_week, starts_at = excluded.starts_at, ends_at = excluded.ends_at,
        readings = excluded.readings, readings_excluded = excluded.readings_excluded, readings_expected = excluded.readings_expected,
        completeness = excluded.completeness, sc25_count = excluded.sc25_count, sc25_min = excluded.sc25_min, sc25_mean = excluded.sc25_mean,
        sc25_median = excluded.sc25_median, sc25_p95 = excluded.sc25_p95, sc25_max = excluded.sc25_max, tds_count = excluded.tds_count,
        tds_min = excluded.tds_min, tds_mean = excluded.tds_mean, tds_median = excluded.tds_median, tds_p95 = excluded.tds_p95,
        tds_max = excluded.tds_max, temperature_mean = excluded.temperature_mean, thresholds = excluded.thresholds,
        sc25_above_share = excluded.sc25_above_share, daily_sc25_medians = excluded.daily_sc25_medians,
        events = '{}'::jsonb, events_total = 0, grade = null, approved = null, computed_at = excluded.computed_at
      returning 1 as n`.execute(trx);

    // Exceedance events and the grade/approval of periods of record, from their own tables when
    // those exist (migrations 0006 and 0007).
    const events = await exceedanceCountsSql(trx, { siteId, tz, t0: bounds.t0, t1: bounds.t1 });
    if (events) {
      await sql`
        with c as (${events}),
        x as (select week_start, jsonb_object_agg(outcome, n) as events, sum(n)::int as total from c group by week_start)
        update weekly_summary s set events = x.events, events_total = x.total
        from x where s.site_id = ${siteId} and s.week_start = x.week_start`.execute(trx);
    }
    const grades = await periodGradesSql(trx, { siteId });
    if (grades) {
      // The week's grade is the worst grade of the periods of record it overlaps (GRADES runs from
      // best to worst); it counts as approved only when every one of them is.
      await sql`
        with g as (
          select s.week_start,
            (array_agg(p.grade order by array_position(${GRADES as readonly string[]}::text[], p.grade) desc nulls last) filter (where p.grade is not null))[1] as grade,
            bool_and(p.approved) as approved
          from weekly_summary s
          join (${grades}) p on p.starts_at < s.ends_at and p.ends_at > s.starts_at
          where s.site_id = ${siteId} and s.week_start between ${fromWeek}::date and ${toWeek}::date
          group by s.week_start
        )
        update weekly_summary s set grade = g.grade, approved = g.approved
        from g where s.site_id = ${siteId} and s.week_start = g.week_start`.execute(trx);
    }
    return { weeks: inserted.rows.length };
  });
}

/**
 * The weeks a site has data for: from the week of its first reading or deployment to the week of its
 * last reading, or this week while a logger is still deployed (so weeks a deployed logger sent nothing
 * show as 0 % complete).
 */
async function siteWeekSpan(siteId: string, tz: string): Promise<WeekRange | null> {
  const row = (
    await sql<{ first: Date | null; last: Date | null }>`
      select least((select min(time) from readings where site_id = ${siteId}), (select min(deployed_from) from logger_deployment where site_id = ${siteId})) as first,
        greatest((select max(time) from readings where site_id = ${siteId}),
          (select least(now(), max(coalesce(deployed_until, now()))) from logger_deployment where site_id = ${siteId})) as last`.execute(db)
  ).rows[0];
  if (!row?.first || !row.last) return null;
  return { fromWeek: weekStartAt(row.first, tz), toWeek: weekStartAt(row.last, tz) };
}

/** Weeks per unit of work in a rebuild: long enough to amortise a statement, short enough to share out. */
const REBUILD_CHUNK_WEEKS = 26;

/**
 * Rebuilds every site's summaries from scratch (the demo seed, a new summary definition, repairs).
 * The work is cut into runs of REBUILD_CHUNK_WEEKS weeks per site, taken two at a time (the machine
 * has two cores), so one site with minute data does not hold up the rest. Returns what it did and
 * how long it took.
 */
export async function rebuildAllSummaries(options: { log?: (line: string) => void; concurrency?: number } = {}) {
  const started = performance.now();
  const sites = await db.selectFrom("site").select(["id", "code", "time_zone"]).orderBy("code").execute();
  const units: { siteId: string; code: string; fromWeek: string; toWeek: string }[] = [];
  for (const s of sites) {
    const span = await siteWeekSpan(s.id, s.time_zone);
    if (!span) {
      await db.deleteFrom("weekly_summary").where("site_id", "=", s.id).execute();
      continue;
    }
    await db
      .deleteFrom("weekly_summary")
      .where("site_id", "=", s.id)
      .where((eb) => eb.or([eb("week_start", "<", span.fromWeek), eb("week_start", ">", span.toWeek)]))
      .execute();
    for (let w = span.fromWeek; w <= span.toWeek; w = addWeeks(w, REBUILD_CHUNK_WEEKS)) {
      const last = addWeeks(w, REBUILD_CHUNK_WEEKS - 1);
      units.push({ siteId: s.id, code: s.code, fromWeek: w, toWeek: last < span.toWeek ? last : span.toWeek });
    }
  }
  let weeks = 0;
  async function worker() {
    for (let u = units.shift(); u; u = units.shift()) {
      const t = performance.now();
      const r = await summariseWeeks(u.siteId, u.fromWeek, u.toWeek);
      weeks += r.weeks;
      options.log?.(`weekly summaries: ${u.code} ${u.fromWeek} to ${u.toWeek}: ${r.weeks} weeks in ${((performance.now() - t) / 1000).toFixed(2)} s`);
    }
  }
  await Promise.all(Array.from({ length: Math.max(1, options.concurrency ?? 2) }, worker));
  return { sites: sites.length, weeks, seconds: (performance.now() - started) / 1000 };
}
