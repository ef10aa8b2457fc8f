// A field visit as the technician enters it, its validation, and the stored columns computed from it.
// Shared: the visit form validates and assesses it live in the browser with this code, the server
// validates and computes again on save.
import { z } from "zod";
import { assessVisit, STANDARD_CHOICES, STANDARD_TEMPERATURE_RANGE_C, type StandardChoice, type VisitAssessment } from "#app/lib/quality/calibration.ts";
import { wallTimeToInstant } from "#app/lib/zoned-time.ts";

export const MAX_CHECKS = 6;
export const MAX_PHOTOS = 12;
export const MAX_PHOTO_BYTES = 15 * 1024 * 1024;
export const PHOTO_CONTENT_TYPES = ["image/jpeg", "image/png", "image/webp", "image/heic"] as const;
/** Photo object keys: visit-photos/<uuid>/<file name as stored> (made by the server, checked on save). */
export const PHOTO_KEY = /^visit-photos\/[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}\/[\w.\- ]{1,120}$/;

const MAX_SC_US_PER_CM = 300_000; // beyond sea water ×5: a unit slip (mS/cm entered as µS/cm)

function sc(what: string) {
  return z
    .number({ error: `Enter the ${what} as a number of µS/cm, or leave it blank` })
    .gt(0, `The ${what} must be more than 0 µS/cm`)
    .max(MAX_SC_US_PER_CM, `That ${what} is more than ${MAX_SC_US_PER_CM.toLocaleString("en-GB")} µS/cm: check the unit`)
    .optional();
}

function temperature(what: string) {
  return z
    .number({ error: `Enter the ${what} as a number of °C, or leave it blank` })
    .min(-5, `The ${what} must be between −5 and 45 °C`)
    .max(45, `The ${what} must be between −5 and 45 °C`)
    .optional();
}

export const checkSchema = z
  .object({
    standard: z.enum(STANDARD_CHOICES, { error: "Choose the standard" }),
    customValue: z
      .number({ error: "Enter the standard's value as a number of µS/cm" })
      .gt(0, "The standard's value must be more than 0 µS/cm")
      .max(MAX_SC_US_PER_CM, "That value is too large: check the unit")
      .optional(),
    temperature: z
      .number({ error: "Enter the standard's temperature in °C" })
      .min(STANDARD_TEMPERATURE_RANGE_C[0], `The KCl table covers ${STANDARD_TEMPERATURE_RANGE_C[0]}–${STANDARD_TEMPERATURE_RANGE_C[1]} °C`)
      .max(STANDARD_TEMPERATURE_RANGE_C[1], `The KCl table covers ${STANDARD_TEMPERATURE_RANGE_C[0]}–${STANDARD_TEMPERATURE_RANGE_C[1]} °C`),
    sensor: z
      .number({ error: "Enter the sensor's reading in the standard (µS/cm)" })
      .gt(0, "The sensor reading must be more than 0 µS/cm")
      .max(MAX_SC_US_PER_CM, "That reading is too large: check the unit"),
  })
  .superRefine((c, ctx) => {
    if (c.standard === "custom" && c.customValue === undefined) {
      ctx.addIssue({ code: "custom", path: ["customValue"], message: "Enter the standard's value at its temperature (µS/cm)" });
    }
  });

export type SiteChoice = { id: string; timeZone: string; loggerIds: readonly string[] };

const FUTURE_SLACK_MS = 5 * 60_000;

/**
 * The visit form: site and logger from the lists, the visit time as the site's wall time, readings,
 * checks, recalibration, notes and photo keys. `reason` is asked for only when the change touches an
 * approved period of record (the server says so). The output carries the instant.
 */
export function visitSchema(sites: readonly SiteChoice[], now: () => Date = () => new Date()) {
  return z
    .object({
      siteId: z.string({ error: "Choose the site" }).refine((id) => sites.some((s) => s.id === id), "Choose a site from the list"),
      loggerId: z.string({ error: "Choose the logger" }),
      visitedAt: z.string({ error: "Enter when you were at the site" }).trim().min(1, "Enter when you were at the site"),
      beforeSc: sc("reading before cleaning"),
      beforeTemperature: temperature("temperature before cleaning"),
      afterSc: sc("reading after cleaning"),
      afterTemperature: temperature("temperature after cleaning"),
      meterSc: sc("field meter reading"),
      meterTemperature: temperature("field meter temperature"),
      checks: z.array(checkSchema).max(MAX_CHECKS, `At most ${MAX_CHECKS} calibration checks`).default([]),
      recalibrated: z.boolean().default(false),
      notes: z.string().trim().max(2000, "Use at most 2000 characters").default(""),
      photoKeys: z.array(z.string().regex(PHOTO_KEY, "A photo could not be matched to its upload")).max(MAX_PHOTOS, `At most ${MAX_PHOTOS} photos`).default([]),
      reason: z.string().trim().max(500, "Use at most 500 characters").optional(),
    })
    .superRefine((v, ctx) => {
      const site = sites.find((s) => s.id === v.siteId);
      if (!site) return;
      if (!site.loggerIds.includes(v.loggerId)) {
        ctx.addIssue({ code: "custom", path: ["loggerId"], message: "Choose a logger deployed at this site" });
      }
      if (typeof v.visitedAt !== "string" || !v.visitedAt) return;
      const wall = wallTimeToInstant(v.visitedAt, site.timeZone);
      const problem = !wall.ok
        ? wall.reason === "nonexistent"
          ? "That time did not exist at the site (the clocks went forward)"
          : "Enter the date and time, such as 2025-07-14 10:00"
        : wall.instant.getTime() > now().getTime() + FUTURE_SLACK_MS
          ? "The visit time is in the future"
          : null;
      if (problem) ctx.addIssue({ code: "custom", path: ["visitedAt"], message: problem });
      if (v.beforeSc !== undefined && v.afterSc === undefined) {
        ctx.addIssue({ code: "custom", path: ["afterSc"], message: "Enter the reading after cleaning too, or neither" });
      }
    })
    .transform((v) => {
      const site = sites.find((s) => s.id === v.siteId)!;
      const wall = wallTimeToInstant(v.visitedAt, site.timeZone);
      if (!wall.ok) throw new Error("unreachable: the refinement checked the visit time");
      return { ...v, visitedAtInstant: wall.instant };
    });
}

export type VisitInput = z.output<ReturnType<typeof visitSchema>>;

export type VisitNumbers = Pick<VisitInput, "beforeSc" | "beforeTemperature" | "afterSc" | "afterTemperature" | "meterSc" | "meterTemperature" | "checks">;

/** The assessment of a visit's numbers (same function in the browser and on the server). */
export function assessVisitInput(v: VisitNumbers): VisitAssessment {
  return assessVisit({
    before: { scUsPerCm: v.beforeSc, temperatureC: v.beforeTemperature },
    after: { scUsPerCm: v.afterSc, temperatureC: v.afterTemperature },
    meter: { scUsPerCm: v.meterSc, temperatureC: v.meterTemperature },
    checks: v.checks.map((c) => ({ standard: c.standard, customValueUsPerCm: c.customValue ?? null, temperatureC: c.temperature, sensorUsPerCm: c.sensor })),
  });
}

/** Reads whatever the form holds now (strings) into numbers for the live assessment; blanks and junk become undefined. */
export function draftNumbers(draft: Record<string, unknown>): VisitNumbers {
  const num = (x: unknown) => {
    if (typeof x !== "string" || x.trim() === "") return undefined;
    const n = Number(x.trim().replace(",", "."));
    return Number.isFinite(n) ? n : undefined;
  };
  const checks = Array.isArray(draft.checks) ? (draft.checks as Record<string, unknown>[]) : [];
  return {
    beforeSc: num(draft.beforeSc),
    beforeTemperature: num(draft.beforeTemperature),
    afterSc: num(draft.afterSc),
    afterTemperature: num(draft.afterTemperature),
    meterSc: num(draft.meterSc),
    meterTemperature: num(draft.meterTemperature),
    checks: checks.map((c) => ({
      standard: (STANDARD_CHOICES as readonly string[]).includes(String(c?.standard)) ? (c.standard as StandardChoice) : "1413",
      customValue: num(c?.customValue),
      temperature: num(c?.temperature) ?? NaN,
      sensor: num(c?.sensor) ?? NaN,
    })),
  };
}
