import { data } from "react-router";
import type { Route } from "./+types/table-csv";
import { csvSafeCell, toCsvLine } from "#app/lib/import/csv.ts";
import { TREND_LABELS } from "#app/lib/series/trend.ts";
import { WEEK_STATUS_LABELS } from "#app/lib/series/week-status.ts";
import { parseWeekKey } from "#app/lib/series/weeks.ts";
import { loadWeekTable } from "#app/models/summary-read.server.ts";
import { requireUser } from "#app/utils/auth.server.ts";
import { getEnv } from "#app/utils/env.server.ts";
import { READ_ROLES } from "#app/utils/permissions.ts";

// GET /api/summaries/:week/table.csv — the weekly table, one row per site, from the summary cache.
// A few "#" lines say what the file is; then one header row naming each column with its unit.
// Numbers are written plainly (full precision, "." decimal mark); every cell goes through
// csvSafeCell, so a site name that looks like a spreadsheet formula is neutralised.
export const TABLE_COLUMNS = [
  "Site code",
  "Site name",
  "ISO week",
  "Week starts (local date)",
  "Status",
  "Readings received",
  "Readings excluded by quality flag",
  "Readings expected",
  "Completeness (%)",
  "Lowest SC (µS/cm)",
  "Mean SC (µS/cm)",
  "Median SC (µS/cm)",
  "95th percentile SC (µS/cm)",
  "Highest SC (µS/cm)",
  "Median SC change from previous week (µS/cm)",
  "Median SC change from same week a year earlier (µS/cm)",
  "Lowest TDS estimate (mg/L)",
  "Mean TDS estimate (mg/L)",
  "Median TDS estimate (mg/L)",
  "95th percentile TDS estimate (mg/L)",
  "Highest TDS estimate (mg/L)",
  "Mean temperature (°C)",
  "Time above upper SC threshold (%)",
  "Upper SC threshold (µS/cm)",
  "Exceedance events",
  "Exceedance events by outcome",
  "Grade",
  "Approved",
  "Long-term trend",
  "Sen's slope (µS/cm per year)",
  "Mann–Kendall p-value",
] as const;

const text = (v: number | null | undefined) => (v === null || v === undefined || !Number.isFinite(v) ? "" : String(v));

export async function loader({ request, params }: Route.LoaderArgs) {
  await requireUser(request, { roles: READ_ROLES });
  if (!parseWeekKey(params.week)) throw data({ error: "No such week." }, { status: 404 });
  const table = await loadWeekTable(params.week);
  const preamble = [
    `# ${getEnv().ORG_NAME}: weekly site summary, ${table.label} (Monday 00:00 to Sunday 24:00 at each site's clock)`,
    "# SC = specific conductance at the site's reference temperature. TDS values are screening estimates; local regulations and accredited laboratories govern.",
    "# Quality-flagged readings are counted as received but left out of every statistic. Empty cell = no figure.",
  ];
  const lines = [...preamble.map((l) => csvSafeCell(l)), toCsvLine(TABLE_COLUMNS)];
  for (const r of table.rows) {
    const f = r.figures;
    const upper = f?.thresholds.find((t) => t.parameter === "sc25" && t.bound === "upper") ?? null;
    const cells = [
      r.code,
      r.name,
      table.key,
      table.week,
      WEEK_STATUS_LABELS[r.status],
      text(f?.readings),
      text(f?.readingsExcluded),
      text(f?.readingsExpected),
      text(f?.completeness === null || f?.completeness === undefined ? null : f.completeness * 100),
      text(f?.sc25.min),
      text(f?.sc25.mean),
      text(f?.sc25.median),
      text(f?.sc25.p95),
      text(f?.sc25.max),
      text(r.changeFromPrevious.sc25Median?.absolute),
      text(r.changeFromLastYear.sc25Median?.absolute),
      text(f?.tds.min),
      text(f?.tds.mean),
      text(f?.tds.median),
      text(f?.tds.p95),
      text(f?.tds.max),
      text(f?.temperatureMean),
      text(upper?.share === null || upper?.share === undefined ? null : upper.share * 100),
      text(upper?.value),
      text(f?.eventsTotal),
      f ? Object.entries(f.events).sort().map(([k, v]) => `${k}: ${v}`).join("; ") : "",
      f?.grade ?? "",
      f?.approved === true ? "yes" : f?.approved === false ? "no" : "",
      TREND_LABELS[r.trend.direction],
      text(r.trend.slopePerYear),
      text(r.trend.pValue),
    ];
    lines.push(toCsvLine(cells.map((c) => csvSafeCell(c))));
  }
  return new Response("\uFEFF" + lines.join("\r\n") + "\r\n", {
    headers: {
      "Content-Type": "text/csv; charset=utf-8",
      "Content-Disposition": `attachment; filename="weekly-summary-${table.key}.csv"`,
      "Cache-Control": "private, no-store",
    },
  });
}
