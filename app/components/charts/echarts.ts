// The one place charts are registered: only what Ripplemark draws (lines, points, time axes,
// titles, legends, tooltips, zoom, threshold lines and shaded periods), which keeps the bundle
// small. echarts-for-react's ESM core build is used with it (its CommonJS entry breaks server
// rendering; see /work/shared/STACK.md and vite.config.ts).
import { LineChart, ScatterChart } from "echarts/charts";
import {
  AxisPointerComponent,
  DataZoomInsideComponent,
  DataZoomSliderComponent,
  GridComponent,
  LegendComponent,
  MarkAreaComponent,
  MarkLineComponent,
  TitleComponent,
  TooltipComponent,
} from "echarts/components";
import * as echarts from "echarts/core";
import { CanvasRenderer } from "echarts/renderers";
import ReactEChartsCore from "echarts-for-react/esm/core";

echarts.use([
  LineChart,
  ScatterChart,
  AxisPointerComponent,
  DataZoomInsideComponent,
  DataZoomSliderComponent,
  GridComponent,
  LegendComponent,
  MarkAreaComponent,
  MarkLineComponent,
  TitleComponent,
  TooltipComponent,
  CanvasRenderer,
]);

export { echarts, ReactEChartsCore };
