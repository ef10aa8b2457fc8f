// The parameters a site's charts and the series API know, with their units and labels. Shared by
// browser and server. The keys are the only names accepted from a URL; the server maps each key to
// its column through its own allow-list (app/models/series.server.ts), never by string building.
import { formatNumber } from "#app/lib/number-format.ts";

export const SERIES_PARAMETERS = ["sc25", "conductivity", "temperature", "tds", "salinity", "ph", "depth", "battery"] as const;
/** Series charted only on request: specific conductance before field-visit corrections (0005, 0007). */
export const OPTIONAL_SERIES_PARAMETERS = ["sc25_uncorrected"] as const;
export const ALL_SERIES_PARAMETERS = [...SERIES_PARAMETERS, ...OPTIONAL_SERIES_PARAMETERS] as const;
export type SeriesParameter = (typeof ALL_SERIES_PARAMETERS)[number];

export type ParameterInfo = {
  /** A short label for legends and table rows. */
  label: string;
  /** Canonical unit as stored ("" for dimensionless pH). */
  unit: string;
  /** Decimal places worth showing. */
  decimals: number;
  /** Derived from conductivity and temperature with the site's settings (a screening estimate where noted). */
  derived: boolean;
  estimate: boolean;
};

export const PARAMETER_INFO: Record<SeriesParameter, ParameterInfo> = {
  sc25: { label: "Specific conductance", unit: "µS/cm", decimals: 0, derived: true, estimate: false },
  sc25_uncorrected: { label: "Specific conductance, uncorrected", unit: "µS/cm", decimals: 0, derived: true, estimate: false },
  conductivity: { label: "Conductivity at water temperature", unit: "µS/cm", decimals: 0, derived: false, estimate: false },
  temperature: { label: "Water temperature", unit: "°C", decimals: 2, derived: false, estimate: false },
  tds: { label: "TDS estimate", unit: "mg/L", decimals: 0, derived: true, estimate: true },
  salinity: { label: "Practical salinity estimate", unit: "PSS-78", decimals: 2, derived: true, estimate: true },
  ph: { label: "pH", unit: "", decimals: 2, derived: false, estimate: false },
  depth: { label: "Depth", unit: "m", decimals: 3, derived: false, estimate: false },
  battery: { label: "Logger battery", unit: "V", decimals: 2, derived: false, estimate: false },
};

export function isSeriesParameter(value: unknown): value is SeriesParameter {
  return typeof value === "string" && (SERIES_PARAMETERS as readonly string[]).includes(value);
}

/** "Specific conductance at 25 °C" — the reference temperature is the site's (20 or 25 °C). */
export function parameterLabel(p: SeriesParameter, referenceC = 25): string {
  if (p === "sc25_uncorrected") return `Specific conductance at ${referenceC} °C before field-visit corrections`;
  return p === "sc25" ? `Specific conductance at ${referenceC} °C` : PARAMETER_INFO[p].label;
}

/** "Specific conductance at 25 °C (µS/cm)", or the label alone for a dimensionless parameter. */
export function parameterLabelWithUnit(p: SeriesParameter, referenceC = 25): string {
  const unit = PARAMETER_INFO[p].unit;
  return unit ? `${parameterLabel(p, referenceC)} (${unit})` : parameterLabel(p, referenceC);
}

/** The parameters a display threshold may be set for, and which bounds make sense for each. */
export const THRESHOLD_PARAMETERS = ["sc25", "temperature", "tds", "salinity", "ph", "depth"] as const satisfies readonly SeriesParameter[];
export type ThresholdParameter = (typeof THRESHOLD_PARAMETERS)[number];
export type ThresholdBound = "upper" | "lower";

export type DisplayThreshold = { parameter: ThresholdParameter; bound: ThresholdBound; value: number };

/** A number with the parameter's decimals and unit, e.g. "1,240 µS/cm"; "—" for null. */
export function formatValue(p: SeriesParameter, value: number | null | undefined, withUnit = true): string {
  if (value === null || value === undefined || !Number.isFinite(value)) return "—";
  const info = PARAMETER_INFO[p];
  const text = formatNumber(value, info.decimals);
  return withUnit && info.unit ? `${text} ${info.unit}` : text;
}
