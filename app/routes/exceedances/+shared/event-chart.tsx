import { useEffect, useMemo, useState } from "react";
import { LineChart } from "echarts/charts";
import { DataZoomInsideComponent, GridComponent, MarkAreaComponent, MarkLineComponent, TooltipComponent } from "echarts/components";
import * as echarts from "echarts/core";
import { CanvasRenderer } from "echarts/renderers";
import ReactEChartsCore from "echarts-for-react/esm/core";

// The chart around one event: the parameter's readings from the series API, the event's stretch
// shaded, its threshold and clear level drawn as lines. Only what this chart uses is registered
// (echarts' ESM core; see /work/shared/STACK.md).
echarts.use([LineChart, GridComponent, MarkAreaComponent, MarkLineComponent, TooltipComponent, DataZoomInsideComponent, CanvasRenderer]);

type Point = [number, number | null, number?, number?];

type Props = {
  siteId: string;
  parameter: string;
  parameterLabel: string;
  unit: string;
  fromMs: number;
  toMs: number;
  event: { fromMs: number; toMs: number };
  lines: { label: string; value: number; kind: "threshold" | "clear" }[];
  timeZone: string;
};

const INK = "#152431";
const AXIS = "#5b7387";
const GRID = "#e3e9ee";
const LINE = "#1f6f9f";
const THRESHOLD = "#8f3422";
const CLEAR = "#25633d";
const SHADE = "rgba(178, 68, 46, 0.14)";

/** [lo, hi] widened to multiples of a round step a tenth of a power of ten of the span. */
function niceExtent(lo: number, hi: number): [number, number] {
  if (!Number.isFinite(lo) || !Number.isFinite(hi)) return [lo, hi];
  const span = hi - lo || Math.abs(hi) || 1;
  const step = 10 ** Math.floor(Math.log10(span)) / 2;
  return [Math.floor(lo / step) * step, Math.ceil(hi / step) * step];
}

function clock(ms: number, timeZone: string) {
  return new Intl.DateTimeFormat("en-GB", { timeZone, day: "numeric", month: "short", hour: "2-digit", minute: "2-digit", hourCycle: "h23" }).format(ms);
}

export function EventChart({ siteId, parameter, parameterLabel, unit, fromMs, toMs, event, lines, timeZone }: Props) {
  const [points, setPoints] = useState<Point[] | null>(null);
  const [problem, setProblem] = useState<string | null>(null);

  useEffect(() => {
    const ac = new AbortController();
    const q = new URLSearchParams({ parameter, from: new Date(fromMs).toISOString(), to: new Date(toMs).toISOString(), points: "1500" });
    fetch(`/api/sites/${encodeURIComponent(siteId)}/series?${q}`, { headers: { Accept: "application/json" }, signal: ac.signal })
      .then(async (res) => {
        if (!res.ok) throw new Error(`The readings could not be loaded (${res.status}).`);
        const body = (await res.json()) as { points: Point[] };
        setPoints(body.points);
      })
      .catch((e: Error) => {
        if (e.name !== "AbortError") setProblem(e.message);
      });
    return () => ac.abort();
  }, [siteId, parameter, fromMs, toMs]);

  const option = useMemo(
    () => ({
      animation: false,
      textStyle: { fontFamily: "Source Sans 3, sans-serif" },
      grid: { left: 72, right: 24, top: 24, bottom: 48 },
      xAxis: {
        type: "time",
        min: fromMs,
        max: toMs,
        axisLabel: { color: AXIS, hideOverlap: true, formatter: (v: number) => clock(v, timeZone) },
        axisLine: { lineStyle: { color: AXIS } },
        splitLine: { show: true, lineStyle: { color: GRID } },
      },
      yAxis: {
        type: "value",
        scale: true,
        name: unit,
        nameTextStyle: { color: AXIS, align: "right" },
        axisLabel: { color: AXIS },
        splitLine: { lineStyle: { color: GRID } },
        // The data and every level line on the axis, with round ends (clean labels).
        min: (v: { min: number; max: number }) => niceExtent(Math.min(v.min, ...lines.map((l) => l.value)), Math.max(v.max, ...lines.map((l) => l.value)))[0],
        max: (v: { min: number; max: number }) => niceExtent(Math.min(v.min, ...lines.map((l) => l.value)), Math.max(v.max, ...lines.map((l) => l.value)))[1],
      },
      tooltip: { trigger: "axis", confine: true, valueFormatter: (v: number) => (v === null || v === undefined ? "—" : `${Math.round(v * 100) / 100} ${unit}`) },
      dataZoom: [{ type: "inside", filterMode: "none" }],
      series: [
        {
          name: parameterLabel,
          type: "line",
          showSymbol: false,
          connectNulls: false,
          color: LINE,
          lineStyle: { color: LINE, width: 2 },
          data: (points ?? []).map((p) => [p[0], p[1]]),
          markArea: {
            silent: true,
            itemStyle: { color: SHADE },
            label: { show: true, position: "insideTop", color: THRESHOLD, formatter: "Event" },
            data: [[{ xAxis: event.fromMs }, { xAxis: Math.max(event.toMs, event.fromMs + 1) }]],
          },
          markLine: lines.length
            ? {
                silent: true,
                symbol: "none",
                data: lines.map((l) => ({
                  yAxis: l.value,
                  lineStyle: { color: l.kind === "threshold" ? THRESHOLD : CLEAR, type: l.kind === "threshold" ? "dashed" : "dotted", width: 1.5 },
                  label: { formatter: l.label, position: "insideEndTop", color: l.kind === "threshold" ? THRESHOLD : CLEAR },
                })),
              }
            : undefined,
        },
      ],
    }),
    [points, fromMs, toMs, event.fromMs, event.toMs, lines, unit, parameterLabel, timeZone],
  );

  const state = problem ? "error" : points ? "ready" : "loading";
  return (
    <figure className="rounded-lg border border-ink-100 bg-white p-2" data-testid="event-chart" data-state={state}>
      <div role="img" aria-label={`${parameterLabel} around the event; the event's stretch is shaded${lines.length ? " and its levels drawn as lines" : ""}.`}>
        {points ? (
          <ReactEChartsCore echarts={echarts} option={option} style={{ height: 320, width: "100%" }} opts={{ renderer: "canvas" }} notMerge />
        ) : (
          <div className="flex h-80 items-center justify-center text-ink-500">{problem ? null : "Loading the readings…"}</div>
        )}
      </div>
      <figcaption className="mt-1 text-sm text-ink-700" aria-live="polite">
        {problem ? (
          <span role="alert" className="text-brick-700">{problem}</span>
        ) : (
          <>
            Shaded: the event. {lines.map((l) => `${l.kind === "threshold" ? "Dashed" : "Dotted"} line: ${l.label}`).join(". ")}
            {lines.length ? "." : ""} Times at the site's clock ({timeZone}). Scroll inside the chart to zoom.
          </>
        )}
      </figcaption>
    </figure>
  );
}
