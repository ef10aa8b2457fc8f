import { isSeriesParameter, type SeriesParameter } from "#app/lib/series/parameters.ts";
import { rangeAnchor, rangeAsWallTimes, resolveRange } from "#app/lib/series/ranges.ts";
import { MAX_COMPARE_SITES } from "#app/utils/dashboard-options.ts";
import { latestReadings } from "./overview.server.ts";
import { deploymentsOverlapping, rangeStatistics } from "./series.server.ts";
import { listSiteOptions } from "./site.server.ts";
import { thresholdsBySite } from "./site-settings.server.ts";

// The compare page: up to six sites, one parameter, one range. The chart points come from the
// series API in the browser; this gathers the choices, the range and per-site statistics.

export { MAX_COMPARE_SITES };

/** Site codes from `?site=A&site=B` (the form) or `?sites=A,B` (links), upper-cased, de-duplicated. */
export function selectedCodes(search: URLSearchParams): string[] {
  const codes = [...search.getAll("site"), ...(search.get("sites") ?? "").split(",")]
    .map((c) => c.trim().toUpperCase())
    .filter((c) => /^[A-Z0-9-]{1,12}$/.test(c));
  return [...new Set(codes)];
}

export async function loadCompare(search: URLSearchParams, nowMs = Date.now()) {
  const options = await listSiteOptions();
  const asked = selectedCodes(search);
  const known = asked.filter((c) => options.some((o) => o.code === c));
  const chosen = known.slice(0, MAX_COMPARE_SITES);
  const problems: string[] = [];
  if (known.length > MAX_COMPARE_SITES) problems.push(`Up to ${MAX_COMPARE_SITES} sites can be compared; showing the first ${MAX_COMPARE_SITES}.`);
  if (asked.length > known.length) problems.push("Some site codes in the address are not known and were left out.");
  const p = search.get("parameter");
  const parameter: SeriesParameter = isSeriesParameter(p) ? p : "sc25";
  const sites = chosen.map((c) => options.find((o) => o.code === c)!);
  const ids = sites.map((s) => s.id);
  const latest = await latestReadings(ids);
  const latestMs = Math.max(-Infinity, ...[...latest.values()].map((l) => l.time.getTime()));
  const timeZone = sites[0]?.time_zone ?? "UTC";
  const range = resolveRange(search, rangeAnchor(Number.isFinite(latestMs) ? latestMs : null, nowMs), timeZone);
  const thresholds = await thresholdsBySite(ids);
  const stats = await Promise.all(
    sites.map(async (s) => {
      const deployments = await deploymentsOverlapping(s.id, range.fromMs, range.toMs);
      const st = await rangeStatistics({ siteId: s.id, fromMs: range.fromMs, toMs: range.toMs, thresholds: thresholds.get(s.id) ?? [], deployments, only: [parameter] });
      return { code: s.code, stats: st.parameters[0] ?? null, completeness: st.completeness };
    }),
  );
  return {
    options: options.map((o) => ({ code: o.code, name: o.name })),
    sites: sites.map((s) => ({ id: s.id, code: s.code, name: s.name, timeZone: s.time_zone })),
    parameter,
    timeZone,
    range: { ...range, ...rangeAsWallTimes(range, timeZone) },
    stats,
    problems,
  };
}
