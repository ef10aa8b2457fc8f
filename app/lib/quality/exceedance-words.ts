// Words and figures for exceedance events, shared by the pages and the e-mails. Pure.
import type { AlertConditionName, AlertParameterName, ExceedanceOutcome, ExceedanceStatus } from "#db/schema.ts";
import { showValue } from "./alert-rules.ts";

export const OUTCOMES = ["water-quality", "sensor-fault", "calibration", "field-work", "undetermined"] as const satisfies readonly ExceedanceOutcome[];

/** An officer's verdict on what caused an event (our own words). */
export const OUTCOME_LABELS: Record<ExceedanceOutcome, string> = {
  "water-quality": "Real change in the water",
  "sensor-fault": "Sensor fault or fouling",
  calibration: "Calibration off",
  "field-work": "Field work or handling",
  undetermined: "Cause not yet known",
};

export const OUTCOME_HELP: Record<ExceedanceOutcome, string> = {
  "water-quality": "The water really changed: the readings stand and count in summaries.",
  "sensor-fault": "The sensor misread (fouling, a stuck or failing probe). Its readings can be flagged and left out of summaries and later checks.",
  calibration: "The sensor drifted or was set up wrongly; a correction from field visits should follow.",
  "field-work": "Caused by a visit: cleaning, a calibration check, the logger out of the water.",
  undetermined: "Looked at, but the cause is not clear yet.",
};

export const STATUSES = ["open", "closed", "withdrawn"] as const satisfies readonly ExceedanceStatus[];

export const STATUS_LABELS: Record<ExceedanceStatus, string> = {
  open: "Open",
  closed: "Closed",
  withdrawn: "No longer in the data",
};

/** What a flag on readings says: the value set in readings.quality_flag by an event judged a sensor fault. */
export const SENSOR_FLAG = "sensor";

/** "3 h 20 min", "2 days 4 h", "45 min", "under a minute". */
export function formatDuration(seconds: number): string {
  if (!(seconds >= 60)) return seconds > 0 ? "under a minute" : "a single reading";
  const min = Math.round(seconds / 60);
  const days = Math.floor(min / 1440);
  const hours = Math.floor((min % 1440) / 60);
  const mins = min % 60;
  if (days > 0) return `${days} ${days === 1 ? "day" : "days"}${hours ? ` ${hours} h` : ""}`;
  if (hours > 0) return `${hours} h${mins ? ` ${mins} min` : ""}`;
  return `${mins} min`;
}

/**
 * The peak of an event in words with units: the extreme value for levels and sensor checks, the
 * largest change for rate-of-change events, the gap length for missing data.
 */
export function formatPeak(condition: AlertConditionName, parameter: AlertParameterName, peakValue: number, unit?: string): string {
  switch (condition) {
    case "rate-of-change":
      return `${peakValue < 0 ? "fell" : "rose"} by ${showValue(parameter, Math.abs(peakValue), unit)}`;
    case "missing-data":
      return `no readings for ${formatDuration(peakValue * 3600)}`;
    default:
      return showValue(parameter, peakValue, unit);
  }
}

/** What the peak column means for a condition (table headers, e-mails). */
export function peakLabel(condition: AlertConditionName): string {
  if (condition === "rate-of-change") return "Largest change";
  if (condition === "missing-data") return "Gap";
  if (condition === "below") return "Lowest value";
  if (condition === "flat-line") return "Stuck value";
  if (condition === "above") return "Highest value";
  return "Most extreme value";
}

