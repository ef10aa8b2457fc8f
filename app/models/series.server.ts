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
  sc25_uncorrected: "sc25_uncorrected_us_cm",
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
  /** Readings the deployed loggers should have produced in the range, when known. */
  expectedReadings?: number;
}): Promise<SeriesResult> {
  const { siteId, parameter, fromMs, toMs } = options;
  const budget = Math.max(10, Math.min(MAX_POINTS, Math.floor(options.maxPoints)));
  const base = { parameter, unit: PARAMETER_INFO[parameter].unit, from: new Date(fromMs).toISOString(), to: new Date(toMs).toISOString() };

  // Cheap probe: at most budget + 1 readings; fewer than the budget means raw points will do. Skipped
  // when the loggers should have logged far more than the budget (a long range): straight to buckets.
  let intervalMs = (options.loggingIntervalS ?? 0) * 1000;
  if (!(options.expectedReadings !== undefined && options.expectedReadings > 4 * budget)) {
    const raw = (await rawQuery(siteId, parameter, fromMs, toMs, budget + 1).execute(db)).rows;
    intervalMs ||= medianStepMs(raw) || FALLBACK_INTERVAL_S * 1000;
    if (raw.length <= budget) {
      const points = rawToPoints(raw, gapThresholdMs(intervalMs));
      if (points.length <= budget) return { ...base, bucketSeconds: 0, readings: raw.length, gapSeconds: gapThresholdMs(intervalMs) / 1000, points };
    }
  }
  const gapMs = gapThresholdMs(intervalMs || FALLBACK_INTERVAL_S * 1000);

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
export async function seriesSqlOnly(siteId: string, parameter: SeriesParameter, fromMs: number, toMs: number, maxPoints: number, expected?: number) {
  const budget = Math.min(MAX_POINTS, maxPoints);
  if (!(expected !== undefined && expected > 4 * budget)) {
    const raw = (await rawQuery(siteId, parameter, fromMs, toMs, budget + 1).execute(db)).rows;
    if (raw.length <= budget) return raw.length;
  }
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
  /** "time_utc,time_local" — ISO text made by PostgreSQL; never needs quoting or neutralising. */
  times: string;
  serial: string | null;
  /**
   * The numeric columns (raw, derived, correction, settings snapshot) already joined with commas,
   * empty where null. Each is PostgreSQL's float8/int text (digits, sign, point, exponent), so a cell
   * never holds a quote or comma; non-finite values are written empty, so a cell never starts with
   * anything but a digit or a minus sign followed by a digit — a plain number, which csvSafeCell
   * leaves as it is. Doing this in SQL saves sixteen JavaScript string operations per row.
   */
  numbers: string;
  quality_flag: string | null;
  /** Inside a period of record an officer approved (record_period.locked, migration 0007). */
  approved: boolean;
};

/** The numeric export columns, in file order (after time_utc, time_local, logger). */
export const EXPORT_NUMERIC_COLUMNS = [
  "conductivity_us_cm",
  "logger_sc_us_cm",
  "temperature_c",
  "ph",
  "depth_m",
  "battery_v",
  "sc25_us_cm",
  "sc25_uncorrected_us_cm",
  "correction_us_cm",
  "tds_mg_l",
  "salinity_psu",
] as const;

function finiteText(column: string) {
  const c = sql.ref(`r.${column}`);
  return sql`coalesce(case when ${c} in ('NaN'::float8, 'Infinity'::float8, '-Infinity'::float8) then null else ${c}::text end, '')`;
}

/**
 * Every reading of a site in [from, to) at full resolution, ordered by (time, logger), in pages of
 * consecutive time windows, each about `rowsPerPage` readings long at the logging interval. Each
 * page is one range scan of the primary key within its window (no long transaction, no OFFSET, and
 * no page re-reads what an earlier one returned), so a site-year streams in a handful of queries.
 * Times come as ISO text in UTC and at the site's clock; the logger's serial from a small lookup.
 */
export async function* exportPages(
  siteId: string,
  fromMs: number,
  toMs: number,
  timeZone: string,
  options: { loggingIntervalS?: number | null; rowsPerPage?: number } = {},
) {
  const numbers = sql.join([...EXPORT_NUMERIC_COLUMNS.map(finiteText), sql`coalesce(r.settings_id::text, '')`], sql`, `);
  const windowMs = Math.max(3_600_000, (options.rowsPerPage ?? 10_000) * (options.loggingIntervalS || FALLBACK_INTERVAL_S) * 1000);
  const serials = new Map(
    (
      await db
        .selectFrom("logger as l")
        .select(["l.id", "l.serial"])
        .where("l.id", "in", (eb) => eb.selectFrom("logger_deployment as d").select("d.logger_id").where("d.site_id", "=", siteId))
        .execute()
    ).map((l) => [l.id, l.serial]),
  );
  // Approved periods of record (few per site): each window tests only the ones overlapping it.
  const approvedPeriods = await db
    .selectFrom("record_period")
    .select(["logger_id", "period_start", "period_end"])
    .where("site_id", "=", siteId)
    .where("locked", "=", true)
    .execute();
  for (let start = fromMs; start < toMs; start += windowMs) {
    const end = Math.min(toMs, start + windowMs);
    const inWindow = approvedPeriods.filter((p) => p.period_start.getTime() < end && p.period_end.getTime() >= start);
    const approved = inWindow.length
      ? sql<boolean>`(${sql.join(inWindow.map((p) => sql`(r.logger_id = ${p.logger_id} and r.time >= ${p.period_start} and r.time <= ${p.period_end})`), sql` or `)})`
      : sql<boolean>`false`;
    const { rows } = await sql<{ times: string; numbers: string; quality_flag: string | null; logger_id: string; approved: boolean }>`
      select to_char(r.time at time zone 'UTC', 'YYYY-MM-DD"T"HH24:MI:SS"Z,"') || to_char(r.time at time zone ${timeZone}, 'YYYY-MM-DD"T"HH24:MI:SS') as times,
        concat_ws(',', ${numbers}) as numbers, r.quality_flag, r.logger_id, ${approved} as approved
      from readings r
      where r.site_id = ${siteId} and r.time >= ${new Date(start)} and r.time < ${new Date(end)}
      order by r.time, r.logger_id`.execute(db);
    if (!rows.length) continue;
    for (const r of rows) {
      if (!serials.has(r.logger_id)) {
        const l = await db.selectFrom("logger").select("serial").where("id", "=", r.logger_id).executeTakeFirst();
        serials.set(r.logger_id, l?.serial ?? "");
      }
    }
    yield rows.map((r): ExportRow => ({ times: r.times, serial: serials.get(r.logger_id) ?? null, numbers: r.numbers, quality_flag: r.quality_flag, approved: r.approved }));
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
