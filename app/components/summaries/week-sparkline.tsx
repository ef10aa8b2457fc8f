// The week's seven daily medians of specific conductance as a small SVG line (server-rendered, so it
// prints crisply). Days without readings leave a gap; an upper threshold near the data is drawn
// dashed. Its label reads the seven values out.

type Props = { medians: (number | null)[]; threshold?: number | null; label: string; width?: number; height?: number };

const DAYS = ["Mon", "Tue", "Wed", "Thu", "Fri", "Sat", "Sun"];

export function weekSparklineLabel(siteName: string, medians: (number | null)[]) {
  const parts = DAYS.map((d, i) => `${d} ${medians[i] === null || medians[i] === undefined ? "no data" : Math.round(medians[i] as number)}`);
  return `Daily median specific conductance at ${siteName}, µS/cm: ${parts.join(", ")}`;
}

export function WeekSparkline({ medians, threshold = null, label, width = 120, height = 34 }: Props) {
  const values = medians.filter((v): v is number => v !== null && Number.isFinite(v));
  if (!values.length) return <span className="text-sm text-ink-500">no daily data</span>;
  let lo = Math.min(...values);
  let hi = Math.max(...values);
  const spread = Math.max(hi - lo, Math.abs(hi) * 0.02, 1);
  const showThreshold = threshold !== null && threshold >= lo - spread && threshold <= hi + spread;
  if (showThreshold) {
    lo = Math.min(lo, threshold);
    hi = Math.max(hi, threshold);
  }
  const pad = (hi - lo || 1) * 0.12;
  const x = (i: number) => 3 + (i / 6) * (width - 6);
  const y = (v: number) => height - 3 - ((v - (lo - pad)) / (hi - lo + 2 * pad)) * (height - 6);
  let d = "";
  let pen = false;
  medians.forEach((v, i) => {
    if (v === null || !Number.isFinite(v)) {
      pen = false;
      return;
    }
    d += `${pen ? "L" : "M"}${x(i).toFixed(1)},${y(v).toFixed(1)}`;
    pen = true;
  });
  return (
    <svg width={width} height={height} viewBox={`0 0 ${width} ${height}`} role="img" aria-label={label} className="overflow-visible">
      {showThreshold ? <line x1={0} x2={width} y1={y(threshold)} y2={y(threshold)} stroke="#8f3422" strokeDasharray="4 3" strokeWidth={1} /> : null}
      <path d={d} fill="none" stroke="#185a82" strokeWidth={1.75} strokeLinejoin="round" strokeLinecap="round" />
      {medians.map((v, i) => (v === null || !Number.isFinite(v) ? null : <circle key={i} cx={x(i)} cy={y(v)} r={1.6} fill="#185a82" />))}
    </svg>
  );
}
