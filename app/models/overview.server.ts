import { sql } from "kysely";
import type { RoleName, SiteKind } from "#db/schema.ts";
import { SITE_STATUSES, siteStatus, STATUS_RANK, type SiteStatus } from "#app/lib/quality/site-status.ts";
import { completeness, expectedReadings } from "#app/lib/series/statistics.ts";
import type { DisplayThreshold } from "#app/lib/series/parameters.ts";
import type { OverviewSort } from "#app/utils/dashboard-options.ts";
import { db } from "#app/utils/db.server.ts";
import { cached } from "#app/utils/response-cache.server.ts";
import { listSitesWithLoggers } from "./site.server.ts";
import { thresholdsBySite } from "./site-settings.server.ts";
import { openCountsBySite } from "./exceedance.server.ts";

// The multi-site overview: one entry per site with its latest values, how stale and complete its
// data is, a 7-day trend and its status in plain words. Four queries for all sites together (sites
// and loggers, thresholds, latest reading per site, the last 7 days per site), whatever the number
// of readings stored.

const DAY_MS = 86_400_000;
export const OVERVIEW_WINDOW_MS = 7 * DAY_MS;
/** Trend buckets: 3 h, 56 points over 7 days (enough for a card-sized line). */
const TREND_BUCKET_S = 3 * 3600;

/**
 * Brackish from 0.5 on the practical salinity scale (the Venice system, "Symposium on the
 * classification of brackish waters", 1958): at or above it the overview shows salinity too.
 */
export const BRACKISH_FROM_PSS = 0.5;

export type LatestRow = {
  site_id: string;
  time: Date;
  conductivity_us_cm: number | null;
  logger_sc_us_cm: number | null;
  temperature_c: number | null;
  sc25_us_cm: number | null;
  tds_mg_l: number | null;
  salinity_psu: number | null;
  ph: number | null;
  depth_m: number | null;
  quality_flag: string | null;
};

/** Each site's latest reading (sites without readings are absent from the map). */
export async function latestReadings(siteIds: string[]) {
  if (!siteIds.length) return new Map<string, LatestRow>();
  // One backward index probe per site on the primary key (site_id, time, …).
  const { rows } = await sql<LatestRow>`
    select s.id as site_id, r.*
    from unnest(${siteIds}::uuid[]) as s(id)
    cross join lateral (
      select time, conductivity_us_cm, logger_sc_us_cm, temperature_c, sc25_us_cm, tds_mg_l, salinity_psu, ph, depth_m, quality_flag
      from readings where site_id = s.id order by time desc limit 1
    ) r`.execute(db);
  return new Map(rows.map((r) => [r.site_id, r]));
}

async function windowCounts(siteIds: string[], fromMs: number, toMs: number) {
  if (!siteIds.length) return new Map<string, number>();
  const rows = await db
    .selectFrom("readings")
    .select((eb) => ["site_id", eb.fn.countAll<number>().as("n")])
    .where("site_id", "in", siteIds)
    .where("time", ">=", new Date(fromMs))
    .where("time", "<", new Date(toMs))
    .groupBy("site_id")
    .execute();
  return new Map(rows.map((r) => [r.site_id, Number(r.n)]));
}

/** Mean specific conductance per 3-hour bucket over each site's own window (7 days to its latest reading). */
async function trends(windows: { siteId: string; fromMs: number; toMs: number }[]) {
  const out = new Map<string, { b: number; mean: number }[]>();
  if (!windows.length) return out;
  // A lateral subquery per site, so each is one index range scan on the primary key (a plain join
  // with the window list lets the planner hash-join every stored reading).
  const { rows } = await sql<{ site_id: string; b: number; mean: number }>`
    select w.site_id, t.b, t.mean
    from unnest(${windows.map((w) => w.siteId)}::uuid[], ${windows.map((w) => new Date(w.fromMs))}::timestamptz[]) as w(site_id, from_ts)
    cross join lateral (
      select floor(date_part('epoch', r.time - w.from_ts) / ${TREND_BUCKET_S}::float8)::int as b, avg(r.sc25_us_cm) as mean
      from readings r
      where r.site_id = w.site_id and r.time >= w.from_ts and r.time < w.from_ts + interval '7 days' and r.sc25_us_cm is not null
      group by 1
    ) t
    order by 1, 2`.execute(db);
  for (const r of rows) {
    const list = out.get(r.site_id) ?? [];
    list.push({ b: r.b, mean: r.mean });
    out.set(r.site_id, list);
  }
  return out;
}

async function deploymentsSince(siteIds: string[], fromMs: number) {
  if (!siteIds.length) return [];
  return db
    .selectFrom("logger_deployment as d")
    .innerJoin("logger as l", "l.id", "d.logger_id")
    .select(["d.site_id", "d.deployed_from", "d.deployed_until", "l.logging_interval_s"])
    .where("d.site_id", "in", siteIds)
    .where((eb) => eb.or([eb("d.deployed_until", "is", null), eb("d.deployed_until", ">", new Date(fromMs))]))
    .execute();
}

/** Open exceedances per site: events the alert rules found that are not closed (app/models/exceedance.server.ts). */
export async function openExceedanceCounts(siteIds: readonly string[]): Promise<Map<string, number | null>> {
  return openCountsBySite(siteIds);
}

/** The plain-words status of a site from its latest reading (or none) and its display thresholds. */
export function statusFromLatest(l: LatestRow | null, thresholds: DisplayThreshold[], nowMs: number, referenceC: number) {
  return siteStatus(
    l && {
      timeMs: l.time.getTime(),
      conductivityUsPerCm: l.conductivity_us_cm,
      loggerScUsPerCm: l.logger_sc_us_cm,
      temperatureC: l.temperature_c,
      qualityFlag: l.quality_flag,
      values: { sc25: l.sc25_us_cm, temperature: l.temperature_c, tds: l.tds_mg_l, salinity: l.salinity_psu, ph: l.ph, depth: l.depth_m },
    },
    thresholds,
    nowMs,
    { referenceC },
  );
}

export type OverviewSite = {
  id: string;
  code: string;
  name: string;
  kind: SiteKind;
  latitude: number;
  longitude: number;
  timeZone: string;
  referenceC: number;
  assigned: boolean;
  loggers: { serial: string; intervalS: number }[];
  latest: {
    timeMs: number;
    sc25: number | null;
    temperature: number | null;
    tds: number | null;
    salinity: number | null;
    /** Whether to show salinity: a tidal site, or brackish water now. */
    showSalinity: boolean;
  } | null;
  ageMs: number | null;
  window: { received: number; expected: number; share: number | null };
  /** Mean specific conductance per bucket from fromMs (null: no readings), to 0.1 µS/cm: a sparkline's worth. */
  trend: { fromMs: number; bucketMs: number; means: (number | null)[] };
  thresholds: DisplayThreshold[];
  status: SiteStatus;
  reasons: string[];
  openExceedances: number | null;
};

/** The tables the overview is built from: a write to any of them makes a cached overview stale. */
const OVERVIEW_TABLES = ["site", "logger", "logger_deployment", "site_assignment", "site_threshold", "readings", "exceedance", "alert_rule"] as const;
/**
 * A cached overview is at most this old: its ages, completeness and "no data lately" states are
 * worked out from the time it was built (common practice for dashboard figures: a short cache).
 */
const OVERVIEW_CACHE_MS = 15_000;

/**
 * The overview for `user`, shared between requests while nothing under it changes (and for at most
 * OVERVIEW_CACHE_MS). Technicians' overviews flag their own assigned sites, so each has its own
 * entry; every other role sees the same one.
 */
export async function loadOverviewCached(user: { id: string; role: RoleName }): Promise<{ nowMs: number; sites: OverviewSite[] }> {
  const key = user.role === "technician" ? `overview|technician|${user.id}` : "overview|all";
  return cached(key, OVERVIEW_TABLES, OVERVIEW_CACHE_MS, async () => {
    const nowMs = Date.now();
    return { nowMs, sites: await loadOverview(user, nowMs) };
  });
}

/** Every site the person may see (all of them; technicians' assigned sites flagged), with its latest state. */
export async function loadOverview(user: { id: string; role: RoleName }, nowMs = Date.now()): Promise<OverviewSite[]> {
  const sites = await listSitesWithLoggers({ assignedTo: user.role === "technician" ? user.id : undefined });
  const ids = sites.map((s) => s.id);
  const windowFrom = nowMs - OVERVIEW_WINDOW_MS;
  const [thresholds, latest, counts, deployments, exceedances, derivation] = await Promise.all([
    thresholdsBySite(ids),
    latestReadings(ids),
    windowCounts(ids, windowFrom, nowMs),
    deploymentsSince(ids, windowFrom),
    openExceedanceCounts(ids),
    ids.length ? db.selectFrom("site").select(["id", "reference_c"]).where("id", "in", ids).execute() : Promise.resolve([]),
  ]);
  const referenceOf = new Map(derivation.map((d) => [d.id, d.reference_c]));
  const trendWindows = ids.map((id) => {
    const l = latest.get(id);
    const toMs = l ? l.time.getTime() + 1 : nowMs;
    return { siteId: id, fromMs: toMs - OVERVIEW_WINDOW_MS, toMs };
  });
  const trendRows = await trends(trendWindows.filter((w) => latest.has(w.siteId)));

  return sites.map((s, i) => {
    const l = latest.get(s.id) ?? null;
    const th = thresholds.get(s.id) ?? [];
    const referenceC = referenceOf.get(s.id) ?? 25;
    const status = statusFromLatest(l, th, nowMs, referenceC);
    const received = counts.get(s.id) ?? 0;
    const expected = expectedReadings(
      deployments
        .filter((d) => d.site_id === s.id)
        .map((d) => ({ fromMs: d.deployed_from.getTime(), untilMs: d.deployed_until?.getTime() ?? null, intervalS: d.logging_interval_s })),
      windowFrom,
      nowMs,
    );
    const w = trendWindows[i];
    const bucketMs = TREND_BUCKET_S * 1000;
    const byBucket = new Map((trendRows.get(s.id) ?? []).map((r) => [r.b, r.mean]));
    const means: (number | null)[] = [];
    for (let b = 0; b < OVERVIEW_WINDOW_MS / bucketMs; b++) {
      const m = byBucket.get(b);
      means.push(m === undefined ? null : Math.round(m * 10) / 10);
    }
    return {
      id: s.id,
      code: s.code,
      name: s.name,
      kind: s.kind,
      latitude: s.latitude,
      longitude: s.longitude,
      timeZone: s.time_zone,
      referenceC,
      assigned: Boolean(s.assigned),
      loggers: s.loggers.map((d) => ({ serial: d.serial, intervalS: d.logging_interval_s })),
      latest: l && {
        timeMs: l.time.getTime(),
        sc25: l.sc25_us_cm,
        temperature: l.temperature_c,
        tds: l.tds_mg_l,
        salinity: l.salinity_psu,
        showSalinity: s.kind === "tidal" || (l.salinity_psu ?? 0) >= BRACKISH_FROM_PSS,
      },
      ageMs: l ? nowMs - l.time.getTime() : null,
      window: { received, expected, share: completeness(received, expected) },
      trend: { fromMs: w.fromMs, bucketMs, means },
      thresholds: th,
      status: status.status,
      reasons: status.reasons,
      openExceedances: exceedances.get(s.id) ?? null,
    };
  });
}

// ---- filtering and sorting (URL parameters, allow-listed) ----

export { OVERVIEW_SORTS, type OverviewSort } from "#app/utils/dashboard-options.ts";

export type OverviewFilter = { status?: SiteStatus; kind?: SiteKind; q?: string; sort: OverviewSort };

export function filterAndSortSites(sites: OverviewSite[], filter: OverviewFilter, assignedFirst: boolean): OverviewSite[] {
  const q = filter.q?.trim().toLowerCase();
  const kept = sites.filter(
    (s) =>
      (!filter.status || s.status === filter.status) &&
      (!filter.kind || s.kind === filter.kind) &&
      (!q || s.name.toLowerCase().includes(q) || s.code.toLowerCase().includes(q)),
  );
  const by: Record<OverviewSort, (a: OverviewSite, b: OverviewSite) => number> = {
    status: (a, b) => STATUS_RANK[a.status] - STATUS_RANK[b.status] || a.name.localeCompare(b.name, "en-GB"),
    name: (a, b) => a.name.localeCompare(b.name, "en-GB"),
    code: (a, b) => a.code.localeCompare(b.code, "en-GB"),
    // Most recently heard from first; sites without readings last.
    latest: (a, b) => (b.latest?.timeMs ?? -Infinity) - (a.latest?.timeMs ?? -Infinity) || a.name.localeCompare(b.name, "en-GB"),
  };
  return kept.sort((a, b) => (assignedFirst ? Number(b.assigned) - Number(a.assigned) : 0) || by[filter.sort](a, b));
}

export function countByStatus(sites: readonly OverviewSite[]) {
  return Object.fromEntries(SITE_STATUSES.map((st) => [st, sites.filter((s) => s.status === st).length])) as Record<SiteStatus, number>;
}
