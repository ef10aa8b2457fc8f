import { describeCompensation } from "#app/jobs/derive.server.ts";
import { SERIES_PARAMETERS, type SeriesParameter } from "#app/lib/series/parameters.ts";
import { rangeAnchor, rangeAsWallTimes, resolveRange } from "#app/lib/series/ranges.ts";
import { tdsFactorWarning } from "#app/lib/water/index.ts";
import { latestReadings, statusFromLatest } from "./overview.server.ts";
import { deploymentsOverlapping, labSamplesInRange, loggingIntervalOf, rangeStatistics } from "./series.server.ts";
import { findSiteByCode, thresholdsOf } from "./site-settings.server.ts";
import { eventsForSiteChart } from "./exceedance.server.ts";
import { thresholdLinesForSite } from "./alert-rule.server.ts";

// Everything a site page needs besides the chart points (which the browser fetches from the series
// API): the site, its settings in words, the shown range, statistics of every reading in it, the
// lab samples in it and the site's status now.

export async function loadSiteDashboard(code: string, search: URLSearchParams, nowMs = Date.now()) {
  const site = await findSiteByCode(code);
  if (!site) return null;
  const [latestMap, thresholds] = await Promise.all([latestReadings([site.id]), thresholdsOf(site.id)]);
  const latest = latestMap.get(site.id) ?? null;
  const anchorMs = rangeAnchor(latest ? latest.time.getTime() : null, nowMs);
  const range = resolveRange(search, anchorMs, site.time_zone);
  const deployments = await deploymentsOverlapping(site.id, range.fromMs, range.toMs);
  const [stats, labSamples, alertEvents, ruleLines] = await Promise.all([
    rangeStatistics({ siteId: site.id, fromMs: range.fromMs, toMs: range.toMs, thresholds, deployments }),
    labSamplesInRange(site.id, range.fromMs, range.toMs),
    // The alert rules' events in the range (shaded on the charts) and their threshold lines.
    eventsForSiteChart(site.id, range.fromMs, range.toMs),
    thresholdLinesForSite(site),
  ]);
  const present = new Set(stats.parameters.map((p) => p.parameter));
  const charted: SeriesParameter[] = SERIES_PARAMETERS.filter((p) => present.has(p));
  const status = statusFromLatest(latest, thresholds, nowMs, site.reference_c);
  let tdsWarning: string | undefined;
  try {
    tdsWarning = tdsFactorWarning(site.tds_factor);
  } catch {
    tdsWarning = undefined;
  }
  return {
    site: {
      id: site.id,
      code: site.code,
      name: site.name,
      kind: site.kind,
      timeZone: site.time_zone,
      notes: site.notes,
      referenceC: site.reference_c,
      tdsFactor: site.tds_factor,
      compensation: describeCompensation(site),
      settingsVersion: site.settings_version,
    },
    latest: latest && {
      timeMs: latest.time.getTime(),
      sc25: latest.sc25_us_cm,
      temperature: latest.temperature_c,
      tds: latest.tds_mg_l,
      salinity: latest.salinity_psu,
    },
    status,
    thresholds,
    range: { ...range, ...rangeAsWallTimes(range, site.time_zone), anchorMs, anchoredToData: latest !== null },
    loggers: deployments.map((d) => ({ serial: d.serial, intervalS: d.intervalS, fromMs: d.fromMs, untilMs: d.untilMs })),
    loggingIntervalS: loggingIntervalOf(deployments),
    stats,
    charted,
    labSamples,
    alertEvents: alertEvents.map((e) => ({ parameter: e.parameter, fromMs: e.fromMs, toMs: e.toMs })),
    ruleLines: ruleLines.map((r) => ({ parameter: r.parameter, direction: r.direction, threshold: r.threshold, ruleName: r.ruleName })),
    tdsWarning,
  };
}

export type SiteDashboard = NonNullable<Awaited<ReturnType<typeof loadSiteDashboard>>>;
