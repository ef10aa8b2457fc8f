// A static SVG time chart (server-rendered, crisp in print): a line of values with gaps, an optional
// shaded band (daily lowest–highest), an optional straight trend line and an optional threshold.
// Axis ticks are chosen here; the caller gives a text description for screen readers and the page
// gives the figures in a table beside it.

type Props = {
  points: [number, number | null][];
  band?: [number, number | null, number | null][];
  trendLine?: { fromMs: number; toMs: number; fromValue: number; toValue: number } | null;
  threshold?: number | null;
  unit: string;
  label: string;
  width?: number;
  height?: number;
  timeZone: string;
};

const MONTHS = ["Jan", "Feb", "Mar", "Apr", "May", "Jun", "Jul", "Aug", "Sep", "Oct", "Nov", "Dec"];

function niceStep(span: number, count: number) {
  const raw = span / Math.max(1, count);
  const pow = 10 ** Math.floor(Math.log10(raw || 1));
  for (const m of [1, 2, 2.5, 5, 10]) if (m * pow >= raw) return m * pow;
  return 10 * pow;
}

function monthTicks(fromMs: number, toMs: number, timeZone: string) {
  const fmt = new Intl.DateTimeFormat("en-GB", { timeZone, year: "numeric", month: "numeric" });
  const ticks: { t: number; text: string }[] = [];
  const start = new Date(fromMs);
  let y = start.getUTCFullYear();
  let m = start.getUTCMonth() + 1;
  const months = (toMs - fromMs) / (30.44 * 86_400_000);
  const every = months > 30 ? 6 : months > 14 ? 3 : months > 5 ? 1 : 0;
  if (every === 0) {
    const days = (toMs - fromMs) / 86_400_000;
    const stepDays = days > 40 ? 7 : days > 14 ? 2 : 1;
    for (let t = Math.ceil(fromMs / 86_400_000) * 86_400_000; t <= toMs; t += stepDays * 86_400_000) {
      const d = new Date(t);
      ticks.push({ t, text: `${d.getUTCDate()} ${MONTHS[d.getUTCMonth()]}` });
    }
    return ticks;
  }
  for (let i = 0; i < 60; i++) {
    const t = Date.UTC(y, m - 1, 1);
    if (t > toMs) break;
    if (t >= fromMs && (m - 1) % every === 0) {
      const parts = Object.fromEntries(fmt.formatToParts(new Date(t + 43_200_000)).map((p) => [p.type, p.value]));
      ticks.push({ t, text: m === 1 || every >= 3 ? `${MONTHS[m - 1]} ${parts.year}` : MONTHS[m - 1] });
    }
    m++;
    if (m > 12) {
      m = 1;
      y++;
    }
  }
  return ticks;
}

export function SeriesSvg({ points, band = [], trendLine = null, threshold = null, unit, label, width = 760, height = 260, timeZone }: Props) {
  const values = [
    ...points.map((p) => p[1]),
    ...band.flatMap((b) => [b[1], b[2]]),
    ...(trendLine ? [trendLine.fromValue, trendLine.toValue] : []),
  ].filter((v): v is number => v !== null && Number.isFinite(v));
  const times = [...points.map((p) => p[0]), ...band.map((b) => b[0])];
  if (!values.length || !times.length) return <p className="text-ink-700">No data to draw for this range.</p>;
  let lo = Math.min(...values);
  let hi = Math.max(...values);
  if (threshold !== null && threshold >= lo - (hi - lo) && threshold <= hi + (hi - lo)) {
    lo = Math.min(lo, threshold);
    hi = Math.max(hi, threshold);
  }
  if (hi - lo < 1e-9) {
    lo -= 1;
    hi += 1;
  }
  const step = niceStep(hi - lo, 5);
  const y0 = Math.floor(lo / step) * step;
  const y1 = Math.ceil(hi / step) * step;
  const t0 = Math.min(...times);
  const t1 = Math.max(...times, t0 + 86_400_000);
  const L = 58;
  const R = 12;
  const T = 22;
  const B = 28;
  const x = (t: number) => L + ((t - t0) / (t1 - t0)) * (width - L - R);
  const y = (v: number) => T + (1 - (v - y0) / (y1 - y0)) * (height - T - B);
  let line = "";
  let pen = false;
  for (const [t, v] of points) {
    if (v === null || !Number.isFinite(v)) {
      pen = false;
      continue;
    }
    line += `${pen ? "L" : "M"}${x(t).toFixed(1)},${y(v).toFixed(1)}`;
    pen = true;
  }
  // The band as closed polygons per run of days with both ends.
  const bandPaths: string[] = [];
  let run: [number, number, number][] = [];
  const flush = () => {
    if (run.length > 1) {
      const top = run.map(([t, , h]) => `${x(t).toFixed(1)},${y(h).toFixed(1)}`).join(" L");
      const bottom = [...run].reverse().map(([t, l]) => `${x(t).toFixed(1)},${y(l).toFixed(1)}`).join(" L");
      bandPaths.push(`M${top} L${bottom} Z`);
    }
    run = [];
  };
  for (const [t, l, h] of band) {
    if (l === null || h === null) flush();
    else run.push([t, l, h]);
  }
  flush();
  const yTicks: number[] = [];
  for (let v = y0; v <= y1 + step / 2; v += step) yTicks.push(v);
  return (
    <svg viewBox={`0 0 ${width} ${height}`} width="100%" role="img" aria-label={label} className="series-svg" style={{ maxWidth: Math.round(width * 1.2) }} preserveAspectRatio="xMidYMid meet">
      <g fontSize="11" fill="#2f4556">
        {yTicks.map((v) => (
          <g key={v}>
            <line x1={L} x2={width - R} y1={y(v)} y2={y(v)} stroke="#e3e9ee" />
            <text x={L - 6} y={y(v) + 4} textAnchor="end">
              {v.toLocaleString("en-GB")}
            </text>
          </g>
        ))}
        <text x={4} y={12}>{unit}</text>
        {monthTicks(t0, t1, timeZone).map((tk) => (
          <text key={tk.t} x={x(tk.t)} y={height - 8} textAnchor="middle">
            {tk.text}
          </text>
        ))}
      </g>
      {bandPaths.map((d, i) => (
        <path key={i} d={d} fill="#185a82" fillOpacity={0.14} stroke="none" />
      ))}
      {threshold !== null && threshold >= y0 && threshold <= y1 ? (
        <line x1={L} x2={width - R} y1={y(threshold)} y2={y(threshold)} stroke="#8f3422" strokeDasharray="6 4" strokeWidth={1.25} />
      ) : null}
      <path d={line} fill="none" stroke="#185a82" strokeWidth={1.75} strokeLinejoin="round" />
      {trendLine ? (
        <line x1={x(trendLine.fromMs)} x2={x(trendLine.toMs)} y1={y(trendLine.fromValue)} y2={y(trendLine.toValue)} stroke="#8a5a00" strokeWidth={2.25} strokeDasharray="10 3 2 3" />
      ) : null}
    </svg>
  );
}
