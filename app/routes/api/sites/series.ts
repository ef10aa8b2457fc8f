import { data } from "react-router";
import { z } from "zod";
import type { Route } from "./+types/series";
import { MAX_POINTS, type SeriesPoint } from "#app/lib/series/bucketing.ts";
import { ALL_SERIES_PARAMETERS, PARAMETER_INFO } from "#app/lib/series/parameters.ts";
import { MAX_RANGE_MS } from "#app/lib/series/ranges.ts";
import { expectedReadings } from "#app/lib/series/statistics.ts";
import { deploymentsOverlapping, loadSeries, loggingIntervalOf } from "#app/models/series.server.ts";
import { findSite } from "#app/models/site.server.ts";
import { requireUser } from "#app/utils/auth.server.ts";
import { cached } from "#app/utils/response-cache.server.ts";
import { ANY_ROLE } from "#app/utils/permissions.ts";

// GET /api/sites/:siteId/series?parameter=sc25&from=ISO&to=ISO&points=N — one parameter of one
// site over [from, to) as at most `points` (≤ 2000) chart points. Times are UTC: ISO instants in,
// epoch milliseconds out. Answer: { parameter, unit, from, to, bucketSeconds, readings, gapSeconds,
// points: [[timeMs, value|null, min?, max?], …] } (see app/lib/series/bucketing.ts).
const query = z.object({
  parameter: z.enum(ALL_SERIES_PARAMETERS, { error: `parameter must be one of ${ALL_SERIES_PARAMETERS.join(", ")}` }),
  from: z.iso.datetime({ offset: true, error: "from must be an ISO date-time with a zone, such as 2025-03-01T00:00:00Z" }),
  to: z.iso.datetime({ offset: true, error: "to must be an ISO date-time with a zone, such as 2025-03-08T00:00:00Z" }),
  points: z.coerce.number().int().min(10).max(100_000).default(1500),
});

/** How long a cached series may be reused at most, even when nothing changed (common practice: a short backstop). */
const SERIES_CACHE_MS = 5 * 60_000;

/**
 * Values to the parameter's display decimals plus two guard digits: about half the bytes of full
 * doubles (e.g. 378.5943347104824 → 378.59 µS/cm), with nothing lost that a chart can show.
 */
function roundValues(points: SeriesPoint[], digits: number): SeriesPoint[] {
  const f = 10 ** digits;
  const r = (v: number) => Math.round(v * f) / f;
  return points.map((p) => (p.length === 4 ? [p[0], p[1] === null ? null : r(p[1]), r(p[2]), r(p[3])] : [p[0], p[1] === null ? null : r(p[1])]));
}

export async function loader({ request, params }: Route.LoaderArgs) {
  await requireUser(request, { roles: ANY_ROLE });
  const siteId = z.uuid().safeParse(params.siteId);
  if (!siteId.success) throw data({ error: "No such site." }, { status: 404 });
  const url = new URL(request.url);
  const parsed = query.safeParse(Object.fromEntries(url.searchParams));
  if (!parsed.success) {
    return Response.json({ error: "Check the query.", fields: z.flattenError(parsed.error).fieldErrors }, { status: 400 });
  }
  const fromMs = Date.parse(parsed.data.from);
  const toMs = Date.parse(parsed.data.to);
  if (toMs <= fromMs) return Response.json({ error: "to must be after from." }, { status: 400 });
  if (toMs - fromMs > MAX_RANGE_MS) return Response.json({ error: "The range may be at most 20 years." }, { status: 400 });
  const points = Math.min(MAX_POINTS, parsed.data.points);
  // The same chart asked for again (several people on one dashboard, a refresh) is answered from
  // the process's cache until a reading, logger or site changes (app/utils/response-cache.server.ts).
  // The answer depends only on the query, not on who asks: every role may see every site's series.
  const body = await cached(
    `series|${siteId.data}|${parsed.data.parameter}|${fromMs}|${toMs}|${points}`,
    ["readings", "site", "logger", "logger_deployment"],
    SERIES_CACHE_MS,
    async () => {
      const site = await findSite(siteId.data);
      if (!site) return null;
      const deployments = await deploymentsOverlapping(site.id, fromMs, toMs);
      const series = await loadSeries({
        siteId: site.id,
        parameter: parsed.data.parameter,
        fromMs,
        toMs,
        maxPoints: points,
        loggingIntervalS: loggingIntervalOf(deployments),
        expectedReadings: expectedReadings(deployments, fromMs, toMs),
      });
      return JSON.stringify({ ...series, points: roundValues(series.points, PARAMETER_INFO[parsed.data.parameter].decimals + 2) });
    },
  );
  if (body === null) throw data({ error: "No such site." }, { status: 404 });
  return new Response(body, { headers: { "Content-Type": "application/json; charset=utf-8", "Cache-Control": "private, no-store" } });
}
