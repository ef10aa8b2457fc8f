// What a site's week needs from a manager, in words: the weekly summary page, the printed report
// and the e-mail digest all call this, so they agree. Pure.
import { GRADE_LABELS, type Grade } from "#app/lib/quality/grades.ts";
import { formatSlope, type Trend } from "./trend.ts";
import { formatNumber } from "#app/lib/number-format.ts";

/** Below this share of expected readings a week's figures rest on too little data (our setting). */
export const LOW_COMPLETENESS = 0.9;

export const WEEK_STATUSES = ["act", "watch", "steady", "silent"] as const;
export type WeekStatus = (typeof WEEK_STATUSES)[number];

/** Ripplemark's own words for a week's state. */
export const WEEK_STATUS_LABELS: Record<WeekStatus, string> = {
  act: "Look at this week",
  watch: "Keep watching",
  steady: "Steady",
  silent: "No readings",
};

export const WEEK_STATUS_RANK: Record<WeekStatus, number> = { act: 0, silent: 1, watch: 2, steady: 3 };

export type WeekFiguresForStatus = {
  readings: number;
  completeness: number | null;
  eventsTotal: number;
  thresholds: { parameter: string; bound: "upper" | "lower"; value: number; share: number | null }[];
  grade: string | null;
};

const PARAMETER_WORDS: Record<string, string> = {
  sc25: "specific conductance",
  temperature: "temperature",
  tds: "TDS estimate",
  salinity: "salinity estimate",
  ph: "pH",
  depth: "depth",
};

export function percentText(share: number | null | undefined, digits = 1): string {
  if (share === null || share === undefined || !Number.isFinite(share)) return "—";
  const v = share * 100;
  if (v > 0 && v < 0.1) return "< 0.1 %";
  return `${formatNumber(v, 0, digits)} %`;
}

function isGrade(g: string | null): g is Grade {
  return g !== null && g in GRADE_LABELS;
}

export function gradeText(grade: string | null): string {
  if (grade === null) return "Not graded";
  return isGrade(grade) ? GRADE_LABELS[grade] : grade;
}

/**
 * The week's status and the reasons behind it, most pressing first. "act": exceedance events, time
 * beyond a display threshold, or a grade beyond the publishing limit; "silent": no readings at all;
 * "watch": data below LOW_COMPLETENESS, a poor grade, or a rising long-term trend; otherwise "steady".
 */
export function weekStatus(week: WeekFiguresForStatus | null, trend?: Pick<Trend, "direction" | "slopePerYear"> | null): { status: WeekStatus; reasons: string[] } {
  const act: string[] = [];
  const watch: string[] = [];
  if (!week || week.readings === 0) {
    const reasons = ["No readings received this week."];
    if (trend?.direction === "rising") reasons.push(`Long-term rise of ${formatSlope(trend.slopePerYear)}.`);
    return { status: "silent", reasons };
  }
  if (week.eventsTotal > 0) act.push(`${week.eventsTotal} exceedance event${week.eventsTotal === 1 ? "" : "s"} began this week.`);
  for (const t of week.thresholds) {
    if (t.share !== null && t.share > 0) {
      act.push(`${PARAMETER_WORDS[t.parameter] ?? t.parameter} ${t.bound === "upper" ? "above" : "below"} its threshold ${percentText(t.share)} of the time.`);
    }
  }
  if (week.grade === "beyond-limit") act.push("Corrections beyond the publishing limit.");
  if (week.completeness !== null && week.completeness < LOW_COMPLETENESS) watch.push(`Only ${percentText(week.completeness, 0)} of expected readings received.`);
  if (week.grade === "poor") watch.push("Poor data grade.");
  if (trend?.direction === "rising") watch.push(`Long-term rise of ${formatSlope(trend.slopePerYear)}.`);
  if (act.length) return { status: "act", reasons: [...act, ...watch] };
  if (watch.length) return { status: "watch", reasons: watch };
  return { status: "steady", reasons: [] };
}

// ---- the heat-map's statistics -------------------------------------------------------------

export const HEATMAP_STATS = ["sc25-median", "time-above", "completeness", "events"] as const;
export type HeatmapStat = (typeof HEATMAP_STATS)[number];

export const HEATMAP_STAT_INFO: Record<HeatmapStat, { label: string; unit: string; percent: boolean }> = {
  "sc25-median": { label: "Median specific conductance", unit: "µS/cm", percent: false },
  "time-above": { label: "Time above the upper specific-conductance threshold", unit: "%", percent: true },
  completeness: { label: "Data completeness", unit: "%", percent: true },
  events: { label: "Exceedance events", unit: "events", percent: false },
};

export function isHeatmapStat(v: unknown): v is HeatmapStat {
  return typeof v === "string" && (HEATMAP_STATS as readonly string[]).includes(v);
}

/** A heat-map cell's value as text ("—" for no data). */
export function heatmapValueText(stat: HeatmapStat, value: number | null): string {
  if (value === null || !Number.isFinite(value)) return "—";
  if (HEATMAP_STAT_INFO[stat].percent) return percentText(value, 0);
  if (stat === "events") return String(Math.round(value));
  return `${formatNumber(Math.round(value), 0)} µS/cm`;
}

/**
 * Ripplemark's sequential ramp for heat-maps: one hue family from pale sand to deep estuary blue,
 * with lightness falling steadily from step to step, so the order reads the same under the common
 * colour-vision deficiencies and in greyscale print.
 */
export const HEAT_RAMP = ["#f6f1e4", "#d9e7d3", "#a9d2c5", "#74b3b4", "#4a8fa3", "#2e6a8a", "#1b4566"] as const;
