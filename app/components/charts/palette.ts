import type { SeriesParameter } from "#app/lib/series/parameters.ts";

// Ripplemark's chart palette, drawn from the app's tokens (lake, ochre, brick, reed, ink) and
// checked to stay apart under the common colour-vision deficiencies: neighbouring series differ in
// lightness as well as hue. Colour is never the only cue: every series also has its own line
// pattern and marker, shown in the legend.

type Look = { color: string; dash: "solid" | "dashed" | "dotted" | number[]; symbol: string; width: number };

export const PARAMETER_LOOK: Record<SeriesParameter, Look> = {
  sc25: { color: "#1f6f9f", dash: "solid", symbol: "circle", width: 2 },
  sc25_uncorrected: { color: "#5b7387", dash: [3, 3], symbol: "emptyCircle", width: 1.5 },
  conductivity: { color: "#b86e00", dash: [6, 4], symbol: "triangle", width: 1.5 },
  temperature: { color: "#b2442e", dash: "solid", symbol: "rect", width: 1.75 },
  tds: { color: "#2f7a4b", dash: [8, 3, 2, 3], symbol: "diamond", width: 1.75 },
  salinity: { color: "#6a4c93", dash: [2, 3], symbol: "roundRect", width: 2 },
  ph: { color: "#2f4556", dash: "solid", symbol: "pin", width: 1.5 },
  depth: { color: "#17808a", dash: [6, 4], symbol: "arrow", width: 1.5 },
  battery: { color: "#5b7387", dash: [2, 3], symbol: "emptyCircle", width: 1.5 },
};

/** Up to six sites on one chart (the compare page): colour, pattern and marker all differ. */
export const COMPARE_LOOKS: Look[] = [
  { color: "#1f6f9f", dash: "solid", symbol: "circle", width: 2 },
  { color: "#c26a00", dash: [7, 4], symbol: "triangle", width: 2 },
  { color: "#152431", dash: [2, 3], symbol: "rect", width: 2 },
  { color: "#2f7a4b", dash: [10, 3, 2, 3], symbol: "diamond", width: 2 },
  { color: "#8e4585", dash: "solid", symbol: "pin", width: 1.25 },
  { color: "#7a8a99", dash: [12, 5], symbol: "emptyCircle", width: 2.5 },
];

export const MARK = {
  upper: "#8f3422",
  lower: "#8a5a00",
  exceedanceFill: "rgba(178, 68, 46, 0.13)",
  labMeasured: "#152431",
  labCalculated: "#8a5a00",
  axis: "#5b7387",
  grid: "#e3e9ee",
  text: "#152431",
};
