import { Link } from "react-router";
import { formatPValue, formatSlope, TREND_LABELS, type TrendDirection } from "#app/lib/series/trend.ts";
import { gradeText, percentText } from "#app/lib/series/week-status.ts";
import type { SiteWeekRow } from "#app/models/summary-read.server.ts";
import { approvalText, changeShort, changeWords, eventsSummary, num } from "./format.ts";
import { WeekStatusMark } from "./week-status-mark.tsx";
import { WeekSparkline, weekSparklineLabel } from "./week-sparkline.tsx";

// The week at every site in one table. `compact` (the printed report) leaves out the links' extra
// words and splits nothing; the page scrolls it sideways on narrow screens.

const TREND_ARROW: Record<TrendDirection, string> = { rising: "↗", falling: "↘", "no-trend": "→", "too-few": "·" };

function thresholdText(row: SiteWeekRow) {
  const t = row.figures?.thresholds ?? [];
  if (!t.length) return "no thresholds";
  return t
    .map((x) => `${x.parameter === "sc25" ? "SC" : x.parameter === "temperature" ? "temp." : x.parameter} ${x.bound === "upper" ? ">" : "<"} ${num(x.value, x.parameter === "temperature" ? 1 : 0)}: ${percentText(x.share)}`)
    .join("; ");
}

export function WeekTable({ rows, weekKey, previousLabel, lastYearLabel, compact = false }: {
  rows: SiteWeekRow[];
  weekKey: string;
  previousLabel: string;
  lastYearLabel: string;
  compact?: boolean;
}) {
  return (
    <div className={compact ? "" : "overflow-x-auto rounded-lg border border-ink-100 bg-white"}>
      <table className="data-table summary-table" data-testid="week-table">
        <caption className="px-3 pt-2 text-left text-sm text-ink-700">
          Every site for the week: specific conductance (SC) at the site's reference temperature in µS/cm, TDS estimate in mg/L,
          temperature in °C. Changes compare medians with {previousLabel} and with {lastYearLabel}.
        </caption>
        <thead>
          <tr>
            <th scope="col">Site</th>
            <th scope="col">Status</th>
            <th scope="col">Daily medians</th>
            <th scope="col" className="text-right">Median SC</th>
            <th scope="col" className="text-right">Change from last week</th>
            <th scope="col" className="text-right">Change from a year ago</th>
            <th scope="col" className="text-right">Lowest SC</th>
            <th scope="col" className="text-right">Mean SC</th>
            <th scope="col" className="text-right">95th percentile SC</th>
            <th scope="col" className="text-right">Highest SC</th>
            <th scope="col" className="text-right">Median TDS estimate</th>
            <th scope="col" className="text-right">95th percentile TDS estimate</th>
            <th scope="col" className="text-right">Mean temperature</th>
            <th scope="col">Time beyond thresholds</th>
            <th scope="col" className="text-right">Completeness</th>
            <th scope="col" className="text-right">Exceedance events</th>
            <th scope="col">Grade</th>
            <th scope="col">Approval</th>
            <th scope="col">Long-term trend</th>
          </tr>
        </thead>
        <tbody>
          {rows.map((r) => {
            const f = r.figures;
            const upper = f?.thresholds.find((t) => t.parameter === "sc25" && t.bound === "upper")?.value ?? null;
            return (
              <tr key={r.siteId} data-site={r.code}>
                <th scope="row" className="border-b border-ink-100 whitespace-nowrap">
                  {compact ? (
                    <span>
                      {r.code} <span className="font-normal">{r.name}</span>
                    </span>
                  ) : (
                    <Link to={`/summaries/sites/${encodeURIComponent(r.code)}?week=${encodeURIComponent(weekKey)}`} className="text-lake-700 underline">
                      {r.code} <span className="font-normal">{r.name}</span>
                    </Link>
                  )}
                </th>
                <td>
                  <WeekStatusMark status={r.status} className="whitespace-nowrap" />
                  {r.reasons.length ? (
                    <ul className="mt-1 list-none text-xs text-ink-700">
                      {r.reasons.map((x) => (
                        <li key={x}>{x}</li>
                      ))}
                    </ul>
                  ) : null}
                </td>
                <td>{f ? <WeekSparkline medians={f.dailySc25Medians} threshold={upper} label={weekSparklineLabel(r.name, f.dailySc25Medians)} /> : "—"}</td>
                <td className="text-right font-semibold" data-cell="sc25-median">{num(f?.sc25.median)}</td>
                <td className="text-right" title={changeWords(r.changeFromPrevious.sc25Median, previousLabel)}>
                  {changeShort(r.changeFromPrevious.sc25Median)}
                </td>
                <td className="text-right" title={changeWords(r.changeFromLastYear.sc25Median, lastYearLabel)}>
                  {changeShort(r.changeFromLastYear.sc25Median)}
                </td>
                <td className="text-right" data-cell="sc25-min">{num(f?.sc25.min)}</td>
                <td className="text-right">{num(f?.sc25.mean)}</td>
                <td className="text-right" data-cell="sc25-p95">{num(f?.sc25.p95)}</td>
                <td className="text-right" data-cell="sc25-max">{num(f?.sc25.max)}</td>
                <td className="text-right">{num(f?.tds.median)}</td>
                <td className="text-right">{num(f?.tds.p95)}</td>
                <td className="text-right">{num(f?.temperatureMean, 1)}</td>
                <td className="text-sm">{f ? thresholdText(r) : "—"}</td>
                <td className="text-right" data-cell="completeness">
                  {percentText(f?.completeness ?? null, 0)}
                  {f && f.readingsExpected ? (
                    <span className="block text-xs text-ink-500">
                      {num(f.readings)} of {num(f.readingsExpected)}
                    </span>
                  ) : null}
                </td>
                <td className="text-right" data-cell="events">{f ? eventsSummary(f.events, f.eventsTotal) : "—"}</td>
                <td>{f ? gradeText(f.grade) : "—"}</td>
                <td>{approvalText(f?.approved)}</td>
                <td className="text-sm">
                  <span aria-hidden="true">{TREND_ARROW[r.trend.direction]} </span>
                  {TREND_LABELS[r.trend.direction]}
                  {r.trend.direction !== "too-few" ? (
                    <span className="block text-xs text-ink-700">
                      {formatSlope(r.trend.slopePerYear)}, {formatPValue(r.trend.pValue)}
                    </span>
                  ) : null}
                </td>
              </tr>
            );
          })}
        </tbody>
      </table>
    </div>
  );
}
