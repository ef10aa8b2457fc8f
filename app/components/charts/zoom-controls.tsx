import type { RefObject } from "react";
import type ReactEChartsCore from "echarts-for-react/esm/core";

// Buttons that zoom and pan a chart, for keyboard users (the wheel and the slider need a pointer).
// They move the chart's own zoom window, so the chart fetches finer points just as for the mouse.

type Zoomable = { getOption: () => { dataZoom?: { start?: number; end?: number }[] }; dispatchAction: (a: object) => void };

function current(chart: Zoomable) {
  const dz = chart.getOption().dataZoom?.[0];
  return { start: dz?.start ?? 0, end: dz?.end ?? 100 };
}

export function ZoomControls({ chartRef, label }: { chartRef: RefObject<ReactEChartsCore | null>; label: string }) {
  const move = (f: (w: { start: number; end: number }) => { start: number; end: number }) => {
    const chart = chartRef.current?.getEchartsInstance() as unknown as Zoomable | undefined;
    if (!chart) return;
    const next = f(current(chart));
    const start = Math.max(0, Math.min(100, next.start));
    const end = Math.max(start + 0.05, Math.min(100, next.end));
    chart.dispatchAction({ type: "dataZoom", dataZoomIndex: 0, start, end });
  };
  const zoom = (factor: number) =>
    move(({ start, end }) => {
      const mid = (start + end) / 2;
      const half = ((end - start) * factor) / 2;
      return { start: mid - half, end: mid + half };
    });
  const pan = (share: number) =>
    move(({ start, end }) => {
      const d = (end - start) * share;
      const shift = d < 0 ? Math.max(d, -start) : Math.min(d, 100 - end);
      return { start: start + shift, end: end + shift };
    });
  return (
    <div role="group" aria-label={label} className="flex flex-wrap gap-1.5 text-sm">
      <button type="button" className="btn-quiet py-1" onClick={() => zoom(0.5)}>Zoom in</button>
      <button type="button" className="btn-quiet py-1" onClick={() => zoom(2)}>Zoom out</button>
      <button type="button" className="btn-quiet py-1" onClick={() => pan(-0.5)}>
        <span aria-hidden="true">← </span>Earlier
      </button>
      <button type="button" className="btn-quiet py-1" onClick={() => pan(0.5)}>
        Later<span aria-hidden="true"> →</span>
      </button>
      <button type="button" className="btn-quiet py-1" onClick={() => move(() => ({ start: 0, end: 100 }))}>Whole range</button>
    </div>
  );
}
