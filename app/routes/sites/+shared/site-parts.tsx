import { fullTime } from "#app/components/charts/time-format.ts";
import { formatValue } from "#app/lib/series/parameters.ts";

// Smaller pieces of the site page.

export function ReadingSummary({
  stats,
  loggers,
  timeZone,
}: {
  stats: { readings: number; expected: number; completeness: number | null; firstMs: number | null; lastMs: number | null };
  loggers: { serial: string; intervalS: number }[];
  timeZone: string;
}) {
  const every = [...new Set(loggers.map((l) => `${l.serial} every ${l.intervalS % 60 === 0 ? `${l.intervalS / 60} min` : `${l.intervalS} s`}`))];
  return (
    <p className="text-ink-700" data-testid="completeness">
      {`${stats.readings.toLocaleString("en-GB")} readings${stats.firstMs !== null && stats.lastMs !== null ? ` from ${fullTime(stats.firstMs, timeZone)} to ${fullTime(stats.lastMs, timeZone)}` : ""}. `}
      {stats.completeness === null ? (
        "No logger was deployed here in this range, so completeness cannot be worked out."
      ) : (
        <>
          {"Completeness "}
          <strong>{`${(stats.completeness * 100).toLocaleString("en-GB", { maximumFractionDigits: 1 })} %`}</strong>
          {` of the ${Math.round(stats.expected).toLocaleString("en-GB")} readings expected from ${every.join(" and ")}.`}
        </>
      )}
    </p>
  );
}

export function LabSampleList({
  samples,
  timeZone,
}: {
  samples: { id: string; atMs: number; reference: string | null; measuredEcUsPerCm: number | null; calculatedEcUsPerCm: number | null; verdict: string }[];
  timeZone: string;
}) {
  if (!samples.length) return null;
  return (
    <section aria-labelledby="lab-title" className="space-y-2">
      <h2 id="lab-title">Lab samples in this range</h2>
      <div className="overflow-x-auto rounded-lg border border-ink-100 bg-white">
        <table className="data-table">
          <caption className="px-3 pt-2 text-left text-sm text-ink-700">
            Drawn on the specific conductance chart: measured EC as filled diamonds, EC calculated from the ions as open triangles.
          </caption>
          <thead>
            <tr>
              <th scope="col">Sampled</th>
              <th scope="col">Lab reference</th>
              <th scope="col" className="text-right">Measured EC</th>
              <th scope="col" className="text-right">Calculated EC</th>
              <th scope="col">Check</th>
            </tr>
          </thead>
          <tbody>
            {samples.map((s) => (
              <tr key={s.id}>
                <th scope="row" className="border-b border-ink-100 font-normal">{fullTime(s.atMs, timeZone)}</th>
                <td>{s.reference ?? "—"}</td>
                <td className="text-right tabular-nums">{formatValue("sc25", s.measuredEcUsPerCm)}</td>
                <td className="text-right tabular-nums">{formatValue("sc25", s.calculatedEcUsPerCm)}</td>
                <td>{s.verdict}</td>
              </tr>
            ))}
          </tbody>
        </table>
      </div>
    </section>
  );
}
