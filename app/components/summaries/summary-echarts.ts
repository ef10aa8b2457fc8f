// The charts of the summary pages, registered apart from the site charts: a heat-map and lines,
// drawn with the SVG renderer so they stay sharp when a page is printed or saved as PDF.
// echarts-for-react's ESM core build (its CommonJS entry breaks server rendering).
import { HeatmapChart, LineChart } from "echarts/charts";
import { GridComponent, LegendComponent, MarkLineComponent, TooltipComponent, VisualMapComponent } from "echarts/components";
import * as echarts from "echarts/core";
import { SVGRenderer } from "echarts/renderers";
import ReactEChartsCore from "echarts-for-react/esm/core";

echarts.use([HeatmapChart, LineChart, GridComponent, LegendComponent, MarkLineComponent, TooltipComponent, VisualMapComponent, SVGRenderer]);

export { echarts, ReactEChartsCore };
