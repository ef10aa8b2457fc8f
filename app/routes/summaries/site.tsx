import { data, Link } from "react-router";
import type { Route } from "./+types/site";
import { approvalText, eventsSummary, num } from "#app/components/summaries/format.ts";
import { SeriesSvg } from "#app/components/summaries/series-svg.tsx";
import { WeekStatusMark } from "#app/components/summaries/week-status-mark.tsx";
import { WeekSparkline, weekSparklineLabel } from "#app/components/summaries/week-sparkline.tsx";
import { formatPValue, formatSlope, TREND_LABELS } from "#app/lib/series/trend.ts";
import { gradeText, percentText } from "#app/lib/series/week-status.ts";
import { addDays, weekLabel } from "#app/lib/series/weeks.ts";
import { loadSiteSummary, resolveWeek } from "#app/models/summary-read.server.ts";
import { requireUser } from "#app/utils/auth.server.ts";
import { READ_ROLES } from "#app/utils/permissions.ts";
import { ScreeningCaution } from "./+shared/caution.tsx";

export const meta: Route.MetaFunction = ({ data }) => [{ title: `${data ? `${data.summary.site.code} ${data.summary.site.name} · ` : ""}Weekly summary · Ripplemark` }];

const WEEKS_SHOWN = 26;

export async function loader({ request, params }: Route.LoaderArgs) {
  await requireUser(request, { roles: READ_ROLES });
  const url = new URL(request.url);
  const week = await resolveWeek(url.searchParams.get("week"));
  const summary = await loadSiteSummary(params.siteCode, week.week, WEEKS_SHOWN);
  if (!summary) throw data("No such site.", { status: 404 });
  return { week, summary };
}

export default function SiteSummary({ loaderData }: Route.ComponentProps) {
  const { week, summary } = loaderData;
  const { site, trend } = summary;
  const reportFrom = addDays(week.week, -7 * 11);
  const reportTo = addDays(week.week, 6);
  return (
    <div className="space-y-6">
      <div>
        <p className="text-sm font-semibold text-ink-700">
          <Link to={`/summaries?week=${week.key}`} className="underline">Weekly summaries</Link> · {week.label}
        </p>
        <h1>
          {site.code} {site.name}
        </h1>
      </div>

      <section aria-labelledby="trend-title" className="card space-y-3">
        <h2 id="trend-title">Long-term trend of weekly median specific conductance</h2>
        <p data-testid="trend-verdict">
          <strong>{TREND_LABELS[trend.direction]}</strong>
          {trend.direction !== "too-few" ? (
            <>
              {" "}— Sen's slope {formatSlope(trend.slopePerYear)}, Mann–Kendall {formatPValue(trend.pValue)}, {trend.n} weeks
            </>
          ) : (
            <> — {trend.n} weekly medians so far; the test needs at least 40.</>
          )}
        </p>
        <SeriesSvg
          points={summary.trendSeries}
          trendLine={trend.line}
          unit="µS/cm"
          timeZone={site.time_zone}
          label={`Weekly median specific conductance at ${site.name} over up to three years, with the Sen's slope line when there are enough weeks. ${TREND_LABELS[trend.direction]}.`}
        />
        <p className="text-sm text-ink-700">Solid line: weekly medians. Dashed line: Sen's slope through them.</p>
      </section>

      <div className="flex flex-wrap gap-2 no-print">
        <Link className="btn-quiet" to={`/reports/site?site=${encodeURIComponent(site.code)}&from=${reportFrom}&to=${reportTo}`}>
          Report on the last 12 weeks
        </Link>
      </div>

      <section aria-labelledby="weeks-title" className="space-y-2">
        <h2 id="weeks-title">Week by week</h2>
        <div className="overflow-x-auto rounded-lg border border-ink-100 bg-white">
          <table className="data-table">
            <caption className="px-3 pt-2 text-left text-sm text-ink-700">
              The {WEEKS_SHOWN} weeks up to {weekLabel(week.week)}, newest first. Specific conductance in µS/cm, TDS estimate in mg/L.
            </caption>
            <thead>
              <tr>
                <th scope="col">Week</th>
                <th scope="col">Status</th>
                <th scope="col">Daily medians</th>
                <th scope="col" className="text-right">Median SC</th>
                <th scope="col" className="text-right">95th percentile SC</th>
                <th scope="col" className="text-right">Highest SC</th>
                <th scope="col" className="text-right">Median TDS estimate</th>
                <th scope="col" className="text-right">Mean temperature (°C)</th>
                <th scope="col" className="text-right">Completeness</th>
                <th scope="col" className="text-right">Events</th>
                <th scope="col">Grade</th>
                <th scope="col">Approval</th>
              </tr>
            </thead>
            <tbody>
              {summary.weeks.map((w) => (
                <tr key={w.week}>
                  <th scope="row" className="border-b border-ink-100 whitespace-nowrap">
                    <Link className="underline" to={`/summaries?week=${w.key}`}>
                      {weekLabel(w.week)}
                    </Link>
                  </th>
                  <td>
                    <WeekStatusMark status={w.status} className="whitespace-nowrap" />
                  </td>
                  <td>
                    <WeekSparkline medians={w.figures.dailySc25Medians} label={weekSparklineLabel(site.name, w.figures.dailySc25Medians)} />
                  </td>
                  <td className="text-right font-semibold">{num(w.figures.sc25.median)}</td>
                  <td className="text-right">{num(w.figures.sc25.p95)}</td>
                  <td className="text-right">{num(w.figures.sc25.max)}</td>
                  <td className="text-right">{num(w.figures.tds.median)}</td>
                  <td className="text-right">{num(w.figures.temperatureMean, 1)}</td>
                  <td className="text-right">{percentText(w.figures.completeness, 0)}</td>
                  <td className="text-right">{eventsSummary(w.figures.events, w.figures.eventsTotal)}</td>
                  <td>{gradeText(w.figures.grade)}</td>
                  <td>{approvalText(w.figures.approved)}</td>
                </tr>
              ))}
            </tbody>
          </table>
        </div>
        {summary.weeks.length === 0 ? <p>No summarised weeks for this site yet.</p> : null}
      </section>
      <ScreeningCaution />
    </div>
  );
}
