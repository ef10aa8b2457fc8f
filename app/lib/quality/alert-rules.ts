// Alert rules: the conditions Ripplemark checks, their settings, units, words and who sees them.
// Shared by browser and server; pure. Settings are stored in canonical units (µS/cm, mg/L, °C, m,
// V, minutes); the units a person typed are kept beside them for editing.
import { z } from "zod";
import type { AlertConditionName, AlertParameterName, RoleName, SiteKind } from "#db/schema.ts";
import { compensationFactor, LINEAR_TEMPERATURE_RANGE_C, type CompensationMethod } from "#app/lib/water/compensation.ts";
import { ISO_7888_F25_TABLE_END_C, ISO_7888_F25_TABLE_START_C } from "#app/lib/water/iso7888-table.ts";

export type { AlertConditionName, AlertParameterName };

export const ALERT_PARAMETERS = ["sc25", "conductivity", "temperature", "tds", "salinity", "ph", "depth", "battery"] as const satisfies readonly AlertParameterName[];

export const ALERT_CONDITIONS = [
  "above",
  "below",
  "rate-of-change",
  "flat-line",
  "spike",
  "out-of-range",
  "temperature-range",
  "missing-data",
] as const satisfies readonly AlertConditionName[];

/** Checks on the sensor rather than the water: technicians see these when they are told about them. */
export const SENSOR_CHECKS: readonly AlertConditionName[] = ["flat-line", "spike", "out-of-range", "temperature-range", "missing-data"];

export function isSensorCheck(condition: AlertConditionName) {
  return SENSOR_CHECKS.includes(condition);
}

export const CONDITION_LABELS: Record<AlertConditionName, string> = {
  above: "Stays above a level",
  below: "Stays below a level",
  "rate-of-change": "Changes fast",
  "flat-line": "Stuck at one value",
  spike: "Single-reading jump",
  "out-of-range": "Outside the sensor's range",
  "temperature-range": "Temperature outside the compensation method's range",
  "missing-data": "Readings missing",
};

export const CONDITION_HELP: Record<AlertConditionName, string> = {
  above: "An event starts when the value has stayed above the threshold for the minimum duration, and ends when it falls to the clear level.",
  below: "An event starts when the value has stayed below the threshold for the minimum duration, and ends when it rises to the clear level.",
  "rate-of-change": "An event while the value rises or falls by more than the given amount within the window, such as a salt pulse or storm dilution arriving.",
  "flat-line": "An event while the sensor reports the same value for the given number of readings in a row.",
  spike: "An event for a reading far from both the reading before and the reading after it.",
  "out-of-range": "An event while readings are outside the range the sensor can physically measure.",
  "temperature-range":
    "An event while water temperature is outside the range the site's compensation method is valid for (ISO 7888 table: 0.0–35.9 °C; linear coefficient: −5 to 100 °C).",
  "missing-data": "An event for each stretch with no reading for longer than the given number of logging intervals.",
};

export const PARAMETER_NAMES: Record<AlertParameterName, string> = {
  sc25: "Specific conductance",
  conductivity: "Raw conductivity at water temperature",
  temperature: "Water temperature",
  tds: "TDS estimate",
  salinity: "Practical salinity estimate",
  ph: "pH",
  depth: "Depth",
  battery: "Logger battery",
};

/** Which parameters each condition may watch. */
export const CONDITION_PARAMETERS: Record<AlertConditionName, readonly AlertParameterName[]> = {
  above: ["sc25", "conductivity", "temperature", "tds", "salinity", "ph", "depth"],
  below: ["sc25", "conductivity", "temperature", "tds", "salinity", "ph", "depth", "battery"],
  "rate-of-change": ["sc25", "conductivity", "temperature", "tds", "salinity", "ph", "depth"],
  "flat-line": ["conductivity", "temperature", "ph", "depth", "sc25"],
  spike: ["conductivity", "sc25", "temperature", "ph", "depth"],
  "out-of-range": ["conductivity", "temperature", "ph", "depth", "battery"],
  "temperature-range": ["temperature"],
  "missing-data": ["conductivity", "temperature", "sc25", "ph", "depth"],
};

// ---- units ------------------------------------------------------------------------------------

/** A unit a person may type a value in: canonical value = typed × factor. */
export type UnitChoice = { unit: string; factor: number };

export const PARAMETER_UNITS: Record<AlertParameterName, readonly UnitChoice[]> = {
  sc25: [{ unit: "µS/cm", factor: 1 }, { unit: "mS/cm", factor: 1000 }],
  conductivity: [{ unit: "µS/cm", factor: 1 }, { unit: "mS/cm", factor: 1000 }],
  tds: [{ unit: "mg/L", factor: 1 }, { unit: "g/L", factor: 1000 }],
  temperature: [{ unit: "°C", factor: 1 }],
  salinity: [{ unit: "PSS-78", factor: 1 }],
  ph: [{ unit: "pH units", factor: 1 }],
  depth: [{ unit: "m", factor: 1 }, { unit: "cm", factor: 0.01 }],
  battery: [{ unit: "V", factor: 1 }],
};

export const CANONICAL_UNIT: Record<AlertParameterName, string> = {
  sc25: "µS/cm",
  conductivity: "µS/cm",
  tds: "mg/L",
  temperature: "°C",
  salinity: "PSS-78",
  ph: "",
  depth: "m",
  battery: "V",
};

export const DURATION_UNITS = [{ unit: "min", factor: 1 }, { unit: "h", factor: 60 }] as const satisfies readonly UnitChoice[];
export type DurationUnit = (typeof DURATION_UNITS)[number]["unit"];

export function unitFactor(parameter: AlertParameterName, unit: string | undefined): number {
  return PARAMETER_UNITS[parameter].find((u) => u.unit === unit)?.factor ?? 1;
}

export function durationFactor(unit: string | undefined): number {
  return DURATION_UNITS.find((u) => u.unit === unit)?.factor ?? 1;
}

/** Readable decimals for a canonical value shown in a unit (never binary noise such as 2.4999999). */
export function inUnit(value: number, factor: number): number {
  return Math.round((value / factor) * 1e9) / 1e9;
}

// ---- stored settings (canonical units) ---------------------------------------------------------

const num = z.number().finite();
const display = { unit: z.string().max(12).optional(), durationUnit: z.enum(["min", "h"]).optional() };

export const THRESHOLD_PARAMS = z.object({
  threshold: num,
  clear: num,
  minDurationMin: num.min(0).max(60 * 24 * 30),
  /** For specific conductance: the reference temperature the levels are stated at (a guideline may say "at 20 °C"). */
  referenceC: z.union([z.literal(20), z.literal(25)]).optional(),
  ...display,
});
export const RATE_PARAMS = z.object({
  change: num.positive(),
  windowMin: num.positive().max(60 * 24 * 7),
  direction: z.enum(["rise", "fall", "either"]),
  ...display,
});
export const FLAT_PARAMS = z.object({ readings: z.number().int().min(3).max(10_000), tolerance: num.min(0), ...display });
export const SPIKE_PARAMS = z.object({ jump: num.positive(), ...display });
export const RANGE_PARAMS = z.object({ min: num, max: num, ...display });
export const TEMPERATURE_RANGE_PARAMS = z.object({});
export const MISSING_PARAMS = z.object({ intervals: num.min(1.5).max(10_000) });

export type ThresholdParams = z.infer<typeof THRESHOLD_PARAMS>;
export type RateParams = z.infer<typeof RATE_PARAMS>;
export type FlatParams = z.infer<typeof FLAT_PARAMS>;
export type SpikeParams = z.infer<typeof SPIKE_PARAMS>;
export type RangeParams = z.infer<typeof RANGE_PARAMS>;
export type MissingParams = z.infer<typeof MISSING_PARAMS>;

export type RuleCondition =
  | { condition: "above" | "below"; params: ThresholdParams }
  | { condition: "rate-of-change"; params: RateParams }
  | { condition: "flat-line"; params: FlatParams }
  | { condition: "spike"; params: SpikeParams }
  | { condition: "out-of-range"; params: RangeParams }
  | { condition: "temperature-range"; params: Record<string, never> }
  | { condition: "missing-data"; params: MissingParams };

const PARAMS_SCHEMA: Record<AlertConditionName, z.ZodType> = {
  above: THRESHOLD_PARAMS,
  below: THRESHOLD_PARAMS,
  "rate-of-change": RATE_PARAMS,
  "flat-line": FLAT_PARAMS,
  spike: SPIKE_PARAMS,
  "out-of-range": RANGE_PARAMS,
  "temperature-range": TEMPERATURE_RANGE_PARAMS,
  "missing-data": MISSING_PARAMS,
};

/** The stored settings of a rule, checked; null when they do not fit the condition (the rule is then skipped, never guessed). */
export function parseRuleCondition(condition: AlertConditionName, params: unknown): RuleCondition | null {
  const schema = PARAMS_SCHEMA[condition];
  if (!schema) return null;
  const parsed = schema.safeParse(params);
  if (!parsed.success) return null;
  const rc = { condition, params: parsed.data } as RuleCondition;
  if (rc.condition === "above" && rc.params.clear > rc.params.threshold) return null;
  if (rc.condition === "below" && rc.params.clear < rc.params.threshold) return null;
  if (rc.condition === "out-of-range" && !(rc.params.min < rc.params.max)) return null;
  return rc;
}

// ---- where a rule applies, and who sees it --------------------------------------------------------

export type RuleScope = { siteIds: string[] | null; siteKinds: SiteKind[] | null };

export function ruleCoversSite(scope: RuleScope, site: { id: string; kind: SiteKind }) {
  if (scope.siteIds) return scope.siteIds.includes(site.id);
  if (scope.siteKinds) return scope.siteKinds.includes(site.kind);
  return true;
}

/**
 * Officers and admins see every rule (and may change them). Managers see the rules that notify
 * managers, read-only. Technicians see the sensor checks that notify technicians, read-only.
 */
export function ruleVisibleTo(role: RoleName, rule: { condition: AlertConditionName; notify_roles: readonly RoleName[] }) {
  if (role === "officer" || role === "admin") return true;
  if (role === "manager") return rule.notify_roles.includes("manager");
  return isSensorCheck(rule.condition) && rule.notify_roles.includes("technician");
}

export const RULE_EDIT_ROLES: readonly RoleName[] = ["officer", "admin"];

// ---- levels as applied at a site -------------------------------------------------------------------

export type SiteDerivation = { compensation_method: "linear" | "natural-water"; alpha_per_c: number; reference_c: number };

function methodOf(site: SiteDerivation, referenceC: number): CompensationMethod {
  return site.compensation_method === "natural-water"
    ? { kind: "natural-water", referenceC: referenceC === 20 ? 20 : 25 }
    : { kind: "linear", alphaPerC: site.alpha_per_c, referenceC };
}

/**
 * A specific-conductance level stated at `statedAtC` (20 or 25 °C), expressed at the site's own
 * reference temperature with the site's compensation method: κ_site = f × κ_stated, where f is the
 * compensation factor from the stated temperature to the site's reference (Standard Methods 2510 B
 * linear form, or the ISO 7888 table with f20 = f25/1.116 — see app/lib/water/compensation.ts). With
 * the common α = 1.91 %/°C, 2 500 µS/cm at 20 °C is 2 500 / (1 − 5 × 0.0191) = 2 764 µS/cm at 25 °C.
 */
export function levelAtSiteReference(value: number, statedAtC: number | undefined, site: SiteDerivation): number {
  if (statedAtC === undefined || statedAtC === site.reference_c) return value;
  return value * compensationFactor(statedAtC, methodOf(site, site.reference_c));
}

/** The temperatures a site's compensation method is valid for (°C). */
export function compensationRangeC(site: Pick<SiteDerivation, "compensation_method">): [number, number] {
  return site.compensation_method === "natural-water"
    ? [ISO_7888_F25_TABLE_START_C, ISO_7888_F25_TABLE_END_C]
    : [LINEAR_TEMPERATURE_RANGE_C[0], LINEAR_TEMPERATURE_RANGE_C[1]];
}

// ---- words -------------------------------------------------------------------------------------------

function fmt(value: number, decimals = 2) {
  return value.toLocaleString("en-GB", { maximumFractionDigits: decimals });
}

/** "2.5 mS/cm", "2,500 µS/cm": a canonical value in the unit a person chose. */
export function showValue(parameter: AlertParameterName, canonical: number, unit?: string): string {
  const choice = PARAMETER_UNITS[parameter].find((u) => u.unit === unit) ?? PARAMETER_UNITS[parameter][0];
  const text = fmt(inUnit(canonical, choice.factor), parameter === "ph" || choice.factor > 1 ? 3 : 2);
  return parameter === "ph" ? `pH ${text}` : `${text} ${choice.unit}`;
}

export function showMinutes(minutes: number, unit?: string): string {
  if (unit === "h" || (unit === undefined && minutes >= 120 && minutes % 60 === 0)) return `${fmt(minutes / 60)} h`;
  return `${fmt(minutes)} min`;
}

/** A rule's condition in one line, e.g. "above 2,500 µS/cm at 20 °C for 1 h; clears at 2,375 µS/cm". */
export function describeCondition(parameter: AlertParameterName, rc: RuleCondition): string {
  const p = rc.params as Record<string, unknown> & { unit?: string; durationUnit?: string };
  const v = (x: number) => showValue(parameter, x, p.unit);
  switch (rc.condition) {
    case "above":
    case "below": {
      const at = parameter === "sc25" ? ` at ${rc.params.referenceC ?? 25} °C` : "";
      const held = rc.params.minDurationMin > 0 ? ` for at least ${showMinutes(rc.params.minDurationMin, rc.params.durationUnit)}` : "";
      return `${rc.condition} ${v(rc.params.threshold)}${at}${held}; clears at ${v(rc.params.clear)}`;
    }
    case "rate-of-change": {
      const dir = rc.params.direction === "rise" ? "rises" : rc.params.direction === "fall" ? "falls" : "rises or falls";
      return `${dir} by more than ${v(rc.params.change)} within ${showMinutes(rc.params.windowMin, rc.params.durationUnit)}`;
    }
    case "flat-line":
      return rc.params.tolerance > 0
        ? `${rc.params.readings} readings in a row within ${v(rc.params.tolerance)} of each other`
        : `${rc.params.readings} identical readings in a row`;
    case "spike":
      return `a reading more than ${v(rc.params.jump)} away from both neighbours`;
    case "out-of-range":
      return `below ${v(rc.params.min)} or above ${v(rc.params.max)}`;
    case "temperature-range":
      return "outside the compensation method's valid temperatures";
    case "missing-data":
      return `no reading for more than ${fmt(rc.params.intervals)} logging intervals`;
  }
}

export type ScopeSite = { id: string; code: string; kind: SiteKind };

export function describeScope(scope: RuleScope, sites: readonly ScopeSite[], kindLabels: Record<SiteKind, string>): string {
  if (scope.siteIds) {
    const codes = scope.siteIds.map((id) => sites.find((s) => s.id === id)?.code ?? "a removed site");
    return codes.length ? codes.join(", ") : "no sites";
  }
  if (scope.siteKinds) return `sites of kind ${scope.siteKinds.map((k) => kindLabels[k]).join(", ")}`;
  return "every site";
}
