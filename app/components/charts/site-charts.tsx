import { useMemo, useRef } from "react";
import type ReactEChartsCoreType from "echarts-for-react/esm/core";
import type { SeriesPoint } from "#app/lib/series/bucketing.ts";
import { exceedancePeriods } from "#app/lib/series/exceedance.ts";
import { GRADE_LABELS, type Grade } from "#app/lib/quality/grades.ts";
import { formatValue, PARAMETER_INFO, parameterLabel, type DisplayThreshold, type SeriesParameter } from "#app/lib/series/parameters.ts";
import { echarts, ReactEChartsCore } from "./echarts.ts";
import { MARK, PARAMETER_LOOK } from "./palette.ts";
import { axisTimeLabel, fullTime } from "./time-format.ts";
import { ZoomControls } from "./zoom-controls.tsx";
import { describeResolution, useZoomableSeries, type Range, type SeriesRequest } from "./use-series.ts";

// A site's time-series charts: one echarts instance with a grid (panel) per parameter, all sharing
// one time axis and one zoom (mouse wheel / pinch inside the panels, the slider below). Specific
// conductance has the raw conductivity at temperature beside it and the lab samples as points;
// display thresholds are drawn as lines and the shown periods beyond them are shaded.

export type LabPoint = { atMs: number; measuredEcUsPerCm: number | null; calculatedEcUsPerCm: number | null; reference: string | null };

/** A period of record between two field visits with its grade (app/lib/quality/grades.ts), for the band under the time axis. */
export type GradeSpan = { fromMs: number; toMs: number; grade: Grade | null; approved: boolean };

type Props = {
  siteId: string;
  /** Panels in order; "conductivity" is drawn inside the specific conductance panel when both exist. */
  parameters: SeriesParameter[];
  range: Range;
  thresholds: DisplayThreshold[];
  labSamples: LabPoint[];
  referenceC: number;
  timeZone: string;
  describedBy?: string;
  /** Periods of record and their grades, drawn as a band under the time axis. */
  grades?: GradeSpan[];
  /**
   * Exceedance events found by the alert rules, shaded in their parameter's panel. Without them the
   * shown stretches beyond a display threshold are shaded instead.
   */
  events?: ChartEventSpan[];
  /** Threshold levels of the alert rules covering the site, drawn beside the display thresholds. */
  ruleLines?: RuleLine[];
};

export type ChartEventSpan = { parameter: string; fromMs: number; toMs: number };
export type RuleLine = { parameter: string; direction: "above" | "below"; threshold: number; ruleName: string };

const PANEL_HEIGHT = 150;
const PANEL_GAP = 62;
const TOP = 84;
const SLIDER = 70;
const BAND = 42;

function panelsOf(parameters: SeriesParameter[]): SeriesParameter[][] {
  const has = new Set(parameters);
  const panels: SeriesParameter[][] = [];
  for (const p of parameters) {
    // Raw conductivity and the uncorrected values share the specific conductance panel.
    if ((p === "conductivity" || p === "sc25_uncorrected") && has.has("sc25")) continue;
    panels.push(p === "sc25" ? (["sc25", "sc25_uncorrected", "conductivity"] as const).filter((q) => has.has(q)) : [p]);
  }
  return panels;
}

export function SiteCharts({ siteId, parameters, range, thresholds, labSamples, referenceC, timeZone, describedBy, grades, events, ruleLines }: Props) {
  const requests: SeriesRequest[] = useMemo(() => parameters.map((p) => ({ key: p, siteId, parameter: p })), [siteId, parameters]);
  const series = useZoomableSeries(requests, range);
  const panels = useMemo(() => panelsOf(parameters), [parameters]);
  const chartRef = useRef<ReactEChartsCoreType | null>(null);
  const onZoomRef = useRef(series.onZoom);
  onZoomRef.current = series.onZoom;
  const height = TOP + panels.length * (PANEL_HEIGHT + PANEL_GAP) - PANEL_GAP + SLIDER + (grades?.length ? BAND : 0);

  const option = useMemo(
    () => buildOption({ panels, shown: series.shown, range, thresholds, labSamples, referenceC, timeZone, grades, events, ruleLines }),
    [panels, series.shown, range, thresholds, labSamples, referenceC, timeZone, grades, events, ruleLines],
  );

  const onEvents = useMemo(
    () => ({
      datazoom: (_: unknown, chart: { getOption: () => { dataZoom?: { start?: number; end?: number }[] } }) => {
        const dz = chart.getOption().dataZoom?.[0];
        if (!dz) return;
        const span = range.toMs - range.fromMs;
        onZoomRef.current({ fromMs: range.fromMs + ((dz.start ?? 0) / 100) * span, toMs: range.fromMs + ((dz.end ?? 100) / 100) * span });
      },
    }),
    [range.fromMs, range.toMs],
  );

  return (
    <div className="space-y-2">
      <ZoomControls chartRef={chartRef} label="Zoom and pan the charts" />
      <div
        role="img"
        aria-label={`Charts of ${panels.map((p) => p.map((q) => parameterLabel(q, referenceC)).join(" and ")).join("; ")} from ${fullTime(range.fromMs, timeZone)} to ${fullTime(range.toMs, timeZone)}. The statistics table gives the figures.`}
        aria-describedby={describedBy}
        aria-busy={series.status === "loading"}
        data-testid="site-charts"
        data-state={series.status}
        className="rounded-lg border border-ink-100 bg-white p-2"
      >
        <ReactEChartsCore
          ref={chartRef}
          key={`${range.fromMs}-${range.toMs}`}
          echarts={echarts}
          option={option}
          style={{ height, width: "100%" }}
          onEvents={onEvents}
          opts={{ renderer: "canvas" }}
        />
      </div>
      <p className="mt-2 text-sm text-ink-700" aria-live="polite" data-testid="chart-resolution">
        {series.status === "error" ? (
          <span role="alert" className="text-brick-700">{series.error}</span>
        ) : series.status === "loading" ? (
          "Loading chart data…"
        ) : (
          <>
            {series.zoom ? `Zoomed to ${fullTime(series.zoom.fromMs, timeZone)} – ${fullTime(series.zoom.toMs, timeZone)}. ` : null}
            {parameters.map((p) => `${parameterLabel(p, referenceC)}: ${describeResolution(series.meta[p])}`).join("; ")}.
          </>
        )}
      </p>
    </div>
  );
}

function buildOption(o: {
  panels: SeriesParameter[][];
  shown: Record<string, SeriesPoint[]>;
  range: Range;
  thresholds: DisplayThreshold[];
  labSamples: LabPoint[];
  referenceC: number;
  timeZone: string;
  grades?: GradeSpan[];
  events?: ChartEventSpan[];
  ruleLines?: RuleLine[];
}) {
  const { panels, shown, range, thresholds, labSamples, referenceC, timeZone } = o;
  const span = range.toMs - range.fromMs;
  const topOf = (i: number) => TOP + i * (PANEL_HEIGHT + PANEL_GAP);
  const grids = panels.map((_, i) => ({ left: 72, right: 28, top: topOf(i), height: PANEL_HEIGHT, containLabel: false }));
  const titles = panels.map((panel, i) => ({
    text:
      panel.length > 1
        ? `${parameterLabel(panel[0], referenceC)}, with ${panel.slice(1).map((q) => (q === "conductivity" ? "raw conductivity at water temperature" : "the values before corrections")).join(" and ")}`
        : parameterLabel(panel[0], referenceC),
    left: 72,
    top: topOf(i) - 40,
    textStyle: { fontSize: 14, fontWeight: 600, color: MARK.text, fontFamily: "Source Sans 3, sans-serif" },
  }));
  const xAxes = panels.map((_, i) => ({
    type: "time",
    gridIndex: i,
    min: range.fromMs,
    max: range.toMs,
    name: i === panels.length - 1 ? `Time (${timeZone})` : "",
    nameLocation: "middle",
    nameGap: 28,
    axisLabel: { formatter: (v: number) => axisTimeLabel(v, timeZone, span), color: MARK.axis, hideOverlap: true },
    axisLine: { lineStyle: { color: MARK.axis } },
    splitLine: { show: true, lineStyle: { color: MARK.grid } },
  }));
  const yAxes = panels.map((panel, i) => {
    const p = panel[0];
    const th = thresholds.filter((t) => t.parameter === p);
    const unit = PARAMETER_INFO[p].unit;
    return {
      type: "value",
      gridIndex: i,
      scale: true,
      name: unit || "pH",
      nameTextStyle: { color: MARK.axis, align: "right" },
      axisLabel: { color: MARK.axis },
      splitLine: { lineStyle: { color: MARK.grid } },
      // Round extent (clean labels), stretched to keep the threshold lines on the axis even when the
      // data stays well within them.
      min: (v: { min: number; max: number }) => niceExtent(Math.min(v.min, ...th.map((t) => t.value)), Math.max(v.max, ...th.map((t) => t.value)))[0],
      max: (v: { min: number; max: number }) => niceExtent(Math.min(v.min, ...th.map((t) => t.value)), Math.max(v.max, ...th.map((t) => t.value)))[1],
    };
  });

  const seriesList: object[] = [];
  panels.forEach((panel, i) => {
    for (const p of panel) {
      const look = PARAMETER_LOOK[p];
      const points = shown[p] ?? [];
      const th = p === panel[0] ? thresholds.filter((t) => t.parameter === p) : [];
      // Alert rules: their threshold lines, and their events shaded in the panel showing the parameter.
      const rules = p === panel[0] ? (o.ruleLines ?? []).filter((r) => r.parameter === p) : [];
      const events = p === panel[0] && o.events ? o.events.filter((e) => panel.includes(e.parameter as SeriesParameter)) : null;
      const minWidth = span / 400;
      seriesList.push({
        id: p,
        name: p === "conductivity" ? "Raw conductivity at water temperature" : parameterLabel(p, referenceC),
        type: "line",
        xAxisIndex: i,
        yAxisIndex: i,
        data: points,
        showSymbol: false,
        symbol: look.symbol,
        symbolSize: 7,
        connectNulls: false,
        sampling: undefined,
        animation: false,
        color: look.color,
        lineStyle: { color: look.color, type: look.dash, width: look.width },
        markLine: th.length || rules.length
          ? {
              silent: true,
              symbol: "none",
              animation: false,
              data: [
                ...rules.map((r) => ({
                  yAxis: r.threshold,
                  lineStyle: { color: MARK.upper, type: [8, 3, 2, 3], width: 1.25 },
                  label: { formatter: `Alert rule ${formatValue(p, r.threshold)}`, position: "insideStartTop", color: MARK.upper },
                })),
                ...th.map((t) => ({
                yAxis: t.value,
                lineStyle: { color: t.bound === "upper" ? MARK.upper : MARK.lower, type: t.bound === "upper" ? "dashed" : "dotted", width: 1.5 },
                label: {
                  formatter: `${t.bound === "upper" ? "Upper" : "Lower"} ${formatValue(p, t.value)}`,
                  position: "insideEndTop",
                  color: t.bound === "upper" ? MARK.upper : MARK.lower,
                },
              })),
              ],
            }
          : undefined,
        markArea: events
          ? events.length
            ? {
                silent: true,
                animation: false,
                itemStyle: { color: MARK.exceedanceFill },
                data: events.map((e) => [{ xAxis: e.fromMs }, { xAxis: Math.max(e.toMs, e.fromMs + minWidth) }]),
              }
            : undefined
          : th.length
            ? {
                silent: true,
                animation: false,
                itemStyle: { color: MARK.exceedanceFill },
                data: th.flatMap((t) => exceedancePeriods(points, t.value, t.bound).map((e) => [{ xAxis: e.fromMs }, { xAxis: e.toMs }])),
              }
            : undefined,
      });
    }
  });

  const scIndex = panels.findIndex((panel) => panel[0] === "sc25");
  if (scIndex >= 0 && labSamples.length) {
    const measured = labSamples.filter((s) => s.measuredEcUsPerCm !== null);
    if (measured.length) {
      seriesList.push({
        id: "lab-measured",
        name: "Lab sample EC, measured",
        type: "scatter",
        xAxisIndex: scIndex,
        yAxisIndex: scIndex,
        symbol: "diamond",
        symbolSize: 11,
        itemStyle: { color: MARK.labMeasured, borderColor: "#fff", borderWidth: 1 },
        data: measured.map((s) => [s.atMs, s.measuredEcUsPerCm]),
      });
    }
    seriesList.push({
      id: "lab-calculated",
      name: "Lab sample EC, calculated from ions",
      type: "scatter",
      xAxisIndex: scIndex,
      yAxisIndex: scIndex,
      symbol: "emptyTriangle",
      symbolSize: 11,
      itemStyle: { color: MARK.labCalculated, borderColor: MARK.labCalculated, borderWidth: 2 },
      data: labSamples.filter((s) => s.calculatedEcUsPerCm !== null).map((s) => [s.atMs, s.calculatedEcUsPerCm]),
    });
  }

  if (o.grades?.length) addGradeBand({ grades: o.grades, index: panels.length, top: topOf(panels.length - 1) + PANEL_HEIGHT + 46, range, grids, xAxes, yAxes, titles, seriesList });
  const all = [...grids.keys()];
  return {
    animation: false,
    textStyle: { fontFamily: "Source Sans 3, sans-serif" },
    title: titles,
    legend: {
      top: 4,
      left: 72,
      right: 28,
      type: "plain",
      itemWidth: 28,
      textStyle: { color: MARK.text },
    },
    grid: grids,
    xAxis: xAxes,
    yAxis: yAxes,
    axisPointer: { link: [{ xAxisIndex: "all" }], label: { formatter: (v: { value: number; axisDimension: string }) => (v.axisDimension === "x" ? fullTime(v.value, timeZone) : String(Math.round(v.value * 100) / 100)) } },
    tooltip: {
      trigger: "axis",
      confine: true,
      formatter: (items: { seriesId: string; seriesName: string; marker: string; value: (number | null)[] }[]) => tooltipText(items, timeZone),
    },
    dataZoom: [
      { type: "inside", xAxisIndex: all, filterMode: "none" },
      { type: "slider", xAxisIndex: all, filterMode: "none", bottom: 12, height: 28, labelFormatter: (v: number) => axisTimeLabel(v, timeZone, span) },
    ],
    series: seriesList,
  };
}

// Grades from light to dark, each with its word in the band (never colour alone).
const GRADE_FILL: Record<Grade, string> = {
  excellent: "#e3f1e7",
  good: "#c5d1db",
  fair: "#fbefd5",
  poor: "#f0c9a8",
  "beyond-limit": "#b2442e",
};

/** A thin extra grid under the last time axis with one labelled stretch per period of record. */
function addGradeBand(b: {
  grades: GradeSpan[];
  index: number;
  top: number;
  range: Range;
  grids: object[];
  xAxes: object[];
  yAxes: object[];
  titles: object[];
  seriesList: object[];
}) {
  b.grids.push({ left: 72, right: 28, top: b.top, height: 20, containLabel: false });
  b.xAxes.push({ type: "time", gridIndex: b.index, min: b.range.fromMs, max: b.range.toMs, show: false });
  b.yAxes.push({ type: "value", gridIndex: b.index, min: 0, max: 1, show: false });
  b.titles.push({ text: "Grade", left: 8, top: b.top + 2, textStyle: { fontSize: 12, fontWeight: 600, color: MARK.text, fontFamily: "Source Sans 3, sans-serif" } });
  b.seriesList.push({
    id: "grade-band",
    name: "Data grade of each period between field visits",
    type: "line",
    xAxisIndex: b.index,
    yAxisIndex: b.index,
    data: [[b.range.fromMs, null]],
    showSymbol: false,
    silent: true,
    animation: false,
    color: MARK.axis,
    markArea: {
      silent: true,
      animation: false,
      data: b.grades.map((g) => [
        {
          xAxis: Math.max(g.fromMs, b.range.fromMs),
          itemStyle: { color: g.grade ? GRADE_FILL[g.grade] : "#ffffff", borderColor: MARK.axis, borderWidth: 1 },
          label: {
            show: true,
            position: "inside",
            color: g.grade === "beyond-limit" ? "#ffffff" : MARK.text,
            fontSize: 11,
            formatter: `${g.grade ? GRADE_LABELS[g.grade] : "Not graded"}${g.approved ? " · approved" : ""}`,
          },
        },
        { xAxis: Math.min(g.toMs, b.range.toMs) },
      ]),
    },
  });
}

/** [lo, hi] widened by 4 % of the span and rounded out to a step of 1, 2 or 5 × 10ⁿ (about five steps). */
export function niceExtent(lo: number, hi: number): [number, number] {
  if (!Number.isFinite(lo) || !Number.isFinite(hi)) return [lo, hi];
  const span = hi - lo || Math.abs(hi) || 1;
  const raw = (span * 1.08) / 5;
  const mag = Math.pow(10, Math.floor(Math.log10(raw)));
  const step = [1, 2, 5, 10].map((m) => m * mag).find((s) => s >= raw) ?? 10 * mag;
  const a = Math.floor((lo - span * 0.04) / step) * step;
  const b = Math.ceil((hi + span * 0.04) / step) * step;
  // Keep a non-negative quantity's axis from dipping below zero only to round.
  return [lo >= 0 && a < 0 ? 0 : a, b];
}

function escapeHtml(s: string) {
  return s.replace(/[&<>"']/g, (c) => `&#${c.charCodeAt(0)};`);
}

function tooltipText(items: { seriesId: string; seriesName: string; marker: string; value: (number | null)[] }[], timeZone: string) {
  if (!items.length) return "";
  const lines = [`<strong>${escapeHtml(fullTime(items[0].value[0] as number, timeZone))}</strong>`];
  for (const it of items) {
    const [, v, min, max] = it.value;
    if (v === null || v === undefined) continue;
    const p = (it.seriesId in PARAMETER_INFO ? it.seriesId : "sc25") as SeriesParameter;
    const range = min !== undefined && max !== undefined && min !== null && max !== null && min !== max ? ` (this stretch ${formatValue(p, min, false)}–${formatValue(p, max)})` : "";
    lines.push(`${it.marker}${escapeHtml(it.seriesName)}: ${escapeHtml(formatValue(p, v))}${escapeHtml(range)}`);
  }
  return lines.join("<br/>");
}
