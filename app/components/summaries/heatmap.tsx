import { useMemo } from "react";
import { HEAT_RAMP, HEATMAP_STAT_INFO, heatmapValueText, type HeatmapStat } from "#app/lib/series/week-status.ts";
import { weekKey, weekSpan } from "#app/lib/series/weeks.ts";
import { echarts, ReactEChartsCore } from "./summary-echarts.ts";

// Sites × weeks, coloured by one statistic on Ripplemark's sequential ramp (HEAT_RAMP: lightness
// falls steadily, so the order survives colour-vision deficiencies and greyscale). Empty weeks stay
// blank. The same figures follow as a table (the text alternative), folded away under a summary.

export type HeatmapData = {
  stat: HeatmapStat;
  weeks: string[];
  sites: { code: string; name: string; values: (number | null)[] }[];
};

function scale(stat: HeatmapStat, data: HeatmapData) {
  const info = HEATMAP_STAT_INFO[stat];
  if (info.percent) return { min: 0, max: 1 };
  const all = data.sites.flatMap((s) => s.values).filter((v): v is number => v !== null);
  if (!all.length) return { min: 0, max: 1 };
  const min = stat === "events" ? 0 : Math.min(...all);
  const max = Math.max(...all, min + 1);
  return { min, max };
}

export function Heatmap({ data }: { data: HeatmapData }) {
  const info = HEATMAP_STAT_INFO[data.stat];
  const { min, max } = scale(data.stat, data);
  const option = useMemo(() => {
    const cells: [number, number, number | null][] = [];
    data.sites.forEach((s, y) => s.values.forEach((v, x) => cells.push([x, y, v === null ? null : info.percent ? v * 100 : v])));
    return {
      animation: false,
      grid: { left: 56, right: 16, top: 8, bottom: 78 },
      tooltip: {
        formatter: (p: { data: [number, number, number | null] }) => {
          const [x, y, v] = p.data;
          const site = data.sites[y];
          return `${site.code} ${site.name}<br/>${weekKey(data.weeks[x])} (${weekSpan(data.weeks[x])})<br/>${heatmapValueText(data.stat, v === null ? null : info.percent ? v / 100 : v)}`;
        },
      },
      xAxis: { type: "category", data: data.weeks.map((w) => weekKey(w).slice(5)), splitArea: { show: false }, axisLabel: { fontSize: 11 } },
      yAxis: { type: "category", data: data.sites.map((s) => s.code), inverse: true, axisLabel: { fontSize: 12 } },
      visualMap: {
        min: info.percent ? 0 : min,
        max: info.percent ? 100 : max,
        calculable: false,
        orient: "horizontal",
        left: "center",
        bottom: 4,
        itemHeight: 220,
        inRange: { color: [...HEAT_RAMP] },
        text: [`${info.percent ? "100 %" : Math.round(max).toLocaleString("en-GB")}`, `${info.percent ? "0 %" : Math.round(min).toLocaleString("en-GB")}`],
        textStyle: { color: "#152431" },
      },
      series: [
        {
          type: "heatmap",
          data: cells,
          itemStyle: { borderColor: "#ffffff", borderWidth: 1 },
          emphasis: { itemStyle: { borderColor: "#152431", borderWidth: 2 } },
        },
      ],
    };
  }, [data, info.percent, min, max]);

  return (
    <figure className="space-y-2">
      <div
        role="img"
        aria-label={`Heat-map of ${info.label.toLowerCase()} for ${data.sites.length} sites over ${data.weeks.length} weeks, from ${weekKey(data.weeks[0])} to ${weekKey(data.weeks[data.weeks.length - 1])}. Paler cells are lower, darker cells higher; the table below gives every value.`}
        className="rounded-lg border border-ink-100 bg-white p-2"
        data-testid="heatmap"
      >
        <ReactEChartsCore echarts={echarts} option={option} opts={{ renderer: "svg" }} style={{ height: 64 + data.sites.length * 30 + 60, width: "100%" }} notMerge />
      </div>
      <details className="text-sm">
        <summary className="cursor-pointer font-semibold">The heat-map as a table</summary>
        <div className="mt-2 overflow-x-auto">
          <table className="data-table">
            <caption className="text-left text-ink-700">{info.label} by site and ISO week</caption>
            <thead>
              <tr>
                <th scope="col">Site</th>
                {data.weeks.map((w) => (
                  <th scope="col" key={w} className="text-right whitespace-nowrap">
                    {weekKey(w)}
                  </th>
                ))}
              </tr>
            </thead>
            <tbody>
              {data.sites.map((s) => (
                <tr key={s.code}>
                  <th scope="row" className="border-b border-ink-100">{s.code}</th>
                  {s.values.map((v, i) => (
                    <td key={i} className="text-right whitespace-nowrap">
                      {heatmapValueText(data.stat, v)}
                    </td>
                  ))}
                </tr>
              ))}
            </tbody>
          </table>
        </div>
      </details>
    </figure>
  );
}
