import { data, Link } from "react-router";
import type { Route } from "./+types/print";
import { approvalText, changeShort, eventsSummary, num } from "#app/components/summaries/format.ts";
import { SeriesSvg } from "#app/components/summaries/series-svg.tsx";
import { WeekStatusMark } from "#app/components/summaries/week-status-mark.tsx";
import { WeekSparkline, weekSparklineLabel } from "#app/components/summaries/week-sparkline.tsx";
import { formatPValue, formatSlope, TREND_LABELS } from "#app/lib/series/trend.ts";
import { gradeText, percentText, WEEK_STATUS_RANK } from "#app/lib/series/week-status.ts";
import { parseWeekKey, weekLabel } from "#app/lib/series/weeks.ts";
import { loadTrendSeries, loadWeekTable } from "#app/models/summary-read.server.ts";
import { requireUser } from "#app/utils/auth.server.ts";
import { getEnv } from "#app/utils/env.server.ts";
import { READ_ROLES } from "#app/utils/permissions.ts";
import { ScreeningCaution } from "./+shared/caution.tsx";
import { PrintButton } from "./+shared/print-button.tsx";
import "./+shared/print.css";

// The printable weekly report: a cover with what needs a look, the specific-conductance table, the
// data-quality table, and one trend chart per site; each section starts a new A4 page and carries
// the organisation's name and the week. Charts are server-rendered SVG, so they print sharp.

export const meta: Route.MetaFunction = ({ data }) => [{ title: data ? `${data.orgName} · weekly report · ${data.table.label}` : "Weekly report · Ripplemark" }];

export async function loader({ request, params }: Route.LoaderArgs) {
  await requireUser(request, { roles: READ_ROLES });
  if (!parseWeekKey(params.week)) throw data("No such week.", { status: 404 });
  const table = await loadWeekTable(params.week);
  const series = await loadTrendSeries(table.week);
  return { table, series, orgName: getEnv().ORG_NAME, printedAt: new Date().toISOString() };
}

function Header({ orgName, label, section }: { orgName: string; label: string; section: string }) {
  return (
    <header className="report-header">
      <span className="org">{orgName}</span>
      <span>
        Weekly site summary · {label} · {section}
      </span>
    </header>
  );
}

export default function WeeklyReport({ loaderData }: Route.ComponentProps) {
  const { table, series, orgName, printedAt } = loaderData;
  const needing = [...table.rows].filter((r) => r.status !== "steady").sort((a, b) => WEEK_STATUS_RANK[a.status] - WEEK_STATUS_RANK[b.status] || a.code.localeCompare(b.code));
  const prevLabel = weekLabel(table.previousWeek);
  return (
    <div className="report-doc mx-auto max-w-5xl p-6">
      <div className="no-print mb-4 flex flex-wrap items-center gap-3">
        <Link to={`/summaries?week=${table.key}`} className="btn-quiet">← Back to the week</Link>
        <PrintButton />
      </div>

      <section className="report-section" aria-labelledby="cover-title">
        <Header orgName={orgName} label={table.label} section="Overview" />
        <h1 id="cover-title">Weekly site summary</h1>
        <p className="text-lg">{table.label}</p>
        <p className="text-sm text-ink-700">
          Weeks run Monday 00:00 to Sunday 24:00 at each site's clock ({table.timeZone}). Printed {new Date(printedAt).toLocaleString("en-GB", { timeZone: table.timeZone, dateStyle: "long", timeStyle: "short" })}.
        </p>
        <h2 className="mt-4">Sites that need a look first</h2>
        {needing.length ? (
          <ul className="mt-2 space-y-2">
            {needing.map((r) => (
              <li key={r.siteId}>
                <strong>
                  {r.code} {r.name}
                </strong>{" "}
                — <WeekStatusMark status={r.status} />
                <ul className="ml-6 list-disc text-sm">
                  {r.reasons.map((x) => (
                    <li key={x}>{x}</li>
                  ))}
                </ul>
              </li>
            ))}
          </ul>
        ) : (
          <p>No site needs a look this week.</p>
        )}
        <div className="mt-4">
          <ScreeningCaution />
        </div>
      </section>

      <section className="report-section" aria-labelledby="sc-title">
        <Header orgName={orgName} label={table.label} section="Specific conductance" />
        <h2 id="sc-title">Specific conductance (µS/cm)</h2>
        <table className="data-table" data-testid="print-sc-table">
          <thead>
            <tr>
              <th scope="col">Site</th>
              <th scope="col">Status</th>
              <th scope="col">Daily medians</th>
              <th scope="col" className="text-right">Lowest</th>
              <th scope="col" className="text-right">Mean</th>
              <th scope="col" className="text-right">Median</th>
              <th scope="col" className="text-right">95th pct.</th>
              <th scope="col" className="text-right">Highest</th>
              <th scope="col" className="text-right">From last week</th>
              <th scope="col" className="text-right">From a year ago</th>
              <th scope="col" className="text-right">Time above SC threshold</th>
            </tr>
          </thead>
          <tbody>
            {table.rows.map((r) => {
              const f = r.figures;
              const upper = f?.thresholds.find((t) => t.parameter === "sc25" && t.bound === "upper") ?? null;
              return (
                <tr key={r.siteId} data-site={r.code}>
                  <th scope="row" className="border-b border-ink-100">
                    {r.code}
                    <span className="block font-normal">{r.name}</span>
                  </th>
                  <td>
                    <WeekStatusMark status={r.status} />
                  </td>
                  <td>{f ? <WeekSparkline medians={f.dailySc25Medians} threshold={upper?.value ?? null} label={weekSparklineLabel(r.name, f.dailySc25Medians)} width={100} /> : "—"}</td>
                  <td className="text-right">{num(f?.sc25.min)}</td>
                  <td className="text-right">{num(f?.sc25.mean)}</td>
                  <td className="text-right font-semibold">{num(f?.sc25.median)}</td>
                  <td className="text-right">{num(f?.sc25.p95)}</td>
                  <td className="text-right">{num(f?.sc25.max)}</td>
                  <td className="text-right">{changeShort(r.changeFromPrevious.sc25Median)}</td>
                  <td className="text-right">{changeShort(r.changeFromLastYear.sc25Median)}</td>
                  <td className="text-right">{upper ? `${percentText(upper.share)} (> ${num(upper.value)})` : "no threshold"}</td>
                </tr>
              );
            })}
          </tbody>
        </table>
        <p className="mt-2 text-sm text-ink-700">Changes compare medians with {prevLabel} and with the same ISO week a year earlier.</p>
      </section>

      <section className="report-section" aria-labelledby="data-title">
        <Header orgName={orgName} label={table.label} section="Data and TDS estimate" />
        <h2 id="data-title">TDS estimate, temperature and the state of the record</h2>
        <table className="data-table" data-testid="print-data-table">
          <thead>
            <tr>
              <th scope="col">Site</th>
              <th scope="col" className="text-right">Median TDS estimate (mg/L)</th>
              <th scope="col" className="text-right">95th pct. TDS estimate (mg/L)</th>
              <th scope="col" className="text-right">Mean temperature (°C)</th>
              <th scope="col" className="text-right">Completeness</th>
              <th scope="col" className="text-right">Exceedance events</th>
              <th scope="col">Grade</th>
              <th scope="col">Approval</th>
              <th scope="col">Long-term trend</th>
            </tr>
          </thead>
          <tbody>
            {table.rows.map((r) => {
              const f = r.figures;
              return (
                <tr key={r.siteId}>
                  <th scope="row" className="border-b border-ink-100">{r.code}</th>
                  <td className="text-right">{num(f?.tds.median)}</td>
                  <td className="text-right">{num(f?.tds.p95)}</td>
                  <td className="text-right">{num(f?.temperatureMean, 1)}</td>
                  <td className="text-right">
                    {percentText(f?.completeness ?? null, 0)}
                    {f?.readingsExpected ? <span className="block text-xs">{num(f.readings)} of {num(f.readingsExpected)}</span> : null}
                  </td>
                  <td className="text-right">{f ? eventsSummary(f.events, f.eventsTotal) : "—"}</td>
                  <td>{f ? gradeText(f.grade) : "—"}</td>
                  <td>{approvalText(f?.approved)}</td>
                  <td>
                    {TREND_LABELS[r.trend.direction]}
                    {r.trend.direction !== "too-few" ? <span className="block text-xs">{formatSlope(r.trend.slopePerYear)}, {formatPValue(r.trend.pValue)}</span> : null}
                  </td>
                </tr>
              );
            })}
          </tbody>
        </table>
        <div className="mt-3">
          <ScreeningCaution />
        </div>
      </section>

      <section className="report-section" aria-labelledby="charts-title">
        <Header orgName={orgName} label={table.label} section="Trends" />
        <h2 id="charts-title">Weekly median specific conductance, up to three years</h2>
        <p className="text-sm text-ink-700">Solid line: weekly medians (µS/cm). Dashed line: Sen's slope where the Mann–Kendall test had enough weeks.</p>
        <div className="site-charts mt-2">
          {table.rows.map((r) => (
            <figure key={r.siteId} className="site-chart">
              <figcaption className="text-sm font-semibold">
                {r.code} {r.name} — {TREND_LABELS[r.trend.direction]}
                {r.trend.direction !== "too-few" ? ` (${formatSlope(r.trend.slopePerYear)})` : ""}
              </figcaption>
              <SeriesSvg
                points={series[r.siteId] ?? []}
                trendLine={r.trend.line}
                unit="µS/cm"
                timeZone={r.timeZone}
                width={460}
                height={170}
                label={`Weekly median specific conductance at ${r.name}: ${TREND_LABELS[r.trend.direction]}.`}
              />
            </figure>
          ))}
        </div>
      </section>
    </div>
  );
}
