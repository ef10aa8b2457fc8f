import { Link } from "react-router";
import { z } from "zod";
import type { Route } from "./+types/sites";
import { SITE_KINDS } from "#db/schema.ts";
import { DataTable, type Column } from "#app/components/data-table.tsx";
import { countSites, listSitesPage, SITE_SORT_KEYS } from "#app/models/site.server.ts";
import { requireUser } from "#app/utils/auth.server.ts";
import { ADMIN_ONLY } from "#app/utils/permissions.ts";
import { SITE_KIND_LABELS } from "#app/utils/site-labels.ts";
import { loadPage, parseTableParams } from "#app/utils/table-params.ts";
import { refusePost } from "./+shared/helpers.server.ts";
import { FilterForm } from "./+shared/ui.tsx";

export const meta: Route.MetaFunction = () => [{ title: "Sites · Administration · Ripplemark" }];

const filterSchema = z.object({
  q: z.string().trim().transform((s) => s.slice(0, 100)).catch(""),
  kind: z.enum(SITE_KINDS).optional().catch(undefined),
});

export async function action({ request }: Route.ActionArgs) {
  return refusePost(request);
}

export async function loader({ request }: Route.LoaderArgs) {
  await requireUser(request, { roles: ADMIN_ONLY });
  const search = new URL(request.url).searchParams;
  const params = parseTableParams(search, { sortable: SITE_SORT_KEYS, defaultSort: "code" });
  const filter = filterSchema.parse({ q: search.get("q") ?? "", kind: search.get("kind") || undefined });
  const where = { kind: filter.kind, search: filter.q || undefined };
  const { rows, table } = await loadPage(params, () => countSites(where), (q) => listSitesPage(where, q));
  return { sites: rows, table, filter };
}

type SiteRow = Route.ComponentProps["loaderData"]["sites"][number];

const coordinate = new Intl.NumberFormat("en-GB", { minimumFractionDigits: 4, maximumFractionDigits: 6 });

const columns: Column<SiteRow>[] = [
  {
    key: "code",
    header: "Code",
    sortable: true,
    rowHeader: true,
    render: (s) => (
      <Link to={`/admin/sites/${s.id}`} className="font-semibold text-lake-700 underline">
        {s.code}
      </Link>
    ),
  },
  { key: "name", header: "Name", sortable: true, render: (s) => s.name },
  { key: "kind", header: "Kind", sortable: true, render: (s) => SITE_KIND_LABELS[s.kind] },
  {
    key: "position",
    header: "Latitude, longitude",
    render: (s) => <span className="tabular-nums">{coordinate.format(s.latitude)}, {coordinate.format(s.longitude)}</span>,
  },
  { key: "timeZone", header: "Time zone", sortable: true, render: (s) => s.time_zone },
  { key: "loggers", header: "Loggers deployed", sortable: true, numeric: true, firstDir: "desc", render: (s) => s.loggersNow },
];

export default function Sites({ loaderData }: Route.ComponentProps) {
  const { sites, table, filter } = loaderData;
  const detail = [filter.kind ? `of kind ${SITE_KIND_LABELS[filter.kind]}` : "", filter.q ? `matching “${filter.q}”` : ""]
    .filter(Boolean)
    .join(", ");
  return (
    <div className="space-y-4">
      <div className="flex flex-wrap items-center justify-between gap-3">
        <h1>Sites</h1>
        <Link to="/admin/sites/new" className="btn">Add a site</Link>
      </div>
      <FilterForm label="Filter sites" clearTo="/admin/sites" keep={{ sort: table.sort, dir: table.dir, size: table.pageSize }}>
        <div>
          <label htmlFor="sites-q" className="field-label">Code or name contains</label>
          <input id="sites-q" name="q" type="search" defaultValue={filter.q} className="field-input" />
        </div>
        <div>
          <label htmlFor="sites-kind" className="field-label">Kind</label>
          <select id="sites-kind" name="kind" defaultValue={filter.kind ?? ""} className="field-input">
            <option value="">Any kind</option>
            {SITE_KINDS.map((k) => (
              <option key={k} value={k}>{SITE_KIND_LABELS[k]}</option>
            ))}
          </select>
        </div>
      </FilterForm>
      <DataTable
        columns={columns}
        rows={sites}
        rowKey={(s) => s.id}
        table={table}
        caption="Sites"
        captionDetail={detail}
        empty={filter.q || filter.kind ? "No site matches these filters." : "No sites yet. Add the first one."}
      />
    </div>
  );
}
