import { z } from "zod";
import type { RuleSnapshot } from "#app/lib/quality/rule-history.ts";
import { ROLE_NAMES, SITE_KINDS, type RoleName, type SiteKind } from "#db/schema.ts";
import {
  ALERT_CONDITIONS,
  ALERT_PARAMETERS,
  CONDITION_PARAMETERS,
  CONDITION_LABELS,
  DURATION_UNITS,
  PARAMETER_NAMES,
  PARAMETER_UNITS,
  durationFactor,
  inUnit,
  unitFactor,
} from "#app/lib/quality/alert-rules.ts";

// The alert-rule form, shared by the browser (checks as people type) and the server (the real
// check). One flat set of fields; which ones a rule needs depends on its condition, so the checks
// that tie fields together live in superRefine and name the field they are about. Values are typed
// in the unit chosen beside them and stored in canonical units (app/lib/quality/alert-rules.ts).

const optionalNumber = (what: string) => z.number({ error: `Enter the ${what} as a number` }).optional();

export const ruleSchema = z
  .object({
    name: z.string({ error: "Give the rule a name" }).trim().min(3, "Use at least 3 characters").max(160, "Use at most 160 characters"),
    parameter: z.enum(ALERT_PARAMETERS, { error: "Choose what the rule watches" }),
    condition: z.enum(ALERT_CONDITIONS, { error: "Choose a condition" }),
    scope: z.enum(["all", "kinds", "sites"], { error: "Choose where the rule applies" }),
    siteIds: z.array(z.uuid()).optional(),
    siteKinds: z.array(z.enum(SITE_KINDS)).optional(),
    notifyRoles: z.array(z.enum(ROLE_NAMES), { error: "Choose who is told" }).min(1, "Choose at least one role to tell"),
    email: z.boolean().optional(),
    emailsPerHour: z
      .number({ error: "Enter a whole number of messages" })
      .int("Enter a whole number of messages")
      .min(1, "At least 1 message an hour")
      .max(60, "At most 60 messages an hour"),
    enabled: z.boolean().optional(),
    guidelineSource: z.string().trim().max(1000, "Use at most 1,000 characters").optional(),
    valueUnit: z.string().max(12).optional(),
    threshold: optionalNumber("threshold"),
    clearLevel: optionalNumber("clear level"),
    referenceC: z.enum(["20", "25"]).optional(),
    minDuration: z.number({ error: "Enter the minimum duration as a number" }).min(0, "The minimum duration cannot be negative").optional(),
    durationUnit: z.enum(["min", "h"]).optional(),
    change: z.number({ error: "Enter the change as a number" }).positive("The change must be more than zero").optional(),
    window: z.number({ error: "Enter the window as a number" }).positive("The window must be longer than zero").optional(),
    direction: z.enum(["rise", "fall", "either"]).optional(),
    readings: z.number({ error: "Enter a whole number of readings" }).int("Enter a whole number of readings").min(3, "Use at least 3 readings").max(10_000).optional(),
    tolerance: z.number({ error: "Enter the tolerance as a number" }).min(0, "The tolerance cannot be negative").optional(),
    jump: z.number({ error: "Enter the jump as a number" }).positive("The jump must be more than zero").optional(),
    rangeMin: optionalNumber("lowest value"),
    rangeMax: optionalNumber("highest value"),
    intervals: z.number({ error: "Enter a number of intervals" }).min(1.5, "Use at least 1.5 intervals").max(10_000).optional(),
  })
  .superRefine((v, ctx) => {
    const need = (field: keyof typeof v, message: string) => {
      if (v[field] === undefined) ctx.addIssue({ code: "custom", path: [field], message });
    };
    if (!CONDITION_PARAMETERS[v.condition].includes(v.parameter)) {
      ctx.addIssue({
        code: "custom",
        path: ["parameter"],
        message: `“${CONDITION_LABELS[v.condition]}” cannot watch ${PARAMETER_NAMES[v.parameter].toLowerCase()}`,
      });
    }
    if (v.scope === "sites" && !v.siteIds?.length) ctx.addIssue({ code: "custom", path: ["siteIds"], message: "Choose at least one site" });
    if (v.scope === "kinds" && !v.siteKinds?.length) ctx.addIssue({ code: "custom", path: ["siteKinds"], message: "Choose at least one kind of site" });
    if (v.valueUnit !== undefined && !PARAMETER_UNITS[v.parameter].some((u) => u.unit === v.valueUnit)) {
      ctx.addIssue({ code: "custom", path: ["valueUnit"], message: "Choose a unit for this parameter" });
    }
    switch (v.condition) {
      case "above":
      case "below": {
        need("threshold", "Enter the threshold");
        need("clearLevel", "Enter the clear level (the same as the threshold for none)");
        need("minDuration", "Enter the minimum duration (0 for at once)");
        if (v.threshold !== undefined && v.clearLevel !== undefined) {
          if (v.condition === "above" && v.clearLevel > v.threshold) {
            ctx.addIssue({ code: "custom", path: ["clearLevel"], message: "For “stays above”, the clear level must be at or below the threshold" });
          }
          if (v.condition === "below" && v.clearLevel < v.threshold) {
            ctx.addIssue({ code: "custom", path: ["clearLevel"], message: "For “stays below”, the clear level must be at or above the threshold" });
          }
        }
        if (v.minDuration !== undefined && v.minDuration * durationFactor(v.durationUnit) > 60 * 24 * 30) {
          ctx.addIssue({ code: "custom", path: ["minDuration"], message: "Use at most 30 days" });
        }
        break;
      }
      case "rate-of-change":
        need("change", "Enter the change");
        need("window", "Enter the window");
        if (v.window !== undefined && v.window * durationFactor(v.durationUnit) > 60 * 24 * 7) {
          ctx.addIssue({ code: "custom", path: ["window"], message: "Use at most 7 days" });
        }
        break;
      case "flat-line":
        need("readings", "Enter how many readings in a row");
        break;
      case "spike":
        need("jump", "Enter the jump");
        break;
      case "out-of-range":
        need("rangeMin", "Enter the lowest value the sensor can measure");
        need("rangeMax", "Enter the highest value the sensor can measure");
        if (v.rangeMin !== undefined && v.rangeMax !== undefined && v.rangeMin >= v.rangeMax) {
          ctx.addIssue({ code: "custom", path: ["rangeMax"], message: "The highest value must be above the lowest" });
        }
        break;
      case "missing-data":
        need("intervals", "Enter the number of logging intervals");
        break;
    }
  });

export type RuleInput = z.infer<typeof ruleSchema>;

/** The rule as stored: settings in canonical units, the typed units kept for editing. */
export function ruleFromInput(v: RuleInput) {
  const f = unitFactor(v.parameter, v.valueUnit);
  const unit = v.valueUnit ?? PARAMETER_UNITS[v.parameter][0].unit;
  const durationUnit = v.durationUnit ?? "min";
  const d = durationFactor(durationUnit);
  const round = (x: number) => Math.round(x * 1e9) / 1e9;
  let params: Record<string, unknown>;
  switch (v.condition) {
    case "above":
    case "below":
      params = {
        threshold: round(v.threshold! * f),
        clear: round(v.clearLevel! * f),
        minDurationMin: round(v.minDuration! * d),
        ...(v.parameter === "sc25" ? { referenceC: Number(v.referenceC ?? "25") } : {}),
        unit,
        durationUnit,
      };
      break;
    case "rate-of-change":
      params = { change: round(v.change! * f), windowMin: round(v.window! * d), direction: v.direction ?? "either", unit, durationUnit };
      break;
    case "flat-line":
      params = { readings: v.readings!, tolerance: round((v.tolerance ?? 0) * f), unit };
      break;
    case "spike":
      params = { jump: round(v.jump! * f), unit };
      break;
    case "out-of-range":
      params = { min: round(v.rangeMin! * f), max: round(v.rangeMax! * f), unit };
      break;
    case "temperature-range":
      params = {};
      break;
    case "missing-data":
      params = { intervals: v.intervals! };
      break;
  }
  return {
    name: v.name,
    parameter: v.parameter,
    condition: v.condition,
    params: JSON.stringify(params),
    site_ids: v.scope === "sites" ? [...new Set(v.siteIds ?? [])] : null,
    site_kinds: v.scope === "kinds" ? ([...new Set(v.siteKinds ?? [])] as SiteKind[]) : null,
    notify_roles: [...new Set(v.notifyRoles)] as RoleName[],
    email: v.email ?? false,
    emails_per_hour: v.emailsPerHour,
    enabled: v.enabled ?? false,
    guideline_source: v.guidelineSource ?? "",
  };
}

/** The form's starting values for a stored rule, in the units it was entered in. */
export function inputFromRule(r: RuleSnapshot): Record<string, string | string[] | boolean | undefined> {
  const p = (r.params ?? {}) as Record<string, unknown>;
  const unit = typeof p.unit === "string" && PARAMETER_UNITS[r.parameter].some((u) => u.unit === p.unit) ? p.unit : PARAMETER_UNITS[r.parameter][0].unit;
  const f = unitFactor(r.parameter, unit);
  const durationUnit = p.durationUnit === "h" ? "h" : "min";
  const d = durationFactor(durationUnit);
  const v = (x: unknown, factor = f) => (typeof x === "number" ? String(inUnit(x, factor)) : undefined);
  return {
    name: r.name,
    parameter: r.parameter,
    condition: r.condition,
    scope: r.site_ids ? "sites" : r.site_kinds ? "kinds" : "all",
    siteIds: r.site_ids ?? [],
    siteKinds: r.site_kinds ?? [],
    notifyRoles: r.notify_roles,
    email: r.email ? "on" : undefined,
    emailsPerHour: String(r.emails_per_hour),
    enabled: r.enabled ? "on" : undefined,
    guidelineSource: r.guideline_source,
    valueUnit: unit,
    durationUnit,
    threshold: v(p.threshold),
    clearLevel: v(p.clear),
    referenceC: p.referenceC === 20 ? "20" : "25",
    minDuration: v(p.minDurationMin, d),
    change: v(p.change),
    window: v(p.windowMin, d),
    direction: typeof p.direction === "string" ? p.direction : "either",
    readings: typeof p.readings === "number" ? String(p.readings) : undefined,
    tolerance: v(p.tolerance),
    jump: v(p.jump),
    rangeMin: v(p.min),
    rangeMax: v(p.max),
    intervals: typeof p.intervals === "number" ? String(p.intervals) : undefined,
  } as Record<string, string | string[] | boolean | undefined>;
}

export const NEW_RULE_DEFAULTS = {
  parameter: "sc25",
  condition: "above",
  scope: "sites",
  notifyRoles: ["officer"],
  email: "on",
  emailsPerHour: "4",
  enabled: "on",
  valueUnit: "µS/cm",
  durationUnit: "min",
  referenceC: "25",
  minDuration: "30",
  direction: "either",
  readings: "8",
  tolerance: "0",
  intervals: "4",
};

export { DURATION_UNITS };
