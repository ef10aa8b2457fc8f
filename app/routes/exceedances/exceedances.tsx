import { data, Form, Link } from "react-router";
import { z } from "zod";
import type { Route } from "./+types/exceedances";
import { FilterSelect, TableStateInputs } from "#app/components/filter-form.tsx";
import { DataTable, type Column } from "#app/components/data-table.tsx";
import { ALERT_PARAMETERS, PARAMETER_NAMES } from "#app/lib/quality/alert-rules.ts";
import { formatDuration, formatPeak, OUTCOME_LABELS, OUTCOMES, STATUS_LABELS, STATUSES } from "#app/lib/quality/exceedance-words.ts";
import { formatInZone } from "#app/lib/zoned-time.ts";
import { siteChoices } from "#app/models/alert-rule.server.ts";
import { countExceedances, EXCEEDANCE_SORT_KEYS, listExceedancesPage } from "#app/models/exceedance.server.ts";
import { requireUser } from "#app/utils/auth.server.ts";
import { REVIEW_ROLES } from "#app/utils/permissions.ts";
import { loadPage, parseTableParams } from "#app/utils/table-params.ts";
import { OutcomeText, StatusMark } from "./+shared/ui.tsx";

export const meta: Route.MetaFunction = () => [{ title: "Exceedances · Ripplemark" }];

const DAY = /^\d{4}-\d{2}-\d{2}$/;

const filterSchema = z.object({
  site: z.string().trim().toUpperCase().max(12).regex(/^[A-Z0-9-]*$/).catch(""),
  parameter: z.enum(ALERT_PARAMETERS).optional().catch(undefined),
  status: z.enum(STATUSES).optional().catch(undefined),
  outcome: z.enum([...OUTCOMES, "unclassified"]).optional().catch(undefined),
  from: z.string().regex(DAY).optional().catch(undefined),
  to: z.string().regex(DAY).optional().catch(undefined),
});

function dayMs(day: string | undefined) {
  if (!day) return undefined;
  const ms = Date.parse(`${day}T00:00:00Z`);
  return Number.isFinite(ms) ? ms : undefined;
}

export async function loader({ request }: Route.LoaderArgs) {
  await requireUser(request, { roles: REVIEW_ROLES });
  const search = new URL(request.url).searchParams;
  const params = parseTableParams(search, { sortable: EXCEEDANCE_SORT_KEYS, defaultSort: "started", defaultDir: "desc" });
  const filter = filterSchema.parse({
    site: search.get("site") ?? "",
    parameter: search.get("parameter") || undefined,
    status: search.get("status") || undefined,
    outcome: search.get("outcome") || undefined,
    from: search.get("from") || undefined,
    to: search.get("to") || undefined,
  });
  const toMs = dayMs(filter.to);
  const where = {
    siteCode: filter.site || undefined,
    parameter: filter.parameter,
    status: filter.status,
    outcome: filter.outcome,
    fromMs: dayMs(filter.from),
    // "to" names a day: events starting on it are included.
    toMs: toMs === undefined ? undefined : toMs + 86_400_000,
  };
  const [{ rows, table }, sites] = await Promise.all([
    loadPage(params, () => countExceedances(where), (q) => listExceedancesPage(where, q)),
    siteChoices(),
  ]);
  return {
    events: rows.map((r) => {
      const unit = (r.params as { unit?: string } | null)?.unit;
      return {
        id: r.id,
        started: formatInZone(r.started_at, r.time_zone),
        ongoing: r.ended_at === null,
        siteCode: r.site_code,
        siteName: r.site_name,
        parameter: PARAMETER_NAMES[r.parameter],
        ruleName: r.rule_name,
        peak: formatPeak(r.condition, r.parameter, r.peak_value, unit),
        duration: formatDuration(r.duration_s),
        status: r.status,
        outcome: r.outcome,
        flagged: r.readings_flagged,
      };
    }),
    table,
    filter,
    sites: sites.map((s) => ({ code: s.code, name: s.name })),
  };
}

export async function action({ request }: Route.ActionArgs) {
  await requireUser(request, { roles: REVIEW_ROLES });
  throw data("This page takes no form submissions.", { status: 405, headers: { Allow: "GET, HEAD" } });
}

type Row = Route.ComponentProps["loaderData"]["events"][number];

const columns: Column<Row>[] = [
  {
    key: "started",
    header: "Started",
    sortable: true,
    rowHeader: true,
    firstDir: "desc",
    render: (e) => (
      <Link to={`/exceedances/${e.id}`} className="font-semibold text-lake-700 underline">
        {e.started}
      </Link>
    ),
  },
  {
    key: "site",
    header: "Site",
    sortable: true,
    render: (e) => (
      <>
        <span className="font-semibold">{e.siteCode}</span> {e.siteName}
      </>
    ),
  },
  { key: "parameter", header: "Parameter", sortable: true, render: (e) => e.parameter },
  { key: "rule", header: "Rule", render: (e) => <span className="text-sm">{e.ruleName}</span> },
  { key: "peak", header: "Peak", render: (e) => e.peak },
  { key: "duration", header: "Duration", sortable: true, firstDir: "desc", render: (e) => (e.ongoing ? `${e.duration} so far` : e.duration) },
  { key: "status", header: "Status", sortable: true, render: (e) => <StatusMark status={e.status} /> },
  {
    key: "outcome",
    header: "Outcome",
    render: (e) => (
      <>
        <OutcomeText outcome={e.outcome} />
        {e.flagged ? <span className="block text-sm text-ink-500">{e.flagged} readings flagged</span> : null}
      </>
    ),
  },
];

export default function Exceedances({ loaderData }: Route.ComponentProps) {
  const { events, table, filter, sites } = loaderData;
  const active = !!(filter.site || filter.parameter || filter.status || filter.outcome || filter.from || filter.to);
  const detail = [
    filter.site ? `at ${filter.site}` : "",
    filter.parameter ? `of ${PARAMETER_NAMES[filter.parameter].toLowerCase()}` : "",
    filter.status ? `with status ${STATUS_LABELS[filter.status].toLowerCase()}` : "",
    filter.outcome ? (filter.outcome === "unclassified" ? "not classified yet" : `judged “${OUTCOME_LABELS[filter.outcome]}”`) : "",
    filter.from ? `from ${filter.from}` : "",
    filter.to ? `to ${filter.to}` : "",
  ]
    .filter(Boolean)
    .join(", ");
  return (
    <div className="space-y-4">
      <h1>Exceedances</h1>
      <p className="text-ink-700">
        Events found by the <Link to="/alert-rules" className="text-lake-700 underline">alert rules</Link> across every site. Open one to see
        its chart, classify it and close it.
      </p>
      <Form method="get" className="card flex flex-wrap items-end gap-3" aria-label="Filter exceedances">
        <TableStateInputs table={table} defaultSort="started" />
        <FilterSelect id="f-site" name="site" label="Site" anyLabel="Every site" defaultValue={filter.site} options={sites.map((s) => ({ value: s.code, label: `${s.code} · ${s.name}` }))} />
        <FilterSelect id="f-parameter" name="parameter" label="Parameter" anyLabel="Any parameter" defaultValue={filter.parameter ?? ""} options={ALERT_PARAMETERS.map((p) => ({ value: p, label: PARAMETER_NAMES[p] }))} />
        <FilterSelect id="f-status" name="status" label="Status" anyLabel="Any status" defaultValue={filter.status ?? ""} options={STATUSES.map((st) => ({ value: st, label: STATUS_LABELS[st] }))} />
        <FilterSelect
          id="f-outcome"
          name="outcome"
          label="Outcome"
          anyLabel="Any outcome"
          defaultValue={filter.outcome ?? ""}
          options={[{ value: "unclassified", label: "Not classified yet" }, ...OUTCOMES.map((o) => ({ value: o, label: OUTCOME_LABELS[o] }))]}
        />
        <div>
          <label htmlFor="f-from" className="field-label">From (UTC day)</label>
          <input id="f-from" type="date" name="from" defaultValue={filter.from ?? ""} className="field-input" />
        </div>
        <div>
          <label htmlFor="f-to" className="field-label">To (UTC day)</label>
          <input id="f-to" type="date" name="to" defaultValue={filter.to ?? ""} className="field-input" />
        </div>
        <button type="submit" className="btn-quiet">Show</button>
        {active ? <Link to="/exceedances" className="text-lake-700 underline">Clear filters</Link> : null}
      </Form>
      <DataTable
        columns={columns}
        rows={events}
        rowKey={(e) => e.id}
        table={table}
        caption="Exceedances"
        captionDetail={detail}
        empty={active ? "No event matches these filters." : "No events yet. They appear when readings break an alert rule."}
      />
      <p className="text-sm text-ink-500">Times are each site's local time. An event in the period overlaps it; “so far” marks events still going on at the latest reading.</p>
    </div>
  );
}
