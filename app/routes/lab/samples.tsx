import { data, Form, Link } from "react-router";
import { z } from "zod";
import type { Route } from "./+types/samples";
import { DataTable, type Column } from "#app/components/data-table.tsx";
import { FilterSelect, TableStateInputs } from "#app/components/filter-form.tsx";
import { formatInZone } from "#app/lib/zoned-time.ts";
import { countLabSamples, LAB_SAMPLE_SORT_KEYS, listLabSamplesPage } from "#app/models/lab-sample.server.ts";
import { requireUser } from "#app/utils/auth.server.ts";
import { REVIEW_ROLES } from "#app/utils/permissions.ts";
import { loadPage, parseTableParams } from "#app/utils/table-params.ts";
import { formatPercent, formatRatio } from "./+shared/format.ts";
import { entrySites } from "./+shared/helpers.server.ts";
import { LabCaution, VERDICT_WORDS, VerdictMark } from "./+shared/report.tsx";
import { Notice } from "./+shared/ui.tsx";

export const meta: Route.MetaFunction = () => [{ title: "Lab checks · Ripplemark" }];

const VERDICTS = ["pass", "warn", "fail"] as const;

const filterSchema = z.object({
  site: z.string().trim().toUpperCase().max(12).regex(/^[A-Z0-9-]*$/).catch(""),
  verdict: z.enum(VERDICTS).optional().catch(undefined),
});

export async function loader({ request }: Route.LoaderArgs) {
  await requireUser(request, { roles: REVIEW_ROLES });
  const search = new URL(request.url).searchParams;
  const params = parseTableParams(search, { sortable: LAB_SAMPLE_SORT_KEYS, defaultSort: "sampledAt", defaultDir: "desc" });
  const filter = filterSchema.parse({ site: search.get("site") ?? "", verdict: search.get("verdict") || undefined });
  const where = { siteCode: filter.site || undefined, verdict: filter.verdict };
  const [{ rows, table }, sites] = await Promise.all([
    loadPage(params, () => countLabSamples(where), (q) => listLabSamplesPage(where, q)),
    entrySites(),
  ]);
  const site = sites.find((s) => s.code === filter.site);
  return {
    samples: rows.map((r) => ({
      id: r.id,
      siteCode: r.site_code,
      siteName: r.site_name,
      sampledAt: formatInZone(r.sampled_at, r.site_time_zone),
      labReference: r.lab_reference,
      verdict: r.verdict,
      ecRatio: r.ec_ratio,
      balancePercent: r.ion_balance_percent,
    })),
    table,
    filter,
    siteName: site?.name ?? null,
    sites: sites.map((s) => ({ code: s.code, name: s.name })),
  };
}

export async function action({ request }: Route.ActionArgs) {
  await requireUser(request, { roles: REVIEW_ROLES });
  throw data("This page takes no form submissions.", { status: 405, headers: { Allow: "GET, HEAD" } });
}

type Row = Route.ComponentProps["loaderData"]["samples"][number];

const columns: Column<Row>[] = [
  {
    key: "sampledAt",
    header: "Sampled at",
    sortable: true,
    rowHeader: true,
    firstDir: "desc",
    render: (s) => (
      <Link to={`/lab/${s.id}`} className="font-semibold text-lake-700 underline">
        {s.sampledAt}
      </Link>
    ),
  },
  {
    key: "site",
    header: "Site",
    sortable: true,
    render: (s) => (
      <Link to={`?site=${encodeURIComponent(s.siteCode)}`} className="hover:underline" title={`Only ${s.siteCode}`}>
        <span className="font-semibold">{s.siteCode}</span> {s.siteName}
      </Link>
    ),
  },
  { key: "labReference", header: "Lab reference", render: (s) => s.labReference ?? <span className="text-ink-500">—</span> },
  { key: "verdict", header: "Verdict", sortable: true, firstDir: "desc", render: (s) => <VerdictMark verdict={s.verdict} /> },
  { key: "ecRatio", header: "Calculated ÷ measured EC", sortable: true, numeric: true, render: (s) => (s.ecRatio === null ? <span className="text-ink-500">no EC</span> : formatRatio(s.ecRatio)) },
  { key: "balance", header: "Ion balance", sortable: true, numeric: true, firstDir: "desc", render: (s) => formatPercent(s.balancePercent) },
];

export default function LabSamples({ loaderData }: Route.ComponentProps) {
  const { samples, table, filter, siteName, sites } = loaderData;
  const detail = [
    filter.site ? `at ${filter.site}${siteName ? ` ${siteName}` : ""}` : "",
    filter.verdict ? `with verdict ${VERDICT_WORDS[filter.verdict]}` : "",
  ]
    .filter(Boolean)
    .join(", ");
  return (
    <div className="space-y-4">
      <div className="flex flex-wrap items-center justify-between gap-3">
        <h1>{filter.site ? `Lab checks at ${filter.site}` : "Lab checks"}</h1>
        <Link to="/lab/new" className="btn">New lab check</Link>
      </div>
      <Notice
        param="imported"
        messages={{ "*": (n) => `${n} ${n === "1" ? "analysis" : "analyses"} imported and checked.` }}
      />
      <Notice param="deleted" messages={{ "1": "The lab check was deleted. The change history keeps its values." }} />
      <LabCaution />
      <Form method="get" className="card flex flex-wrap items-end gap-3" aria-label="Filter lab checks">
        <TableStateInputs table={table} defaultSort="sampledAt" />
        <FilterSelect id="lab-site" name="site" label="Site" anyLabel="Every site" defaultValue={filter.site} options={sites.map((s) => ({ value: s.code, label: `${s.code} · ${s.name}` }))} />
        <FilterSelect id="lab-verdict" name="verdict" label="Verdict" anyLabel="Any verdict" defaultValue={filter.verdict ?? ""} options={VERDICTS.map((v) => ({ value: v, label: VERDICT_WORDS[v] }))} />
        <button type="submit" className="btn-quiet">Show</button>
        {filter.site || filter.verdict ? <Link to="/lab" className="text-lake-700 underline">Clear filters</Link> : null}
      </Form>
      <DataTable
        columns={columns}
        rows={samples}
        rowKey={(s) => s.id}
        table={table}
        caption="Lab checks"
        captionDetail={detail}
        empty={filter.site || filter.verdict ? "No lab check matches these filters." : "No lab checks yet. Enter the first one."}
      />
      <p className="text-sm text-ink-500">Times are the site’s local time. The ion balance is 100 (Σcations − Σanions) ÷ (Σcations + Σanions) in meq/L; it sorts by size, either sign.</p>
    </div>
  );
}
