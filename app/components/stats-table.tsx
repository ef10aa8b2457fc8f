import { formatValue, PARAMETER_INFO, parameterLabel, type SeriesParameter } from "#app/lib/series/parameters.ts";

// Summary statistics of the shown range: the charts' text alternative. Every reading of the range
// counts (not the points drawn).

export type StatsRow = {
  parameter: SeriesParameter;
  /** Row heading instead of the parameter's name (the compare page names sites). */
  label?: string;
  count: number;
  min: number | null;
  max: number | null;
  mean: number | null;
  median: number | null;
  p05: number | null;
  p95: number | null;
  beyond: { bound: "upper" | "lower"; value: number; share: number | null }[];
};

function pct(share: number | null) {
  if (share === null) return "—";
  const v = share * 100;
  return `${v > 0 && v < 0.1 ? "< 0.1" : v.toLocaleString("en-GB", { maximumFractionDigits: 1 })} %`;
}

export function StatsTable({
  id,
  rows,
  referenceC,
  caption,
  firstHeader = "Parameter",
}: {
  id: string;
  rows: StatsRow[];
  referenceC: number;
  caption: string;
  firstHeader?: string;
}) {
  return (
    <div className="overflow-x-auto rounded-lg border border-ink-100 bg-white">
      <table className="data-table" id={id}>
        <caption className="px-3 pt-2 text-left text-sm text-ink-700">{caption}</caption>
        <thead>
          <tr>
            <th scope="col">{firstHeader}</th>
            <th scope="col" className="text-right">Readings</th>
            <th scope="col" className="text-right">Lowest</th>
            <th scope="col" className="text-right">5th percentile</th>
            <th scope="col" className="text-right">Median</th>
            <th scope="col" className="text-right">Mean</th>
            <th scope="col" className="text-right">95th percentile</th>
            <th scope="col" className="text-right">Highest</th>
            <th scope="col">Time beyond thresholds</th>
          </tr>
        </thead>
        <tbody>
          {rows.map((r) => {
            const f = (v: number | null) => formatValue(r.parameter, v, false);
            const unit = PARAMETER_INFO[r.parameter].unit;
            return (
              <tr key={r.label ?? r.parameter}>
                <th scope="row" className="border-b border-ink-100 font-normal">
                  {r.label ?? parameterLabel(r.parameter, referenceC)}
                  {unit ? <span className="text-ink-500"> ({unit})</span> : null}
                </th>
                <td className="text-right tabular-nums">{r.count.toLocaleString("en-GB")}</td>
                <td className="text-right tabular-nums">{f(r.min)}</td>
                <td className="text-right tabular-nums">{f(r.p05)}</td>
                <td className="text-right tabular-nums">{f(r.median)}</td>
                <td className="text-right tabular-nums">{f(r.mean)}</td>
                <td className="text-right tabular-nums">{f(r.p95)}</td>
                <td className="text-right tabular-nums">{f(r.max)}</td>
                <td>
                  {r.beyond.length === 0 ? (
                    <span className="text-ink-500">no threshold set</span>
                  ) : (
                    <ul>
                      {r.beyond.map((b) => (
                        <li key={b.bound}>
                          {b.bound === "upper" ? "above" : "below"} {formatValue(r.parameter, b.value)}: <strong>{pct(b.share)}</strong>
                        </li>
                      ))}
                    </ul>
                  )}
                </td>
              </tr>
            );
          })}
        </tbody>
      </table>
    </div>
  );
}
