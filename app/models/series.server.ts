import { sql, type RawBuilder } from "kysely";
import {
  BUCKET_ORIGIN_MS,
  MAX_POINTS,
  bucketsToPoints,
  chooseBucketSeconds,
  gapThresholdMs,
  medianStepMs,
  rawToPoints,
  type Bucket,
  type SeriesPoint,
} from "#app/lib/series/bucketing.ts";
import { PARAMETER_INFO, SERIES_PARAMETERS, type DisplayThreshold, type SeriesParameter } from "#app/lib/series/parameters.ts";
import { completeness, expectedReadings } from "#app/lib/series/statistics.ts";
import { db } from "#app/utils/db.server.ts";

// Reading series of a site for charts, statistics and exports. The parameter names that reach SQL
// come only from this allow-list (column identifiers); every value is a bound parameter.
const COLUMN: Record<SeriesParameter, string> = {
  sc25: "sc25_us_cm",
  conductivity: "conductivity_us_cm",
  temperature: "temperature_c",
  tds: "tds_mg_l",
  salinity: "salinity_psu",
  ph: "ph",
  depth: "depth_m",
  battery: "battery_v",
};

function col(p: SeriesParameter): RawBuilder<unknown> {
  return sql.ref(`r.${COLUMN[p]}`);
}

/** When no logger deployment says how often a site logs: the most common interval in the demo and the field. */
const FALLBACK_INTERVAL_S = 900;

export type Deployment = { fromMs: number; untilMs: number | null; intervalS: number; serial: string };

/** Logger deployments at a site that overlap [from, to), with their logging intervals. */
export async function deploymentsOverlapping(siteId: string, fromMs: number, toMs: number): Promise<Deployment[]> {
  const rows = await db
    .selectFrom("logger_deployment as d")
    .innerJoin("logger as l", "l.id", "d.logger_id")
    .select(["d.deployed_from", "d.deployed_until", "l.logging_interval_s", "l.serial"])
    .where("d.site_id", "=", siteId)
    .where("d.deployed_from", "<", new Date(toMs))
    .where((eb) => eb.or([eb("d.deployed_until", "is", null), eb("d.deployed_until", ">", new Date(fromMs))]))
    .orderBy("d.deployed_from")
    .execute();
  return rows.map((r) => ({
    fromMs: r.deployed_from.getTime(),
    untilMs: r.deployed_until ? r.deployed_until.getTime() : null,
    intervalS: r.logging_interval_s,
    serial: r.serial,
  }));
}

/** The shortest logging interval among deployments (seconds), or null when none overlaps. */
export function loggingIntervalOf(deployments: readonly Deployment[]): number | null {
  return deployments.length ? Math.min(...deployments.map((d) => d.intervalS)) : null;
}

export type SeriesResult = {
  parameter: SeriesParameter;
  unit: string;
  from: string;
  to: string;
  /** 0 when the points are the readings themselves; otherwise the width of the buckets. */
  bucketSeconds: number;
  /** Readings of this parameter in the range (counted only when bucketing, else the points' count). */
  readings: number;
  /** The step beyond which the line breaks (seconds). */
  gapSeconds: number;
  points: SeriesPoint[];
};

type RawRow = { t: number; v: number };

/** Up to `limit` readings of one parameter in [from, to), oldest first, as epoch ms and value. */
function rawQuery(siteId: string, p: SeriesParameter, fromMs: number, toMs: number, limit: number) {
  return sql<RawRow>`
    select (date_part('epoch', r.time) * 1000)::float8 as t, ${col(p)} as v
    from readings r
    where r.site_id = ${siteId} and r.time >= ${new Date(fromMs)} and r.time < ${new Date(toMs)} and ${col(p)} is not null
    order by r.time
    limit ${limit}`;
}

type BucketRow = { b: number; n: number; mean: number; min: number; max: number; min_t: number; max_t: number };

/**
 * One row per non-empty bucket: count, mean, extremes, and when each extreme happened (earliest on
 * ties). The time of an extreme comes from ordering two-element arrays [value, time]: min() of
 * [v, t] is the smallest value at its earliest time; max() of [v, −t] the largest at its earliest.
 */
function bucketQuery(siteId: string, p: SeriesParameter, fromMs: number, toMs: number, widthS: number) {
  const originS = BUCKET_ORIGIN_MS / 1000;
  return sql<BucketRow>`
    select floor((e - ${originS}::float8) / ${widthS}::float8)::int8 as b,
      count(*)::int as n, avg(v) as mean, min(v) as min, max(v) as max,
      (min(array[v, e]))[2] * 1000 as min_t, -(max(array[v, -e]))[2] * 1000 as max_t
    from (
      select date_part('epoch', r.time) as e, ${col(p)} as v
      from readings r
      where r.site_id = ${siteId} and r.time >= ${new Date(fromMs)} and r.time < ${new Date(toMs)} and ${col(p)} is not null
    ) s
    group by 1
    order by 1`;
}

/**
 * A parameter's series over [from, to) within `maxPoints` points (never more than MAX_POINTS).
 * Few readings: the readings themselves. Many: min/max buckets computed in SQL. Gaps longer than
 * 2 × the logging interval (or an empty bucket) come back as null points.
 */
export async function loadSeries(options: {
  siteId: string;
  parameter: SeriesParameter;
  fromMs: number;
  toMs: number;
  maxPoints: number;
  loggingIntervalS: number | null;
}): Promise<SeriesResult> {
  const { siteId, parameter, fromMs, toMs } = options;
  const budget = Math.max(10, Math.min(MAX_POINTS, Math.floor(options.maxPoints)));
  const base = { parameter, unit: PARAMETER_INFO[parameter].unit, from: new Date(fromMs).toISOString(), to: new Date(toMs).toISOString() };

  // Cheap probe: at most budget + 1 readings. Fewer than the budget means raw points will do.
  const raw = (await rawQuery(siteId, parameter, fromMs, toMs, budget + 1).execute(db)).rows;
  const intervalMs = (options.loggingIntervalS ?? 0) * 1000 || medianStepMs(raw) || FALLBACK_INTERVAL_S * 1000;
  const gapMs = gapThresholdMs(intervalMs);
  if (raw.length <= budget) {
    const points = rawToPoints(raw, gapMs);
    if (points.length <= budget) return { ...base, bucketSeconds: 0, readings: raw.length, gapSeconds: gapMs / 1000, points };
  }

  const widthS = chooseBucketSeconds(fromMs, toMs, budget);
  const rows = (await bucketQuery(siteId, parameter, fromMs, toMs, widthS).execute(db)).rows;
  const buckets: Bucket[] = rows.map((r) => ({
    index: Number(r.b),
    count: r.n,
    mean: r.mean,
    min: r.min,
    max: r.max,
    minT: Math.round(r.min_t),
    maxT: Math.round(r.max_t),
  }));
  const points = bucketsToPoints(buckets, widthS * 1000);
  let readings = 0;
  for (const b of buckets) readings += b.count;
  return { ...base, bucketSeconds: widthS, readings, gapSeconds: Math.max(gapMs, widthS * 1000) / 1000, points };
}

/** The SQL of loadSeries alone (same statements, no JSON), for the benchmark's ratio. */
export async function seriesSqlOnly(siteId: string, parameter: SeriesParameter, fromMs: number, toMs: number, maxPoints: number) {
  const budget = Math.min(MAX_POINTS, maxPoints);
  const raw = (await rawQuery(siteId, parameter, fromMs, toMs, budget + 1).execute(db)).rows;
  if (raw.length <= budget) return raw.length;
  const rows = (await bucketQuery(siteId, parameter, fromMs, toMs, chooseBucketSeconds(fromMs, toMs, budget)).execute(db)).rows;
  return rows.length;
}

// ---- statistics ----------------------------------------------------------------------------

export type ParameterStats = {
  parameter: SeriesParameter;
  count: number;
  min: number | null;
  max: number | null;
  mean: number | null;
  median: number | null;
  p05: number | null;
  p95: number | null;
  /** Share of covered time beyond each display threshold of this parameter (0–1). */
  beyond: { bound: "upper" | "lower"; value: number; share: number | null }[];
};

export type RangeStats = {
  readings: number;
  expected: number;
  /** Readings received ÷ expected from the deployed loggers' intervals (0–1), null when no logger was deployed. */
  completeness: number | null;
  firstMs: number | null;
  lastMs: number | null;
  parameters: ParameterStats[];
};

/**
 * Statistics of every parameter over [from, to) in one pass, in SQL: count, min, max, mean,
 * percentile_cont 5/50/95 (Hyndman & Fan definition 7, as quantileSorted), and the time-weighted
 * share beyond each threshold. Each reading stands for the time to the next reading when that step
 * is at most the gap threshold, otherwise for one logging interval (readingDurationsMs in
 * app/lib/series/statistics.ts says the same). Parameters without readings in the range are left out.
 */
export async function rangeStatistics(options: {
  siteId: string;
  fromMs: number;
  toMs: number;
  thresholds: readonly DisplayThreshold[];
  deployments: readonly Deployment[];
  /** Only these parameters (default: all). */
  only?: readonly SeriesParameter[];
}): Promise<RangeStats> {
  const { siteId, fromMs, toMs, deployments } = options;
  const params = SERIES_PARAMETERS.filter((p) => !options.only || options.only.includes(p));
  const thresholds = options.thresholds.filter((t) => params.includes(t.parameter));
  const intervalS = loggingIntervalOf(deployments) ?? FALLBACK_INTERVAL_S;
  const gapS = (2 * intervalS) as number;
  const selects: RawBuilder<unknown>[] = [];
  for (const p of params) {
    const c = sql.ref(`w.${COLUMN[p]}`);
    selects.push(
      sql`count(${c})::int as ${sql.ref(`${p}_n`)}`,
      sql`min(${c}) as ${sql.ref(`${p}_min`)}`,
      sql`max(${c}) as ${sql.ref(`${p}_max`)}`,
      sql`avg(${c}) as ${sql.ref(`${p}_mean`)}`,
      sql`percentile_cont(array[0.05, 0.5, 0.95]::float8[]) within group (order by ${c}) as ${sql.ref(`${p}_q`)}`,
      sql`sum(w.dur) filter (where ${c} is not null) as ${sql.ref(`${p}_dur`)}`,
    );
  }
  thresholds.forEach((th, i) => {
    const c = sql.ref(`w.${COLUMN[th.parameter]}`);
    const test = th.bound === "upper" ? sql`${c} > ${th.value}::float8` : sql`${c} < ${th.value}::float8`;
    selects.push(sql`sum(w.dur) filter (where ${test}) as ${sql.ref(`th_${i}`)}`);
  });
  const q = sql<Record<string, unknown>>`
    with r as (
      select r.*, date_part('epoch', lead(r.time) over (order by r.time) - r.time) as step
      from readings r
      where r.site_id = ${siteId} and r.time >= ${new Date(fromMs)} and r.time < ${new Date(toMs)}
    ), w as (
      select r.*, case when r.step is not null and r.step <= ${gapS}::float8 then r.step else ${intervalS}::float8 end as dur from r
    )
    select count(*)::int as n, min(w.time) as first, max(w.time) as last, ${sql.join(selects)}
    from w`;
  const row = (await q.execute(db)).rows[0] ?? {};
  const num = (v: unknown) => (v === null || v === undefined ? null : Number(v));
  const parameters: ParameterStats[] = [];
  for (const p of params) {
    const count = Number(row[`${p}_n`] ?? 0);
    if (!count) continue;
    const qs = (row[`${p}_q`] as number[] | null) ?? [null, null, null];
    const dur = num(row[`${p}_dur`]);
    parameters.push({
      parameter: p,
      count,
      min: num(row[`${p}_min`]),
      max: num(row[`${p}_max`]),
      mean: num(row[`${p}_mean`]),
      p05: num(qs[0]),
      median: num(qs[1]),
      p95: num(qs[2]),
      beyond: thresholds
        .map((th, i) => ({ th, i }))
        .filter(({ th }) => th.parameter === p)
        .map(({ th, i }) => ({ bound: th.bound, value: th.value, share: dur ? (num(row[`th_${i}`]) ?? 0) / dur : null })),
    });
  }
  const readings = Number(row.n ?? 0);
  const expected = expectedReadings(deployments, fromMs, toMs);
  return {
    readings,
    expected,
    completeness: completeness(readings, expected),
    firstMs: row.first ? (row.first as Date).getTime() : null,
    lastMs: row.last ? (row.last as Date).getTime() : null,
    parameters,
  };
}

/** The time of a site's latest reading (ms), or null. Served by the primary key, newest first. */
export async function latestReadingMs(siteId: string): Promise<number | null> {
  const row = await db.selectFrom("readings").select("time").where("site_id", "=", siteId).orderBy("time", "desc").limit(1).executeTakeFirst();
  return row ? row.time.getTime() : null;
}

/** Lab samples of a site in [from, to): the logger chart draws them beside specific conductance. */
export async function labSamplesInRange(siteId: string, fromMs: number, toMs: number) {
  const rows = await db
    .selectFrom("lab_sample")
    .select(["id", "sampled_at", "lab_reference", "measured_ec_us_cm", "calculated_ec_us_cm", "verdict"])
    .where("site_id", "=", siteId)
    .where("sampled_at", ">=", new Date(fromMs))
    .where("sampled_at", "<", new Date(toMs))
    .orderBy("sampled_at")
    .limit(500)
    .execute();
  return rows.map((r) => ({
    id: r.id,
    atMs: r.sampled_at.getTime(),
    reference: r.lab_reference,
    measuredEcUsPerCm: r.measured_ec_us_cm,
    calculatedEcUsPerCm: r.calculated_ec_us_cm,
    verdict: r.verdict,
  }));
}

export type LabPoint = Awaited<ReturnType<typeof labSamplesInRange>>[number];

// ---- export ----------------------------------------------------------------------------------

export type ExportRow = {
  time_utc: string;
  time_local: string;
  serial: string | null;
  conductivity: string | null;
  logger_sc: string | null;
  temperature: string | null;
  ph: string | null;
  depth: string | null;
  battery: string | null;
  sc25: string | null;
  sc25_uncorrected: string | null;
  correction: string | null;
  tds: string | null;
  salinity: string | null;
  settings_id: string | null;
  quality_flag: string | null;
  time_key: string;
  logger_id: string;
};

/**
 * Every reading of a site in [from, to) at full resolution, in pages of `pageSize` ordered by
 * (time, logger), each page found from the last key of the one before (keyset paging on the primary
 * key: no long transaction, no OFFSET). Values come back as PostgreSQL's text (shortest exact form),
 * times as ISO text in UTC and at the site's clock.
 */
export async function* exportPages(siteId: string, fromMs: number, toMs: number, timeZone: string, pageSize = 10_000) {
  let after: { time: string; logger: string } | null = null;
  for (;;) {
    const keyset: RawBuilder<unknown> = after ? sql`and (r.time, r.logger_id) > (${after.time}::timestamptz, ${after.logger}::uuid)` : sql``;
    const { rows }: { rows: ExportRow[] } = await sql<ExportRow>`
      select to_char(r.time at time zone 'UTC', 'YYYY-MM-DD"T"HH24:MI:SS"Z"') as time_utc,
        to_char(r.time at time zone ${timeZone}, 'YYYY-MM-DD"T"HH24:MI:SS') as time_local,
        l.serial, r.conductivity_us_cm::text as conductivity, r.logger_sc_us_cm::text as logger_sc,
        r.temperature_c::text as temperature, r.ph::text as ph, r.depth_m::text as depth, r.battery_v::text as battery,
        r.sc25_us_cm::text as sc25, r.sc25_uncorrected_us_cm::text as sc25_uncorrected, r.correction_us_cm::text as correction,
        r.tds_mg_l::text as tds, r.salinity_psu::text as salinity,
        r.settings_id::text as settings_id, r.quality_flag, r.time::text as time_key, r.logger_id::text as logger_id
      from readings r
      left join logger l on l.id = r.logger_id
      where r.site_id = ${siteId} and r.time >= ${new Date(fromMs)} and r.time < ${new Date(toMs)} ${keyset}
      order by r.time, r.logger_id
      limit ${pageSize}`.execute(db);
    if (!rows.length) return;
    yield rows;
    if (rows.length < pageSize) return;
    const last = rows[rows.length - 1];
    after = { time: last.time_key, logger: last.logger_id };
  }
}

/** Every derivation-settings snapshot of a site, to name in an export's header. */
export async function settingsSnapshots(siteId: string) {
  return db
    .selectFrom("derivation_settings")
    .select(["id", "compensation_method", "alpha_per_c", "reference_c", "tds_factor", "created_at"])
    .where("site_id", "=", siteId)
    .orderBy("id")
    .execute();
}
