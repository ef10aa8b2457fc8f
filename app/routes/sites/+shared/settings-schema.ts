import { z } from "zod";
import { TDS_FACTOR_RANGE } from "#app/lib/water/tds.ts";
import type { DisplayThreshold, ThresholdBound, ThresholdParameter } from "#app/lib/series/parameters.ts";

// The site settings form, shared by the browser (checks as people type) and the server (the real
// check). α is entered in % per °C (as printed on instrument manuals) and stored per °C.

/** Threshold fields of the form → (parameter, bound). Order = order on the page. */
export const THRESHOLD_FIELDS = {
  sc25Upper: ["sc25", "upper"],
  sc25Lower: ["sc25", "lower"],
  temperatureUpper: ["temperature", "upper"],
  tdsUpper: ["tds", "upper"],
  salinityUpper: ["salinity", "upper"],
  phLower: ["ph", "lower"],
  phUpper: ["ph", "upper"],
  depthLower: ["depth", "lower"],
} as const satisfies Record<string, readonly [ThresholdParameter, ThresholdBound]>;

export type ThresholdField = keyof typeof THRESHOLD_FIELDS;

/** α limits: natural waters are 1.5–2.5 %/°C; 0–5 leaves room for unusual site-specific values (common practice). */
export const ALPHA_PERCENT_RANGE = [0, 5] as const;

const optionalNumber = (what: string, min: number, max: number) =>
  z
    .number({ error: `Enter the ${what} as a number, or leave it empty` })
    .min(min, `The ${what} must be at least ${min}`)
    .max(max, `The ${what} must be at most ${max}`)
    .optional();

export const settingsSchema = z
  .object({
    compensationMethod: z.enum(["linear", "natural-water"], { error: "Choose a compensation method" }),
    alphaPercentPerC: z
      .number({ error: "Enter the coefficient in % per °C, such as 1.91" })
      .min(ALPHA_PERCENT_RANGE[0], "The coefficient cannot be negative")
      .max(ALPHA_PERCENT_RANGE[1], `Use at most ${ALPHA_PERCENT_RANGE[1]} % per °C`)
      .optional(),
    referenceC: z.enum(["20", "25"], { error: "Choose 20 °C or 25 °C" }).transform(Number),
    tdsFactor: z
      .number({ error: "Enter the TDS factor, such as 0.65" })
      .min(TDS_FACTOR_RANGE[0], `The TDS factor must be between ${TDS_FACTOR_RANGE[0]} and ${TDS_FACTOR_RANGE[1]}`)
      .max(TDS_FACTOR_RANGE[1], `The TDS factor must be between ${TDS_FACTOR_RANGE[0]} and ${TDS_FACTOR_RANGE[1]}`),
    sc25Upper: optionalNumber("upper specific conductance", 0, 200_000),
    sc25Lower: optionalNumber("lower specific conductance", 0, 200_000),
    temperatureUpper: optionalNumber("upper temperature", -5, 50),
    tdsUpper: optionalNumber("upper TDS", 0, 200_000),
    salinityUpper: optionalNumber("upper salinity", 0, 42),
    phLower: optionalNumber("lower pH", 0, 14),
    phUpper: optionalNumber("upper pH", 0, 14),
    depthLower: optionalNumber("lower depth", -100, 1000),
  })
  .superRefine((v, ctx) => {
    if (v.compensationMethod === "linear" && v.alphaPercentPerC === undefined) {
      ctx.addIssue({ code: "custom", path: ["alphaPercentPerC"], message: "Enter the coefficient for linear compensation, such as 1.91" });
    }
    if (v.sc25Lower !== undefined && v.sc25Upper !== undefined && v.sc25Lower >= v.sc25Upper) {
      ctx.addIssue({ code: "custom", path: ["sc25Lower"], message: "The lower threshold must be below the upper one" });
    }
    if (v.phLower !== undefined && v.phUpper !== undefined && v.phLower >= v.phUpper) {
      ctx.addIssue({ code: "custom", path: ["phLower"], message: "The lower pH must be below the upper pH" });
    }
  });

export type SettingsInput = z.infer<typeof settingsSchema>;

export function thresholdsFromInput(v: SettingsInput): DisplayThreshold[] {
  const out: DisplayThreshold[] = [];
  for (const [field, [parameter, bound]] of Object.entries(THRESHOLD_FIELDS) as [ThresholdField, readonly [ThresholdParameter, ThresholdBound]][]) {
    const value = v[field];
    if (value !== undefined) out.push({ parameter, bound, value });
  }
  return out;
}
