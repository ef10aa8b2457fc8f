import { Form, Link } from "react-router";
import type { Route } from "./+types/compare";
import { CompareChart } from "#app/components/charts/compare-chart.tsx";
import { fullTime } from "#app/components/charts/time-format.ts";
import { RangePicker } from "#app/components/range-picker.tsx";
import { StatsTable } from "#app/components/stats-table.tsx";
import { parameterLabel, SERIES_PARAMETERS } from "#app/lib/series/parameters.ts";
import { loadCompare } from "#app/models/compare.server.ts";
import { MAX_COMPARE_SITES } from "#app/utils/dashboard-options.ts";
import { requireUser } from "#app/utils/auth.server.ts";
import { ANY_ROLE } from "#app/utils/permissions.ts";

export const meta: Route.MetaFunction = () => [{ title: "Compare sites · Ripplemark" }];

export async function loader({ request }: Route.LoaderArgs) {
  await requireUser(request, { roles: ANY_ROLE });
  return loadCompare(new URL(request.url).searchParams);
}

export default function Compare({ loaderData }: Route.ComponentProps) {
  const { options, sites, parameter, range, timeZone, stats, problems } = loaderData;
  const chosen = new Set(sites.map((s) => s.code));
  return (
    <div className="space-y-5">
      <header>
        <h1>Compare sites</h1>
        <p className="mt-1 text-ink-700">One parameter at up to {MAX_COMPARE_SITES} sites over the same range.</p>
      </header>
      {problems.map((p) => (
        <p key={p} role="alert" className="caution">{p}</p>
      ))}
      <Form method="get" className="card space-y-3" aria-label="Sites and parameter to compare">
        {range.preset === "custom" ? (
          <>
            <input type="hidden" name="range" value="custom" />
            <input type="hidden" name="from" value={range.from} />
            <input type="hidden" name="to" value={range.to} />
          </>
        ) : (
          <input type="hidden" name="range" value={range.preset} />
        )}
        <fieldset>
          <legend className="field-label">Sites (up to {MAX_COMPARE_SITES})</legend>
          <div className="grid gap-1 sm:grid-cols-2 lg:grid-cols-4">
            {options.map((o) => (
              <label key={o.code} className="flex items-center gap-2">
                <input type="checkbox" name="site" value={o.code} defaultChecked={chosen.has(o.code)} className="h-4 w-4" />
                <span><strong>{o.code}</strong> {o.name}</span>
              </label>
            ))}
          </div>
        </fieldset>
        <div className="flex flex-wrap items-end gap-3">
          <div>
            <label className="field-label" htmlFor="c-parameter">Parameter</label>
            <select id="c-parameter" name="parameter" defaultValue={parameter} className="field-input w-auto">
              {SERIES_PARAMETERS.map((p) => (
                <option key={p} value={p}>{parameterLabel(p)}</option>
              ))}
            </select>
          </div>
          <button type="submit" className="btn">Compare</button>
        </div>
      </Form>
      {sites.length ? (
        <section aria-labelledby="compare-chart-title" className="space-y-3">
          <h2 id="compare-chart-title">{parameterLabel(parameter)}</h2>
          <RangePicker preset={range.preset} fromWall={range.from} toWall={range.to} timeZone={timeZone} />
          {range.problem ? <p role="alert" className="caution">{range.problem}</p> : null}
          <CompareChart sites={sites} parameter={parameter} range={{ fromMs: range.fromMs, toMs: range.toMs }} timeZone={timeZone} describedBy="compare-stats" />
          {parameter === "tds" || parameter === "salinity" ? (
            <p className="caution">TDS and salinity are screening estimates from conductivity; accredited laboratories and local regulations govern.</p>
          ) : null}
          <StatsTable
            id="compare-stats"
            rows={stats.filter((s) => s.stats).map((s) => ({ ...s.stats!, parameter, label: s.code }))}
            firstHeader="Site"
            referenceC={25}
            caption={`${parameterLabel(parameter)}, every reading from ${fullTime(range.fromMs, timeZone)} to ${fullTime(range.toMs, timeZone)}, by site: ${stats.map((s) => `${s.code}${s.stats ? "" : " (no readings)"}`).join(", ")}.`}
          />
          <p className="text-sm text-ink-700">
            Site pages: {sites.map((s, i) => (
              <span key={s.code}>{i ? ", " : ""}<Link className="text-lake-700 underline" to={`/sites/${s.code}`}>{s.code}</Link></span>
            ))}
          </p>
        </section>
      ) : (
        <p className="card text-ink-700">Choose sites above to compare them.</p>
      )}
    </div>
  );
}
