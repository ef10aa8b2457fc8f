import { Link } from "react-router";
import { fullTime } from "#app/components/charts/time-format.ts";
import { Sparkline } from "#app/components/sparkline.tsx";
import { StatusMark, STATUS_TEXT_CLASS } from "#app/components/status-mark.tsx";
import { formatAge, type SiteStatus } from "#app/lib/quality/site-status.ts";
import { formatValue, type DisplayThreshold } from "#app/lib/series/parameters.ts";
import { SITE_KIND_LABELS } from "#app/utils/site-labels.ts";
import type { SiteKind } from "#db/schema.ts";
import { formatNumber } from "#app/lib/number-format.ts";

// One site on the overview: status in words, the latest values, staleness, 7-day completeness,
// open exceedances and a 7-day trend of specific conductance.

export type OverviewCardSite = {
  id: string;
  code: string;
  name: string;
  kind: SiteKind;
  timeZone: string;
  referenceC: number;
  assigned: boolean;
  latest: { timeMs: number; sc25: number | null; temperature: number | null; tds: number | null; salinity: number | null; showSalinity: boolean } | null;
  window: { received: number; expected: number; share: number | null };
  trend: { fromMs: number; bucketMs: number; means: (number | null)[] };
  thresholds: DisplayThreshold[];
  status: SiteStatus;
  reasons: string[];
  openExceedances: number | null;
};

export function OverviewCard({ site: s, nowMs }: { site: OverviewCardSite; nowMs: number }) {
  const titleId = `site-${s.code}-name`;
  const trendEnd = s.trend.fromMs + s.trend.means.length * s.trend.bucketMs;
  const trendPoints = s.trend.means.map((v, i): [number, number | null] => [s.trend.fromMs + (i + 0.5) * s.trend.bucketMs, v]);
  return (
    <li className="card flex flex-col gap-2" aria-labelledby={titleId} data-testid="site-card" data-status={s.status}>
      <p className="text-sm font-semibold text-ink-500">
        {s.code} · {SITE_KIND_LABELS[s.kind]}
        {s.assigned ? <span className="ml-2 rounded bg-lake-100 px-1.5 text-lake-700">your round</span> : null}
      </p>
      <h3 id={titleId} className="text-lg font-semibold leading-tight">
        <Link to={`/sites/${s.code}`} className="text-lake-700 underline decoration-lake-100 underline-offset-2 hover:decoration-lake-700">
          {s.name}
        </Link>
      </h3>
      <div className={STATUS_TEXT_CLASS[s.status]}>
        <StatusMark status={s.status} />
        {s.reasons.length ? <p className="mt-0.5 text-sm text-ink-700">{s.reasons[0]}</p> : null}
      </div>
      <dl className="grid grid-cols-[auto_1fr] gap-x-3 gap-y-0.5 text-sm">
        <dt className="text-ink-500">Specific conductance</dt>
        <dd className="tabular-nums font-semibold">
          {formatValue("sc25", s.latest?.sc25)} <span className="font-normal text-ink-500">at {s.referenceC} °C</span>
        </dd>
        <dt className="text-ink-500">Temperature</dt>
        <dd className="tabular-nums">{formatValue("temperature", s.latest?.temperature)}</dd>
        <dt className="text-ink-500">TDS estimate</dt>
        <dd className="tabular-nums">{formatValue("tds", s.latest?.tds)}</dd>
        {s.latest?.showSalinity ? (
          <>
            <dt className="text-ink-500">Salinity estimate</dt>
            <dd className="tabular-nums">{formatValue("salinity", s.latest.salinity)}</dd>
          </>
        ) : null}
        <dt className="text-ink-500">Latest reading</dt>
        <dd>
          {s.latest ? (
            <>
              <time dateTime={new Date(s.latest.timeMs).toISOString()}>{fullTime(s.latest.timeMs, s.timeZone)}</time>{" "}
              <span className="text-ink-500">({formatAge(nowMs - s.latest.timeMs)})</span>
            </>
          ) : (
            "none yet"
          )}
        </dd>
        <dt className="text-ink-500">Last 7 days</dt>
        <dd>
          {s.window.share === null ? (
            <span className="text-ink-500">no logger deployed</span>
          ) : (
            <>
              {formatNumber(s.window.share * 100, 0)} % complete{" "}
              <span className="text-ink-500">
                ({formatNumber(s.window.received, 0)} of {formatNumber(Math.round(s.window.expected), 0)} readings)
              </span>
            </>
          )}
        </dd>
        <dt className="text-ink-500">Open exceedances</dt>
        <dd>{s.openExceedances === null ? <span aria-label="not tracked yet">—</span> : s.openExceedances}</dd>
      </dl>
      <div>
        <p className="text-xs text-ink-500">Specific conductance, 7 days to the latest reading</p>
        <Sparkline
          points={trendPoints}
          fromMs={s.trend.fromMs}
          toMs={trendEnd}
          thresholds={s.thresholds.filter((t) => t.parameter === "sc25")}
          label={`Trend of specific conductance at ${s.code} over the 7 days to its latest reading`}
          width={280}
        />
      </div>
    </li>
  );
}
