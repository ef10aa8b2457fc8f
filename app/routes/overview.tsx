import { Form, Link } from "react-router";
import { z } from "zod";
import type { Route } from "./+types/overview";
import { SITE_KINDS } from "#db/schema.ts";
import { fullTime } from "#app/components/charts/time-format.ts";
import { SiteMap } from "#app/components/site-map.tsx";
import { StatusMark, STATUS_TEXT_CLASS } from "#app/components/status-mark.tsx";
import { OverviewCard } from "#app/components/overview-card.tsx";
import { SITE_STATUS_LABELS, SITE_STATUSES } from "#app/lib/quality/site-status.ts";
import { countByStatus, filterAndSortSites, loadOverviewCached } from "#app/models/overview.server.ts";
import { OVERVIEW_SORTS } from "#app/utils/dashboard-options.ts";
import { requireUser } from "#app/utils/auth.server.ts";
import { ANY_ROLE } from "#app/utils/permissions.ts";
import { SITE_KIND_LABELS } from "#app/utils/site-labels.ts";
import { withParams } from "#app/utils/table-params.ts";

export const meta: Route.MetaFunction = () => [{ title: "Overview · Ripplemark" }];

// Reloaded all day by many people with the same figures: its render is kept per distinct loader
// data (app/utils/document-memo.server.ts). It renders from its loader data alone.
export const handle = { memoizeDocument: true };

// Filters and sort from the URL; anything unknown falls back to "all" / status order.
const params = z.object({
  status: z.enum(SITE_STATUSES).optional().catch(undefined),
  kind: z.enum(SITE_KINDS).optional().catch(undefined),
  q: z.string().trim().max(100).optional().catch(undefined),
  sort: z.enum(OVERVIEW_SORTS).catch("status"),
});

const SORT_LABELS: Record<(typeof OVERVIEW_SORTS)[number], string> = {
  status: "Needs attention first",
  name: "Name",
  code: "Code",
  latest: "Most recent reading",
};

export async function loader({ request }: Route.LoaderArgs) {
  const user = await requireUser(request, { roles: ANY_ROLE });
  const search = new URL(request.url).searchParams;
  const filter = params.parse({
    status: search.get("status") ?? undefined,
    kind: search.get("kind") ?? undefined,
    q: search.get("q") || undefined,
    sort: search.get("sort") ?? undefined,
  });
  // The figures as at nowMs: when they were worked out (shared between requests for a few seconds).
  const { nowMs, sites: all } = await loadOverviewCached(user);
  const isTechnician = user.role === "technician";
  return {
    nowMs,
    filter,
    isTechnician,
    counts: countByStatus(all),
    total: all.length,
    sites: filterAndSortSites(all, filter, isTechnician),
    map: all.map((s) => ({ code: s.code, name: s.name, latitude: s.latitude, longitude: s.longitude, status: s.status })),
  };
}

export default function Overview({ loaderData }: Route.ComponentProps) {
  const { sites, counts, total, filter, map, nowMs, isTechnician } = loaderData;
  const filtered = Boolean(filter.status || filter.kind || filter.q);
  return (
    <div className="space-y-5">
      <header>
        <h1 id="overview-title">Sites</h1>
        <p className="mt-1 text-ink-700">
          {total} monitoring sites. The status compares each site’s latest reading with its display thresholds.
          {isTechnician ? " Sites on your round come first." : ""}
        </p>
      </header>

      {total > 0 ? (
        <div className="grid items-start gap-4 md:grid-cols-[minmax(0,1fr)_minmax(0,2fr)]">
          <section aria-labelledby="status-summary" className="card">
            <h2 id="status-summary" className="text-base">By status</h2>
            <p className="text-sm text-ink-500">Each status has its own shape, here and on the map.</p>
            <ul className="mt-2 space-y-1.5">
              {SITE_STATUSES.map((st) => (
                <li key={st}>
                  {counts[st] > 0 ? (
                    <Link
                      to={withParams("", { ...(filter.kind ? { kind: filter.kind } : {}), status: st, sort: filter.sort })}
                      className={`inline-flex items-center gap-2 hover:underline ${STATUS_TEXT_CLASS[st]}`}
                      aria-current={filter.status === st ? "true" : undefined}
                    >
                      <StatusMark status={st} />
                      <span className="text-ink-900">{counts[st]}</span>
                      <span className="sr-only">{counts[st] === 1 ? " site: show only it" : " sites: show only these"}</span>
                    </Link>
                  ) : (
                    <span className="inline-flex items-center gap-2 text-ink-500">
                      <StatusMark status={st} className="font-normal" />
                      <span>0</span>
                    </span>
                  )}
                </li>
              ))}
            </ul>
          </section>
          <section aria-labelledby="map-title">
            <h2 id="map-title" className="sr-only">Site map</h2>
            <SiteMap sites={map} title="Map of the sites, each placed by its coordinates; each site links to its page" />
          </section>
        </div>
      ) : null}

      <Form method="get" className="card flex flex-wrap items-end gap-3" aria-label="Filter and sort the sites">
        <div>
          <label className="field-label" htmlFor="f-q">Name or code</label>
          <input id="f-q" name="q" type="search" defaultValue={filter.q ?? ""} className="field-input w-48" />
        </div>
        <div>
          <label className="field-label" htmlFor="f-status">Status</label>
          <select id="f-status" name="status" defaultValue={filter.status ?? ""} className="field-input w-auto">
            <option value="">Any status</option>
            {SITE_STATUSES.map((st) => (
              <option key={st} value={st}>{SITE_STATUS_LABELS[st]}</option>
            ))}
          </select>
        </div>
        <div>
          <label className="field-label" htmlFor="f-kind">Kind of site</label>
          <select id="f-kind" name="kind" defaultValue={filter.kind ?? ""} className="field-input w-auto">
            <option value="">Any kind</option>
            {SITE_KINDS.map((k) => (
              <option key={k} value={k}>{SITE_KIND_LABELS[k]}</option>
            ))}
          </select>
        </div>
        <div>
          <label className="field-label" htmlFor="f-sort">Order</label>
          <select id="f-sort" name="sort" defaultValue={filter.sort} className="field-input w-auto">
            {OVERVIEW_SORTS.map((s) => (
              <option key={s} value={s}>{SORT_LABELS[s]}</option>
            ))}
          </select>
        </div>
        <button type="submit" className="btn">Show</button>
        {filtered ? <Link to="/" className="btn-quiet">Show all sites</Link> : null}
      </Form>

      <section aria-labelledby="site-list-title">
        <h2 id="site-list-title" className="sr-only">Site list</h2>
        <p className="text-sm text-ink-700" role="status">
          {sites.length === total ? `All ${total} sites` : `${sites.length} of ${total} sites`}, {SORT_LABELS[filter.sort].toLowerCase()}.
          Times at each site’s clock; the overview was read at {fullTime(nowMs, "UTC")}.
        </p>
        <ul className="mt-3 grid gap-3 md:grid-cols-2 xl:grid-cols-3">
          {sites.map((s) => (
            <OverviewCard key={s.id} site={s} nowMs={nowMs} />
          ))}
        </ul>
        {total === 0 ? (
          <p className="card mt-4">
            No sites yet. <Link className="text-lake-700 underline" to="/admin/sites">An administrator can add them.</Link>
          </p>
        ) : sites.length === 0 ? (
          <p className="card mt-4">No site matches these filters.</p>
        ) : null}
      </section>
    </div>
  );
}
