// A site's state in plain words, from its latest reading and its display thresholds. Pure; the
// overview and the site page show it with a shape and a word (never colour alone).
import { formatValue, parameterLabel, type DisplayThreshold, type ThresholdParameter } from "#app/lib/series/parameters.ts";

export const SITE_STATUSES = ["above", "below", "sensor-problem", "no-recent-data", "in-range", "no-thresholds"] as const;
export type SiteStatus = (typeof SITE_STATUSES)[number];

export const SITE_STATUS_LABELS: Record<SiteStatus, string> = {
  above: "Above threshold",
  below: "Below threshold",
  "sensor-problem": "Sensor problem",
  "no-recent-data": "No recent data",
  "in-range": "In range",
  "no-thresholds": "Reporting, no thresholds set",
};

/** Sort order when sorting by status: what needs attention first. */
export const STATUS_RANK: Record<SiteStatus, number> = {
  above: 0,
  below: 1,
  "sensor-problem": 2,
  "no-recent-data": 3,
  "in-range": 4,
  "no-thresholds": 5,
};

/**
 * Without a reading for this long a site counts as having no recent data. Loggers here are read
 * out on field rounds, so a week without new data is the first sign a round or a logger was missed
 * (common practice for manually downloaded loggers; telemetry sites would use hours).
 */
export const NO_RECENT_DATA_AFTER_MS = 7 * 86_400_000;

/** Readings outside these are physically implausible for natural waters and point at the sensor (common practice). */
export const PLAUSIBLE = {
  conductivityUsPerCm: [0, 200_000],
  temperatureC: [-5, 50],
} as const;

export type LatestReading = {
  timeMs: number;
  conductivityUsPerCm: number | null;
  loggerScUsPerCm: number | null;
  temperatureC: number | null;
  values: Partial<Record<ThresholdParameter, number | null>>;
  qualityFlag: string | null;
};

export type StatusResult = { status: SiteStatus; reasons: string[] };

export function siteStatus(
  latest: LatestReading | null,
  thresholds: readonly DisplayThreshold[],
  nowMs: number,
  options: { referenceC?: number; staleAfterMs?: number } = {},
): StatusResult {
  const staleAfter = options.staleAfterMs ?? NO_RECENT_DATA_AFTER_MS;
  if (!latest) return { status: "no-recent-data", reasons: ["No readings yet."] };
  if (nowMs - latest.timeMs > staleAfter) {
    return { status: "no-recent-data", reasons: [`No reading for more than ${Math.round(staleAfter / 86_400_000)} days.`] };
  }

  const sensor: string[] = [];
  if (latest.qualityFlag) sensor.push(`The latest reading is flagged: ${latest.qualityFlag}.`);
  const cond = latest.conductivityUsPerCm ?? latest.loggerScUsPerCm;
  if (cond === null) sensor.push("The latest reading has no conductivity.");
  else if (cond < PLAUSIBLE.conductivityUsPerCm[0] || cond > PLAUSIBLE.conductivityUsPerCm[1]) {
    sensor.push(`Conductivity ${cond} µS/cm is not plausible for natural water.`);
  }
  const t = latest.temperatureC;
  if (t !== null && (t < PLAUSIBLE.temperatureC[0] || t > PLAUSIBLE.temperatureC[1])) {
    sensor.push(`Temperature ${t} °C is not plausible for natural water.`);
  }
  if (sensor.length) return { status: "sensor-problem", reasons: sensor };

  const above: string[] = [];
  const below: string[] = [];
  for (const th of thresholds) {
    const v = latest.values[th.parameter];
    if (v === null || v === undefined) continue;
    const name = parameterLabel(th.parameter, options.referenceC);
    if (th.bound === "upper" && v > th.value) above.push(`${name} ${formatValue(th.parameter, v)} is above ${formatValue(th.parameter, th.value)}.`);
    if (th.bound === "lower" && v < th.value) below.push(`${name} ${formatValue(th.parameter, v)} is below ${formatValue(th.parameter, th.value)}.`);
  }
  if (above.length) return { status: "above", reasons: [...above, ...below] };
  if (below.length) return { status: "below", reasons: below };
  if (!thresholds.length) return { status: "no-thresholds", reasons: ["No display thresholds are set for this site."] };
  return { status: "in-range", reasons: [] };
}

/** "3 h ago", "2 days ago", "just now" — staleness for a card. */
export function formatAge(ageMs: number): string {
  if (ageMs < 0) return "in the future";
  const min = Math.floor(ageMs / 60_000);
  if (min < 2) return "just now";
  if (min < 120) return `${min} min ago`;
  const h = Math.floor(min / 60);
  if (h < 48) return `${h} h ago`;
  const d = Math.floor(h / 24);
  if (d < 60) return `${d} days ago`;
  const months = Math.floor(d / 30.44);
  if (months < 24) return `${months} months ago`;
  return `${Math.floor(d / 365.25)} years ago`;
}
