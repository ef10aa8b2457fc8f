import { data } from "react-router";
import { z } from "zod";
import type { Route } from "./+types/series";
import { MAX_POINTS } from "#app/lib/series/bucketing.ts";
import { ALL_SERIES_PARAMETERS } from "#app/lib/series/parameters.ts";
import { MAX_RANGE_MS } from "#app/lib/series/ranges.ts";
import { expectedReadings } from "#app/lib/series/statistics.ts";
import { deploymentsOverlapping, loadSeries, loggingIntervalOf } from "#app/models/series.server.ts";
import { findSite } from "#app/models/site.server.ts";
import { requireUser } from "#app/utils/auth.server.ts";
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
  const site = await findSite(siteId.data);
  if (!site) throw data({ error: "No such site." }, { status: 404 });
  const deployments = await deploymentsOverlapping(site.id, fromMs, toMs);
  const series = await loadSeries({
    siteId: site.id,
    parameter: parsed.data.parameter,
    fromMs,
    toMs,
    maxPoints: Math.min(MAX_POINTS, parsed.data.points),
    loggingIntervalS: loggingIntervalOf(deployments),
    expectedReadings: expectedReadings(deployments, fromMs, toMs),
  });
  return Response.json(series, { headers: { "Cache-Control": "private, no-store" } });
}
