import { sql } from "kysely";
import type { ThresholdShare } from "#db/schema.ts";
import { weeklyTrend, TREND_MAX_YEARS, type Trend } from "#app/lib/series/trend.ts";
import { addWeeks, lastCompleteWeek, parseWeekKey, sameWeekLastYear, weekKey, weekLabel } from "#app/lib/series/weeks.ts";
import { weekStatus, type HeatmapStat, type WeekStatus } from "#app/lib/series/week-status.ts";
import { db } from "#app/utils/db.server.ts";

// Reading the weekly summary cache (weekly_summary) for the summary pages, the exports and the
// digest. Only cached rows are read here (plus the site list), so a page costs a few indexed
// queries whatever the number of readings behind it.

/** The zone the organisation's weeks are named in: the one most of its sites keep (UTC without sites). */
export async function organisationTimeZone(): Promise<string> {
  const row = await db
    .selectFrom("site")
    .select(["time_zone", (eb) => eb.fn.countAll<number>().as("n")])
    .groupBy("time_zone")
    .orderBy("n", "desc")
    .orderBy("time_zone")
    .executeTakeFirst();
  return row?.time_zone ?? "UTC";
}

/** The week a page shows: the one asked for ("2025-W10" or a date in it), else the last complete week. */
export async function resolveWeek(value: string | null | undefined, now = new Date()) {
  const timeZone = await organisationTimeZone();
  const asked = parseWeekKey(value);
  const week = asked ?? lastCompleteWeek(now, timeZone);
  return { week, key: weekKey(week), label: weekLabel(week), timeZone, asked: value ? asked !== null : null };
}

export type Figures = {
  readings: number;
  readingsExcluded: number;
  readingsExpected: number | null;
  completeness: number | null;
  sc25: { count: number; min: number | null; mean: number | null; median: number | null; p95: number | null; max: number | null };
  tds: { count: number; min: number | null; mean: number | null; median: number | null; p95: number | null; max: number | null };
  temperatureMean: number | null;
  thresholds: ThresholdShare[];
  sc25AboveShare: number | null;
  dailySc25Medians: (number | null)[];
  events: Record<string, number>;
  eventsTotal: number;
  grade: string | null;
  approved: boolean | null;
  hours: number;
};

const FIGURE_COLUMNS = [
  "readings",
  "readings_excluded",
  "readings_expected",
  "completeness",
  "sc25_count",
  "sc25_min",
  "sc25_mean",
  "sc25_median",
  "sc25_p95",
  "sc25_max",
  "tds_count",
  "tds_min",
  "tds_mean",
  "tds_median",
  "tds_p95",
  "tds_max",
  "temperature_mean",
  "thresholds",
  "sc25_above_share",
  "daily_sc25_medians",
  "events",
  "events_total",
  "grade",
  "approved",
  "starts_at",
  "ends_at",
] as const;

type FigureRow = {
  readings: number;
  readings_excluded: number;
  readings_expected: number | null;
  completeness: number | null;
  sc25_count: number;
  sc25_min: number | null;
  sc25_mean: number | null;
  sc25_median: number | null;
  sc25_p95: number | null;
  sc25_max: number | null;
  tds_count: number;
  tds_min: number | null;
  tds_mean: number | null;
  tds_median: number | null;
  tds_p95: number | null;
  tds_max: number | null;
  temperature_mean: number | null;
  thresholds: ThresholdShare[];
  sc25_above_share: number | null;
  daily_sc25_medians: (number | null)[];
  events: Record<string, number>;
  events_total: number;
  grade: string | null;
  approved: boolean | null;
  starts_at: Date;
  ends_at: Date;
};

function toFigures(r: FigureRow): Figures {
  return {
    readings: r.readings,
    readingsExcluded: r.readings_excluded,
    readingsExpected: r.readings_expected,
    completeness: r.completeness,
    sc25: { count: r.sc25_count, min: r.sc25_min, mean: r.sc25_mean, median: r.sc25_median, p95: r.sc25_p95, max: r.sc25_max },
    tds: { count: r.tds_count, min: r.tds_min, mean: r.tds_mean, median: r.tds_median, p95: r.tds_p95, max: r.tds_max },
    temperatureMean: r.temperature_mean,
    thresholds: r.thresholds ?? [],
    sc25AboveShare: r.sc25_above_share,
    dailySc25Medians: r.daily_sc25_medians ?? [],
    events: r.events ?? {},
    eventsTotal: r.events_total,
    grade: r.grade,
    approved: r.approved,
    hours: (r.ends_at.getTime() - r.starts_at.getTime()) / 3_600_000,
  };
}

async function figuresOfWeek(week: string | null): Promise<Map<string, Figures>> {
  if (!week) return new Map();
  const rows = await db
    .selectFrom("weekly_summary")
    .select(["site_id", ...FIGURE_COLUMNS])
    .where("week_start", "=", week)
    .execute();
  return new Map(rows.map((r) => [r.site_id, toFigures(r as unknown as FigureRow)]));
}

export type Change = { fromValue: number; absolute: number; percent: number | null } | null;

function change(now: number | null | undefined, before: number | null | undefined): Change {
  if (now === null || now === undefined || before === null || before === undefined) return null;
  return { fromValue: before, absolute: now - before, percent: before !== 0 ? ((now - before) / Math.abs(before)) * 100 : null };
}

/** Weekly medians of specific conductance of every site over the trend window ending at `week`. */
async function trendPoints(week: string, siteId?: string) {
  const from = addWeeks(week, -Math.round(TREND_MAX_YEARS * 52.18) + 1);
  let q = db
    .selectFrom("weekly_summary")
    .select(["site_id", "sc25_median", "starts_at"])
    .where("week_start", ">=", from)
    .where("week_start", "<=", week)
    .where("sc25_median", "is not", null);
  if (siteId) q = q.where("site_id", "=", siteId);
  const rows = await q.orderBy("site_id").orderBy("week_start").execute();
  const bySite = new Map<string, { tMs: number; value: number | null }[]>();
  for (const r of rows) {
    const list = bySite.get(r.site_id) ?? [];
    list.push({ tMs: r.starts_at.getTime(), value: r.sc25_median });
    bySite.set(r.site_id, list);
  }
  return bySite;
}

export type SiteWeekRow = {
  siteId: string;
  code: string;
  name: string;
  kind: string;
  timeZone: string;
  figures: Figures | null;
  previous: { sc25Median: number | null; tdsMedian: number | null; completeness: number | null } | null;
  lastYear: { sc25Median: number | null; tdsMedian: number | null } | null;
  changeFromPrevious: { sc25Median: Change; tdsMedian: Change };
  changeFromLastYear: { sc25Median: Change; tdsMedian: Change };
  trend: Trend;
  status: WeekStatus;
  reasons: string[];
};

/**
 * Every site's figures for one week with the changes against the week before and the same ISO
 * week a year earlier, the long-term trend of weekly medians up to that week, and the week's status.
 * Rows come in site-code order.
 */
export async function loadWeekTable(weekParam: string | null | undefined, now = new Date()) {
  const resolved = await resolveWeek(weekParam, now);
  const { week } = resolved;
  const previousWeek = addWeeks(week, -1);
  const lastYearWeek = sameWeekLastYear(week);
  const [sites, current, previous, lastYear, trends, span] = await Promise.all([
    db.selectFrom("site").select(["id", "code", "name", "kind", "time_zone"]).orderBy("code").execute(),
    figuresOfWeek(week),
    figuresOfWeek(previousWeek),
    figuresOfWeek(lastYearWeek),
    trendPoints(week),
    weekSpanOfCache(),
  ]);
  const rows: SiteWeekRow[] = sites.map((s) => {
    const f = current.get(s.id) ?? null;
    const p = previous.get(s.id) ?? null;
    const ly = lastYear.get(s.id) ?? null;
    const trend = weeklyTrend(trends.get(s.id) ?? []);
    const { status, reasons } = weekStatus(f, trend);
    return {
      siteId: s.id,
      code: s.code,
      name: s.name,
      kind: s.kind,
      timeZone: s.time_zone,
      figures: f,
      previous: p ? { sc25Median: p.sc25.median, tdsMedian: p.tds.median, completeness: p.completeness } : null,
      lastYear: ly ? { sc25Median: ly.sc25.median, tdsMedian: ly.tds.median } : null,
      changeFromPrevious: { sc25Median: change(f?.sc25.median, p?.sc25.median), tdsMedian: change(f?.tds.median, p?.tds.median) },
      changeFromLastYear: { sc25Median: change(f?.sc25.median, ly?.sc25.median), tdsMedian: change(f?.tds.median, ly?.tds.median) },
      trend,
      status,
      reasons,
    };
  });
  return { ...resolved, previousWeek, lastYearWeek, rows, span };
}

export type WeekTable = Awaited<ReturnType<typeof loadWeekTable>>;

/** The first and last week held in the cache (for the week picker), or null when it is empty. */
export async function weekSpanOfCache(): Promise<{ first: string; last: string } | null> {
  const row = (
    await sql<{ first: string | null; last: string | null }>`select min(week_start)::text as first, max(week_start)::text as last from weekly_summary`.execute(db)
  ).rows[0];
  return row?.first && row.last ? { first: row.first, last: row.last } : null;
}

/** Heat-map statistics → cache columns (an allow-list). */
const HEATMAP_COLUMN: Record<HeatmapStat, "sc25_median" | "sc25_above_share" | "completeness" | "events_total"> = {
  "sc25-median": "sc25_median",
  "time-above": "sc25_above_share",
  completeness: "completeness",
  events: "events_total",
};

/** One statistic for every site over the `weeks` weeks ending with `endWeek`: rows by site, columns by week. */
export async function loadHeatmap(stat: HeatmapStat, endWeek: string, weeks: number) {
  const firstWeek = addWeeks(endWeek, -(weeks - 1));
  const column = HEATMAP_COLUMN[stat];
  const [sites, cells] = await Promise.all([
    db.selectFrom("site").select(["id", "code", "name"]).orderBy("code").execute(),
    db
      .selectFrom("weekly_summary")
      .select(["site_id", sql<string>`week_start::text`.as("week"), sql<number | null>`${sql.ref(column)}::float8`.as("value")])
      .where("week_start", ">=", firstWeek)
      .where("week_start", "<=", endWeek)
      .execute(),
  ]);
  const weekList = Array.from({ length: weeks }, (_, i) => addWeeks(firstWeek, i));
  const index = new Map(cells.map((c) => [`${c.site_id}|${c.week}`, c.value]));
  return {
    stat,
    weeks: weekList,
    sites: sites.map((s) => ({ code: s.code, name: s.name, values: weekList.map((w) => index.get(`${s.id}|${w}`) ?? null) })),
  };
}

export type Heatmap = Awaited<ReturnType<typeof loadHeatmap>>;

/** One site's weeks (newest first) and its trend, for the site summary page. */
export async function loadSiteSummary(siteCode: string, endWeek: string, weeks: number) {
  const site = await db
    .selectFrom("site")
    .select(["id", "code", "name", "kind", "time_zone", "reference_c"])
    .where("code", "=", siteCode)
    .executeTakeFirst();
  if (!site) return null;
  const firstWeek = addWeeks(endWeek, -(weeks - 1));
  const [rows, points] = await Promise.all([
    db
      .selectFrom("weekly_summary")
      .select([sql<string>`week_start::text`.as("week"), ...FIGURE_COLUMNS])
      .where("site_id", "=", site.id)
      .where("week_start", ">=", firstWeek)
      .where("week_start", "<=", endWeek)
      .orderBy("week_start", "desc")
      .execute(),
    trendPoints(endWeek, site.id),
  ]);
  const series = points.get(site.id) ?? [];
  const trend = weeklyTrend(series);
  return {
    site,
    trend,
    trendSeries: series.map((p) => [p.tMs, p.value] as [number, number | null]),
    weeks: rows.map((r) => {
      const f = toFigures(r as unknown as FigureRow);
      const { status, reasons } = weekStatus(f);
      return { week: r.week, key: weekKey(r.week), figures: f, status, reasons };
    }),
  };
}

export type SiteSummary = NonNullable<Awaited<ReturnType<typeof loadSiteSummary>>>;

/** Weekly medians of every site over the trend window ending at `week` ([ms, value] by site id), for charts. */
export async function loadTrendSeries(week: string): Promise<Record<string, [number, number | null][]>> {
  const bySite = await trendPoints(week);
  return Object.fromEntries([...bySite].map(([siteId, pts]) => [siteId, pts.map((p) => [p.tMs, p.value] as [number, number | null])]));
}
