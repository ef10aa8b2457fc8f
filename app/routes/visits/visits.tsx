import { data, Form, Link } from "react-router";
import { z } from "zod";
import type { Route } from "./+types/visits";
import { DataTable, type Column } from "#app/components/data-table.tsx";
import { formatInZone } from "#app/lib/zoned-time.ts";
import { countVisits, listVisitsPage, visibilityFilter, VISIT_SORT_KEYS } from "#app/models/field-visit.server.ts";
import { listSiteOptions } from "#app/models/site.server.ts";
import { requireUser } from "#app/utils/auth.server.ts";
import { FIELD_ROLES } from "#app/utils/permissions.ts";
import { loadPage, parseTableParams } from "#app/utils/table-params.ts";
import { VerdictMark } from "./+shared/verdict.tsx";

export const meta: Route.MetaFunction = () => [{ title: "Field visits · Ripplemark" }];

const filterSchema = z.object({ site: z.string().trim().toUpperCase().max(12).regex(/^[A-Z0-9-]*$/).catch("") });

export async function loader({ request }: Route.LoaderArgs) {
  const user = await requireUser(request, { roles: FIELD_ROLES });
  const search = new URL(request.url).searchParams;
  const params = parseTableParams(search, { sortable: VISIT_SORT_KEYS, defaultSort: "visitedAt", defaultDir: "desc" });
  const filter = filterSchema.parse({ site: search.get("site") ?? "" });
  const where = await visibilityFilter(user, filter.site || undefined);
  const [{ rows, table }, sites] = await Promise.all([
    loadPage(params, () => countVisits(where), (q) => listVisitsPage(where, q)),
    listSiteOptions(),
  ]);
  return {
    visits: rows.map((r) => ({
      id: r.id,
      visitedAt: formatInZone(r.visited_at, r.site_time_zone),
      siteCode: r.site_code,
      siteName: r.site_name,
      logger: r.logger_serial,
      technician: r.technician_name ?? "—",
      fouling: r.fouling_passed,
      temperature: r.temperature_passed,
      checks: r.checks,
      checksFailed: r.checks_failed,
      recalibrated: r.recalibrated,
    })),
    table,
    filter,
    sites: sites.map((s) => ({ code: s.code, name: s.name })),
    ownOnly: user.role === "technician",
  };
}

export async function action({ request }: Route.ActionArgs) {
  await requireUser(request, { roles: FIELD_ROLES });
  throw data("This page takes no form submissions.", { status: 405, headers: { Allow: "GET, HEAD" } });
}

type Row = Route.ComponentProps["loaderData"]["visits"][number];

const columns: Column<Row>[] = [
  {
    key: "visitedAt",
    header: "Visited",
    sortable: true,
    rowHeader: true,
    firstDir: "desc",
    render: (v) => (
      <Link to={`/visits/${v.id}`} className="inline-block py-1 font-semibold text-lake-700 underline">
        {v.visitedAt}
      </Link>
    ),
  },
  { key: "site", header: "Site", sortable: true, render: (v) => <><span className="font-semibold">{v.siteCode}</span> {v.siteName}</> },
  { key: "logger", header: "Logger", render: (v) => v.logger },
  { key: "fouling", header: "Fouling", render: (v) => <VerdictMark verdict={v.fouling} /> },
  {
    key: "checks",
    header: "Calibration checks",
    render: (v) => (v.checks === 0 ? "none" : <VerdictMark verdict={v.checksFailed === 0}>{v.checks > 1 ? <span className="font-normal">({v.checks - v.checksFailed} of {v.checks})</span> : null}</VerdictMark>),
  },
  { key: "recalibrated", header: "Recalibrated", render: (v) => (v.recalibrated ? "Yes" : "No") },
  { key: "technician", header: "Recorded by", render: (v) => v.technician },
];

export default function Visits({ loaderData }: Route.ComponentProps) {
  const { visits, table, filter, sites, ownOnly } = loaderData;
  return (
    <div className="space-y-5">
      <header className="flex flex-wrap items-end justify-between gap-3">
        <div>
          <h1>Field visits</h1>
          <p className="max-w-3xl text-ink-700">
            Cleaning, field-meter readings and calibration checks at each logger.
            {ownOnly ? " You see the visits at your sites and the ones you recorded." : ""}
          </p>
        </div>
        <Link to={filter.site ? `/visits/new?site=${encodeURIComponent(filter.site)}` : "/visits/new"} className="btn min-h-12 px-5 text-lg">
          Record a visit
        </Link>
      </header>
      <Form method="get" className="flex flex-wrap items-end gap-2">
        <div>
          <label htmlFor="site-filter" className="field-label">Site</label>
          <select id="site-filter" name="site" defaultValue={filter.site} className="field-input min-h-11">
            <option value="">All sites</option>
            {sites.map((s) => (
              <option key={s.code} value={s.code}>{`${s.code} · ${s.name}`}</option>
            ))}
          </select>
        </div>
        <button type="submit" className="btn-quiet min-h-11">Show</button>
      </Form>
      <DataTable columns={columns} rows={visits} rowKey={(v) => v.id} table={table} caption="Field visits" empty="No field visits yet." />
    </div>
  );
}
