import { data, Link } from "react-router";
import type { Route } from "./+types/site";
import { SiteCharts } from "#app/components/charts/site-charts.tsx";
import { fullTime } from "#app/components/charts/time-format.ts";
import { RangePicker } from "#app/components/range-picker.tsx";
import { StatsTable } from "#app/components/stats-table.tsx";
import { StatusMark, STATUS_TEXT_CLASS } from "#app/components/status-mark.tsx";
import { formatAge } from "#app/lib/quality/site-status.ts";
import { formatValue } from "#app/lib/series/parameters.ts";
import { gradeBand } from "#app/models/record-period.server.ts";
import { loadSiteDashboard } from "#app/models/site-dashboard.server.ts";
import { requireUser } from "#app/utils/auth.server.ts";
import { ANY_ROLE, REVIEW_ROLES, roleAllowed } from "#app/utils/permissions.ts";
import { SITE_KIND_LABELS } from "#app/utils/site-labels.ts";
import { LabSampleList, ReadingSummary } from "./+shared/site-parts.tsx";

export const meta: Route.MetaFunction = ({ data }) => [{ title: `${data?.site.code ?? "Site"} · ${data?.site.name ?? ""} · Ripplemark` }];

export async function loader({ request, params }: Route.LoaderArgs) {
  const user = await requireUser(request, { roles: ANY_ROLE });
  const page = await loadSiteDashboard(params.siteCode, new URL(request.url).searchParams);
  if (!page) throw data("No such site.", { status: 404 });
  // Periods of record with their grades (the band under the charts), and the uncorrected values of
  // specific conductance beside the corrected ones on request (?uncorrected=1).
  const url = new URL(request.url);
  const showUncorrected = url.searchParams.get("uncorrected") === "1";
  if (showUncorrected) url.searchParams.delete("uncorrected");
  else url.searchParams.set("uncorrected", "1");
  const grades = await gradeBand(page.site.id, page.range.fromMs, page.range.toMs);
  return { ...page, canEditSettings: roleAllowed(user.role, REVIEW_ROLES), nowMs: Date.now(), grades, showUncorrected, uncorrectedToggle: url.pathname + url.search };
}

export default function SitePage({ loaderData }: Route.ComponentProps) {
  const { site, latest, status, thresholds, range, stats, charted, labSamples, canEditSettings, nowMs, tdsWarning, grades, showUncorrected, uncorrectedToggle } = loaderData;
  const exportHref = `/api/sites/${site.id}/export.csv?${new URLSearchParams({ from: new Date(range.fromMs).toISOString(), to: new Date(range.toMs).toISOString() })}`;
  const shownFrom = fullTime(range.fromMs, site.timeZone);
  const shownTo = fullTime(range.toMs, site.timeZone);
  const showsEstimates = charted.includes("tds") || charted.includes("salinity");
  return (
    <div className="space-y-5">
      <header className="flex flex-wrap items-start justify-between gap-3">
        <div>
          <p className="text-sm font-semibold text-ink-500">
            <Link to="/" className="text-lake-700 underline">Overview</Link> · {site.code} · {SITE_KIND_LABELS[site.kind]}
          </p>
          <h1 className="mt-0.5">{site.name}</h1>
          <p className={`mt-1 ${STATUS_TEXT_CLASS[status.status]}`}>
            <StatusMark status={status.status} />
            {status.reasons.length ? <span className="ml-2 font-normal text-ink-700">{status.reasons.join(" ")}</span> : null}
          </p>
          {latest ? (
            <p className="mt-1 text-sm text-ink-700">
              Latest reading {fullTime(latest.timeMs, site.timeZone)} ({formatAge(nowMs - latest.timeMs)}):{" "}
              {formatValue("sc25", latest.sc25)} at {site.referenceC} °C, {formatValue("temperature", latest.temperature)}
            </p>
          ) : (
            <p className="mt-1 text-sm text-ink-700">No readings yet.</p>
          )}
        </div>
        <nav aria-label="Site actions" className="flex flex-wrap gap-2">
          <Link className="btn-quiet" to={`/compare?sites=${encodeURIComponent(site.code)}`}>Compare with other sites</Link>
          {canEditSettings ? <Link className="btn-quiet" to={`/sites/${site.code}/settings`}>Site settings</Link> : null}
          <a className="btn" href={exportHref} download>
            Download readings (CSV)
          </a>
        </nav>
      </header>

      <section className="card space-y-2" aria-labelledby="derivation-title">
        <h2 id="derivation-title" className="text-base">How the values were derived</h2>
        <p>
          Specific conductance is raw conductivity corrected to {site.referenceC} °C by <strong>{site.compensation}</strong>. TDS is
          estimated as {site.tdsFactor} × specific conductance; salinity by the practical salinity scale (PSS-78). Raw values are
          kept unchanged beside the derived ones.
        </p>
        {tdsWarning ? <p className="caution">{tdsWarning}.</p> : null}
        {showsEstimates ? (
          <p className="caution">
            TDS and salinity here are screening estimates from conductivity. Accredited laboratory analyses and local regulations govern
            any decision about drinking water, discharges or public health.
          </p>
        ) : null}
      </section>

      <section aria-labelledby="charts-title" className="space-y-3">
        <h2 id="charts-title">Readings</h2>
        <RangePicker
          preset={range.preset}
          fromWall={range.from}
          toWall={range.to}
          timeZone={site.timeZone}
          anchorNote={range.preset !== "custom" && range.anchoredToData ? `Ending at the latest reading (${fullTime(range.anchorMs - 60_000, site.timeZone)}).` : undefined}
        />
        {range.problem ? <p role="alert" className="caution">{range.problem}</p> : null}
        <p className="text-sm text-ink-700" data-testid="shown-range">
          Showing {shownFrom} to {shownTo}. Zoom with the mouse wheel or by pinching inside a chart, or drag the slider under the charts:
          finer detail is fetched for the zoomed stretch. Shaded stretches are exceedance events found by the alert rules; dash-dotted lines are the rules' thresholds.
        </p>
        {charted.includes("sc25") ? (
          <p className="text-sm">
            Specific conductance is shown {showUncorrected ? "with" : "after"} field-visit corrections{showUncorrected ? " and, dashed, the values before them" : ""}.{" "}
            <Link to={uncorrectedToggle} className="text-lake-700 underline" preventScrollReset>
              {showUncorrected ? "Hide the uncorrected values" : "Show uncorrected"}
            </Link>
            {canEditSettings ? (
              <>
                {" · "}
                <Link to={`/sites/${site.code}/corrections`} className="text-lake-700 underline">Corrections and approval</Link>
              </>
            ) : null}
          </p>
        ) : null}
        {charted.length ? (
          <SiteCharts
            siteId={site.id}
            parameters={showUncorrected && charted.includes("sc25") ? [...charted, "sc25_uncorrected"] : charted}
            grades={grades}
            range={{ fromMs: range.fromMs, toMs: range.toMs }}
            thresholds={thresholds}
            events={loaderData.alertEvents}
            ruleLines={loaderData.ruleLines}
            labSamples={labSamples}
            referenceC={site.referenceC}
            timeZone={site.timeZone}
            describedBy="stats-table"
          />
        ) : (
          <p className="card text-ink-700">No readings in this range.</p>
        )}
      </section>

      <section aria-labelledby="stats-title" className="space-y-2">
        <h2 id="stats-title">Statistics of the shown range</h2>
        <ReadingSummary stats={stats} loggers={loaderData.loggers} timeZone={site.timeZone} />
        {stats.parameters.length ? (
          <StatsTable
            id="stats-table"
            rows={stats.parameters}
            referenceC={site.referenceC}
            caption={`Every reading from ${shownFrom} to ${shownTo}. Time beyond a threshold is weighted by how long each reading stands for.`}
          />
        ) : null}
      </section>

      <LabSampleList samples={labSamples} timeZone={site.timeZone} />
    </div>
  );
}
