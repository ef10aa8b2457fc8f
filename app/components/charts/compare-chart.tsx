import { useMemo, useRef } from "react";
import type ReactEChartsCoreType from "echarts-for-react/esm/core";
import { formatValue, PARAMETER_INFO, parameterLabelWithUnit, type SeriesParameter } from "#app/lib/series/parameters.ts";
import { echarts, ReactEChartsCore } from "./echarts.ts";
import { COMPARE_LOOKS, MARK } from "./palette.ts";
import { axisTimeLabel, fullTime } from "./time-format.ts";
import { ZoomControls } from "./zoom-controls.tsx";
import { describeResolution, useZoomableSeries, type Range, type SeriesRequest } from "./use-series.ts";

// One parameter at up to six sites on one time axis, each site with its own colour, line pattern
// and marker. Points come from the same series API as the site page; zooming fetches finer points.

type Props = {
  sites: { id: string; code: string; name: string }[];
  parameter: SeriesParameter;
  range: Range;
  timeZone: string;
  describedBy?: string;
};

export function CompareChart({ sites, parameter, range, timeZone, describedBy }: Props) {
  const requests: SeriesRequest[] = useMemo(() => sites.map((s) => ({ key: s.code, siteId: s.id, parameter })), [sites, parameter]);
  const series = useZoomableSeries(requests, range);
  const chartRef = useRef<ReactEChartsCoreType | null>(null);
  const onZoomRef = useRef(series.onZoom);
  onZoomRef.current = series.onZoom;
  const span = range.toMs - range.fromMs;
  const label = parameterLabelWithUnit(parameter);

  const option = useMemo(
    () => ({
      animation: false,
      textStyle: { fontFamily: "Source Sans 3, sans-serif" },
      title: { text: label, left: 64, top: 4, textStyle: { fontSize: 15, fontWeight: 600, color: MARK.text } },
      legend: { top: 32, left: 64, right: 24, itemWidth: 30, textStyle: { color: MARK.text } },
      grid: { left: 64, right: 24, top: 84, bottom: 96 },
      xAxis: {
        type: "time",
        min: range.fromMs,
        max: range.toMs,
        name: `Time (${timeZone})`,
        nameLocation: "middle",
        nameGap: 28,
        axisLabel: { formatter: (v: number) => axisTimeLabel(v, timeZone, span), color: MARK.axis, hideOverlap: true },
        splitLine: { show: true, lineStyle: { color: MARK.grid } },
      },
      yAxis: { type: "value", scale: true, name: PARAMETER_INFO[parameter].unit || "pH", axisLabel: { color: MARK.axis }, splitLine: { lineStyle: { color: MARK.grid } } },
      tooltip: {
        trigger: "axis",
        confine: true,
        formatter: (items: { seriesName: string; marker: string; value: (number | null)[] }[]) =>
          items.length
            ? [fullTime(items[0].value[0] as number, timeZone), ...items.filter((i) => i.value[1] !== null).map((i) => `${i.marker}${i.seriesName}: ${formatValue(parameter, i.value[1])}`)].join("<br/>")
            : "",
      },
      dataZoom: [
        { type: "inside", filterMode: "none" },
        { type: "slider", filterMode: "none", bottom: 16, height: 28, labelFormatter: (v: number) => axisTimeLabel(v, timeZone, span) },
      ],
      series: sites.map((s, i) => {
        const look = COMPARE_LOOKS[i % COMPARE_LOOKS.length];
        return {
          id: s.code,
          name: `${s.code} ${s.name}`,
          type: "line",
          data: series.shown[s.code] ?? [],
          showSymbol: false,
          symbol: look.symbol,
          symbolSize: 7,
          connectNulls: false,
          color: look.color,
          lineStyle: { color: look.color, type: look.dash, width: look.width },
        };
      }),
    }),
    [sites, series.shown, range.fromMs, range.toMs, timeZone, parameter, label, span],
  );

  const onEvents = useMemo(
    () => ({
      datazoom: (_: unknown, chart: { getOption: () => { dataZoom?: { start?: number; end?: number }[] } }) => {
        const dz = chart.getOption().dataZoom?.[0];
        if (!dz) return;
        onZoomRef.current({ fromMs: range.fromMs + ((dz.start ?? 0) / 100) * span, toMs: range.fromMs + ((dz.end ?? 100) / 100) * span });
      },
    }),
    [range.fromMs, span],
  );

  return (
    <div className="space-y-2">
      <ZoomControls chartRef={chartRef} label="Zoom and pan the chart" />
      <div
        role="img"
        aria-label={`${label} at ${sites.map((s) => s.code).join(", ")} from ${fullTime(range.fromMs, timeZone)} to ${fullTime(range.toMs, timeZone)}. The table gives the figures.`}
        aria-describedby={describedBy}
        aria-busy={series.status === "loading"}
        data-testid="compare-chart"
        data-state={series.status}
        className="rounded-lg border border-ink-100 bg-white p-2"
      >
        <ReactEChartsCore ref={chartRef} key={`${range.fromMs}-${range.toMs}-${parameter}`} echarts={echarts} option={option} style={{ height: 460, width: "100%" }} onEvents={onEvents} />
      </div>
      <p className="mt-2 text-sm text-ink-700" aria-live="polite">
        {series.status === "error" ? (
          <span role="alert" className="text-brick-700">{series.error}</span>
        ) : series.status === "loading" ? (
          "Loading chart data…"
        ) : (
          sites.map((s) => `${s.code}: ${describeResolution(series.meta[s.code])}`).join("; ") + "."
        )}
      </p>
    </div>
  );
}
