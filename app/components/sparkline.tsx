// A small inline trend line (SVG): no axes, gaps left open, optional threshold lines. Decorative
// next to the numbers it summarises; its label says what it shows.

type Props = {
  points: [number, number | null][];
  fromMs: number;
  toMs: number;
  thresholds?: { value: number; bound: "upper" | "lower" }[];
  label: string;
  width?: number;
  height?: number;
};

export function Sparkline({ points, fromMs, toMs, thresholds = [], label, width = 160, height = 40 }: Props) {
  const values = points.map((p) => p[1]).filter((v): v is number => v !== null);
  if (!values.length) {
    return <p className="text-sm text-ink-500">No readings in these 7 days.</p>;
  }
  const th = thresholds.map((t) => t.value);
  let lo = Math.min(...values);
  let hi = Math.max(...values);
  // Show a threshold only when it is near the data (within half the data's spread), so a far-off
  // line does not flatten the trend.
  const spread = Math.max(hi - lo, Math.abs(hi) * 0.02, 1e-9);
  const near = th.filter((v) => v >= lo - spread / 2 && v <= hi + spread / 2);
  lo = Math.min(lo, ...near);
  hi = Math.max(hi, ...near);
  const pad = (hi - lo || 1) * 0.08;
  const y = (v: number) => height - 2 - ((v - (lo - pad)) / (hi - lo + 2 * pad)) * (height - 4);
  const x = (t: number) => ((t - fromMs) / (toMs - fromMs || 1)) * width;
  let d = "";
  let pen = false;
  for (const [t, v] of points) {
    if (v === null) {
      pen = false;
      continue;
    }
    d += `${pen ? "L" : "M"}${x(t).toFixed(1)},${y(v).toFixed(1)}`;
    pen = true;
  }
  return (
    <svg width={width} height={height} viewBox={`0 0 ${width} ${height}`} role="img" aria-label={label} className="overflow-visible">
      {near.map((v, i) => (
        <line key={i} x1={0} x2={width} y1={y(v)} y2={y(v)} stroke="#8f3422" strokeDasharray="4 3" strokeWidth={1} />
      ))}
      <path d={d} fill="none" stroke="#1f6f9f" strokeWidth={1.75} strokeLinejoin="round" />
    </svg>
  );
}
