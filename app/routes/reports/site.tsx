import { Form, Link } from "react-router";
import { z } from "zod";
import type { Route } from "./+types/site";
import { approvalText, num } from "#app/components/summaries/format.ts";
import { SeriesSvg } from "#app/components/summaries/series-svg.tsx";
import { WeekStatusMark } from "#app/components/summaries/week-status-mark.tsx";
import { formatPValue, formatSlope, TREND_LABELS } from "#app/lib/series/trend.ts";
import { gradeText, percentText } from "#app/lib/series/week-status.ts";
import { addDays, dateToUtcMs, weekLabel } from "#app/lib/series/weeks.ts";
import { toWallTime } from "#app/lib/zoned-time.ts";
import { loadSiteReport, REPORT_MAX_DAYS } from "#app/models/site-report.server.ts";
import { resolveWeek } from "#app/models/summary-read.server.ts";
import { requireUser } from "#app/utils/auth.server.ts";
import { db } from "#app/utils/db.server.ts";
import { getEnv } from "#app/utils/env.server.ts";
import { READ_ROLES } from "#app/utils/permissions.ts";
import { ScreeningCaution } from "../summaries/+shared/caution.tsx";
import { PrintButton } from "../summaries/+shared/print-button.tsx";
import "../summaries/+shared/print.css";

// A site's report over any run of whole days: statistics, the chart of daily medians with the daily
// range, the weeks inside the range, exceedance events and periods of record. Printable (A4).

export const meta: Route.MetaFunction = ({ data }) => [
  { title: data?.report ? `${data.report.site.code} report ${data.report.fromDate} to ${data.report.toDate} · Ripplemark` : "Site report · Ripplemark" },
];

const date = (what: string) =>
  z.string({ error: `Enter the ${what} date` }).refine((v) => dateToUtcMs(v) !== null, `Enter the ${what} date as YYYY-MM-DD`);

const querySchema = z
  .object({ site: z.string({ error: "Choose a site" }).min(1, "Choose a site").max(40), from: date("first"), to: date("last") })
  .refine((q) => q.from <= q.to, { path: ["to"], message: "The last day must not be before the first" })
  .refine((q) => (dateToUtcMs(q.to)! - dateToUtcMs(q.from)!) / 86_400_000 < REPORT_MAX_DAYS, { path: ["to"], message: `A report covers at most ${REPORT_MAX_DAYS} days` });

export async function loader({ request }: Route.LoaderArgs) {
  await requireUser(request, { roles: READ_ROLES });
  const url = new URL(request.url);
  const sites = await db.selectFrom("site").select(["code", "name"]).orderBy("code").execute();
  const week = await resolveWeek(null);
  const defaults = { site: sites[0]?.code ?? "", from: addDays(week.week, -7 * 3), to: addDays(week.week, 6) };
  const given = Object.fromEntries(["site", "from", "to"].map((k) => [k, url.searchParams.get(k) ?? undefined]).filter(([, v]) => v !== undefined && v !== ""));
  if (!Object.keys(given).length) return { sites, values: defaults, errors: null, report: null, orgName: getEnv().ORG_NAME };
  const parsed = querySchema.safeParse(given);
  const values = { ...defaults, ...given };
  if (!parsed.success) return { sites, values, errors: z.flattenError(parsed.error).fieldErrors, report: null, orgName: getEnv().ORG_NAME };
  const report = await loadSiteReport(parsed.data.site, parsed.data.from, parsed.data.to);
  if (!report) return { sites, values, errors: { site: ["No such site"] }, report: null, orgName: getEnv().ORG_NAME };
  return { sites, values, errors: null, report, orgName: getEnv().ORG_NAME };
}

function FieldError({ id, errors }: { id: string; errors?: string[] }) {
  return errors?.length ? (
    <p id={id} className="field-error">
      {errors[0]}
    </p>
  ) : null;
}

export default function SiteReportPage({ loaderData }: Route.ComponentProps) {
  const { sites, values, errors, report, orgName } = loaderData;
  const e = (errors ?? {}) as Record<string, string[] | undefined>;
  return (
    <div className="report-doc space-y-5">
      <div className="no-print space-y-3">
        <h1>Site report</h1>
        <Form method="get" className="flex flex-wrap items-end gap-3" aria-label="Choose the site and days">
          <label>
            <span className="field-label">Site</span>
            <select className="field-input" name="site" defaultValue={values.site} aria-invalid={e.site ? true : undefined} aria-describedby={e.site ? "site-error" : undefined}>
              {sites.map((s) => (
                <option key={s.code} value={s.code}>
                  {s.code} {s.name}
                </option>
              ))}
            </select>
            <FieldError id="site-error" errors={e.site} />
          </label>
          <label>
            <span className="field-label">First day</span>
            <input className="field-input" type="date" name="from" defaultValue={values.from} aria-invalid={e.from ? true : undefined} aria-describedby={e.from ? "from-error" : undefined} />
            <FieldError id="from-error" errors={e.from} />
          </label>
          <label>
            <span className="field-label">Last day</span>
            <input className="field-input" type="date" name="to" defaultValue={values.to} aria-invalid={e.to ? true : undefined} aria-describedby={e.to ? "to-error" : undefined} />
            <FieldError id="to-error" errors={e.to} />
          </label>
          <button className="btn-quiet" type="submit">Make the report</button>
          {report ? <PrintButton /> : null}
        </Form>
      </div>
      {report ? <Report report={report} orgName={orgName} /> : null}
    </div>
  );
}

type ReportData = NonNullable<Route.ComponentProps["loaderData"]["report"]>;

function Report({ report, orgName }: { report: ReportData; orgName: string }) {
  const { site } = report;
  const tz = site.time_zone;
  const when = (d: Date | string) => toWallTime(new Date(d), tz).replace("T", " ");
  const upper = report.thresholds.find((t) => t.parameter === "sc25" && t.bound === "upper")?.value ?? null;
  const span = `${report.fromDate} to ${report.toDate}`;
  return (
    <article aria-labelledby="report-title">
      <section className="report-section space-y-3">
        <header className="report-header">
          <span className="org">{orgName}</span>
          <span>Site report · {site.code} · {span}</span>
        </header>
        <h2 id="report-title" className="text-2xl font-bold">
          {site.code} {site.name}
        </h2>
        <p className="text-sm text-ink-700">
          {span} (whole days at the site's clock, {tz}). {num(report.readings)} readings received
          {report.expected ? ` of ${num(report.expected)} expected (${percentText(report.completeness, 0)})` : ""}; {num(report.excluded)} excluded by a quality flag.
        </p>
        <table className="data-table keep-together" data-testid="report-stats">
          <caption className="text-left text-sm text-ink-700">Statistics of every reading in the range</caption>
          <thead>
            <tr>
              <th scope="col">Parameter</th>
              <th scope="col" className="text-right">Readings</th>
              <th scope="col" className="text-right">Lowest</th>
              <th scope="col" className="text-right">Mean</th>
              <th scope="col" className="text-right">Median</th>
              <th scope="col" className="text-right">95th percentile</th>
              <th scope="col" className="text-right">Highest</th>
            </tr>
          </thead>
          <tbody>
            <tr>
              <th scope="row" className="border-b border-ink-100">Specific conductance at {site.reference_c} °C (µS/cm)</th>
              <td className="text-right">{num(report.sc25.count)}</td>
              <td className="text-right">{num(report.sc25.min)}</td>
              <td className="text-right">{num(report.sc25.mean)}</td>
              <td className="text-right">{num(report.sc25.median)}</td>
              <td className="text-right">{num(report.sc25.p95)}</td>
              <td className="text-right">{num(report.sc25.max)}</td>
            </tr>
            <tr>
              <th scope="row" className="border-b border-ink-100">TDS estimate (mg/L)</th>
              <td className="text-right">{num(report.tds.count)}</td>
              <td className="text-right">{num(report.tds.min)}</td>
              <td className="text-right">{num(report.tds.mean)}</td>
              <td className="text-right">{num(report.tds.median)}</td>
              <td className="text-right">{num(report.tds.p95)}</td>
              <td className="text-right">{num(report.tds.max)}</td>
            </tr>
            <tr>
              <th scope="row" className="border-b border-ink-100">Temperature (°C)</th>
              <td className="text-right">—</td>
              <td className="text-right">{num(report.temperature.min, 1)}</td>
              <td className="text-right">{num(report.temperature.mean, 1)}</td>
              <td className="text-right">—</td>
              <td className="text-right">—</td>
              <td className="text-right">{num(report.temperature.max, 1)}</td>
            </tr>
          </tbody>
        </table>
        {report.thresholds.length ? (
          <ul className="text-sm">
            {report.thresholds.map((t) => (
              <li key={`${t.parameter}-${t.bound}`}>
                Time {t.bound === "upper" ? "above" : "below"} the {t.parameter === "sc25" ? "specific conductance" : t.parameter} threshold of {num(t.value, t.parameter === "sc25" ? 0 : 1)}: {percentText(t.share)}
              </li>
            ))}
          </ul>
        ) : (
          <p className="text-sm">No display thresholds are set for this site.</p>
        )}
        <figure className="keep-together">
          <SeriesSvg
            points={report.daily.map((d) => [dateToUtcMs(d.day)! + 43_200_000, d.median])}
            band={report.daily.map((d) => [dateToUtcMs(d.day)! + 43_200_000, d.min, d.max])}
            trendLine={report.trend.line}
            threshold={upper}
            unit="µS/cm"
            timeZone={tz}
            label={`Daily median specific conductance at ${site.name} from ${span}, with each day's lowest and highest reading shaded${upper !== null ? ` and the threshold of ${upper} µS/cm dashed` : ""}.`}
          />
          <figcaption className="text-sm text-ink-700">
            Line: daily median specific conductance. Shading: each day's lowest to highest reading. Red dashes: upper threshold. Brown dashes: Sen's slope of weekly medians when there are enough weeks.
          </figcaption>
        </figure>
        <p className="text-sm">
          Trend of weekly medians in the range: <strong>{TREND_LABELS[report.trend.direction]}</strong>
          {report.trend.direction !== "too-few" ? ` — ${formatSlope(report.trend.slopePerYear)}, ${formatPValue(report.trend.pValue)}, ${report.trend.n} weeks` : ` (${report.trend.n} whole weeks; the test needs at least 40)`}
        </p>
        <ScreeningCaution />
      </section>

      <section className="report-section space-y-3" aria-labelledby="report-weeks">
        <header className="report-header">
          <span className="org">{orgName}</span>
          <span>Site report · {site.code} · {span}</span>
        </header>
        <h2 id="report-weeks">Whole weeks in the range</h2>
        {report.weeks.length ? (
          <table className="data-table">
            <thead>
              <tr>
                <th scope="col">Week</th>
                <th scope="col">Status</th>
                <th scope="col" className="text-right">Median SC</th>
                <th scope="col" className="text-right">95th pct. SC</th>
                <th scope="col" className="text-right">Highest SC</th>
                <th scope="col" className="text-right">Median TDS est.</th>
                <th scope="col" className="text-right">Completeness</th>
                <th scope="col" className="text-right">Events</th>
                <th scope="col">Grade</th>
                <th scope="col">Approval</th>
              </tr>
            </thead>
            <tbody>
              {report.weeks.map((w) => (
                <tr key={w.week}>
                  <th scope="row" className="border-b border-ink-100">{weekLabel(w.week)}</th>
                  <td>
                    <WeekStatusMark status={w.status} />
                  </td>
                  <td className="text-right">{num(w.sc25_median)}</td>
                  <td className="text-right">{num(w.sc25_p95)}</td>
                  <td className="text-right">{num(w.sc25_max)}</td>
                  <td className="text-right">{num(w.tds_median)}</td>
                  <td className="text-right">{percentText(w.completeness, 0)}</td>
                  <td className="text-right">{w.events_total}</td>
                  <td>{gradeText(w.grade)}</td>
                  <td>{approvalText(w.approved)}</td>
                </tr>
              ))}
            </tbody>
          </table>
        ) : (
          <p>No whole week of the range has a summary.</p>
        )}

        <h2>Exceedance events</h2>
        {report.events.length ? (
          <table className="data-table">
            <thead>
              <tr>
                <th scope="col">Began</th>
                <th scope="col">Ended</th>
                <th scope="col">Parameter</th>
                <th scope="col" className="text-right">Peak</th>
                <th scope="col">Outcome</th>
                <th scope="col">State</th>
              </tr>
            </thead>
            <tbody>
              {report.events.map((ev, i) => (
                <tr key={i}>
                  <td>{when(ev.startedAt)}</td>
                  <td>{ev.endedAt ? when(ev.endedAt) : "still open"}</td>
                  <td>{ev.parameter ?? "—"}</td>
                  <td className="text-right">{num(ev.peakValue)}</td>
                  <td>{ev.outcome.replaceAll("-", " ")}</td>
                  <td>{ev.status ?? "—"}</td>
                </tr>
              ))}
            </tbody>
          </table>
        ) : (
          <p>No exceedance events began in the range.</p>
        )}

        <h2>Periods of record</h2>
        {report.periods.length ? (
          <table className="data-table">
            <thead>
              <tr>
                <th scope="col">From</th>
                <th scope="col">To</th>
                <th scope="col">Grade</th>
                <th scope="col">Approval</th>
              </tr>
            </thead>
            <tbody>
              {report.periods.map((p, i) => (
                <tr key={i}>
                  <td>{when(p.startsAt)}</td>
                  <td>{new Date(p.endsAt).getTime() > 8e15 ? "open" : when(p.endsAt)}</td>
                  <td>{gradeText(p.grade)}</td>
                  <td>{approvalText(p.approved)}</td>
                </tr>
              ))}
            </tbody>
          </table>
        ) : (
          <p>No period of record overlaps the range yet.</p>
        )}
        <p className="no-print text-sm">
          <Link className="underline" to={`/summaries/sites/${encodeURIComponent(site.code)}`}>
            Weekly summary of {site.code}
          </Link>
        </p>
      </section>
    </article>
  );
}
