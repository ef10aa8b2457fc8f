import { Link } from "react-router";
import { z } from "zod";
import type { Route } from "./+types/loggers";
import { DataTable, type Column } from "#app/components/data-table.tsx";
import { formatInZone } from "#app/lib/zoned-time.ts";
import { countLoggers, listLoggersPage, LOGGER_SORT_KEYS } from "#app/models/logger.server.ts";
import { requireUser } from "#app/utils/auth.server.ts";
import { ADMIN_ONLY } from "#app/utils/permissions.ts";
import { loadPage, parseTableParams } from "#app/utils/table-params.ts";
import { formatInterval } from "./+shared/logger-form.tsx";
import { refusePost } from "./+shared/helpers.server.ts";
import { FilterForm } from "./+shared/ui.tsx";

export const meta: Route.MetaFunction = () => [{ title: "Loggers · Administration · Ripplemark" }];

const filterSchema = z.object({
  q: z.string().trim().transform((s) => s.slice(0, 100)).catch(""),
  deployed: z.enum(["yes", "no"]).optional().catch(undefined),
});

export async function action({ request }: Route.ActionArgs) {
  return refusePost(request);
}

export async function loader({ request }: Route.LoaderArgs) {
  await requireUser(request, { roles: ADMIN_ONLY });
  const search = new URL(request.url).searchParams;
  const params = parseTableParams(search, { sortable: LOGGER_SORT_KEYS, defaultSort: "serial" });
  const filter = filterSchema.parse({ q: search.get("q") ?? "", deployed: search.get("deployed") || undefined });
  const where = { search: filter.q || undefined, deployed: filter.deployed };
  const { rows, table } = await loadPage(params, () => countLoggers(where), (q) => listLoggersPage(where, q));
  return {
    // Only what the table shows; the deployment start is shown in the site's own time zone.
    loggers: rows.map((l) => ({
      id: l.id,
      serial: l.serial,
      model: l.model,
      interval: formatInterval(l.logging_interval_s),
      site: l.siteId ? { id: l.siteId, code: l.siteCode!, name: l.siteName! } : null,
      since: l.since && l.siteTimeZone ? formatInZone(l.since, l.siteTimeZone) : null,
    })),
    table,
    filter,
  };
}

type LoggerRow = Route.ComponentProps["loaderData"]["loggers"][number];

const columns: Column<LoggerRow>[] = [
  {
    key: "serial",
    header: "Serial",
    sortable: true,
    rowHeader: true,
    render: (l) => (
      <Link to={`/admin/loggers/${l.id}`} className="font-semibold text-lake-700 underline">
        {l.serial}
      </Link>
    ),
  },
  { key: "model", header: "Model", sortable: true, render: (l) => l.model || <span className="text-ink-500">—</span> },
  { key: "interval", header: "Interval", sortable: true, numeric: true, render: (l) => l.interval },
  {
    key: "site",
    header: "Deployed at",
    sortable: true,
    render: (l) =>
      l.site ? (
        <Link to={`/admin/sites/${l.site.id}`} className="text-lake-700 underline">
          {l.site.code} {l.site.name}
        </Link>
      ) : (
        <span className="text-ink-500">Not deployed</span>
      ),
  },
  { key: "since", header: "Since", sortable: true, firstDir: "desc", render: (l) => l.since ?? <span className="text-ink-500">—</span> },
];

export default function Loggers({ loaderData }: Route.ComponentProps) {
  const { loggers, table, filter } = loaderData;
  const detail = [
    filter.deployed === "yes" ? "deployed now" : filter.deployed === "no" ? "not deployed" : "",
    filter.q ? `matching “${filter.q}”` : "",
  ]
    .filter(Boolean)
    .join(", ");
  return (
    <div className="space-y-4">
      <div className="flex flex-wrap items-center justify-between gap-3">
        <h1>Loggers</h1>
        <Link to="/admin/loggers/new" className="btn">Add a logger</Link>
      </div>
      <FilterForm label="Filter loggers" clearTo="/admin/loggers" keep={{ sort: table.sort, dir: table.dir, size: table.pageSize }}>
        <div>
          <label htmlFor="loggers-q" className="field-label">Serial or model contains</label>
          <input id="loggers-q" name="q" type="search" defaultValue={filter.q} className="field-input" />
        </div>
        <div>
          <label htmlFor="loggers-deployed" className="field-label">Deployment</label>
          <select id="loggers-deployed" name="deployed" defaultValue={filter.deployed ?? ""} className="field-input">
            <option value="">All loggers</option>
            <option value="yes">Deployed now</option>
            <option value="no">Not deployed</option>
          </select>
        </div>
      </FilterForm>
      <DataTable
        columns={columns}
        rows={loggers}
        rowKey={(l) => l.id}
        table={table}
        caption="Loggers"
        captionDetail={detail}
        empty={filter.q || filter.deployed ? "No logger matches these filters." : "No loggers yet. Add the first one."}
      />
    </div>
  );
}
