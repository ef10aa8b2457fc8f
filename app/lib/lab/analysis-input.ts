// A laboratory analysis of a grab sample as people enter it (form or CSV row), its validation, and
// the record Ripplemark stores for it. Pure: the entry form validates and previews with it in the
// browser, the server validates and recomputes with the same code before saving.
import { z } from "zod";
import { IONS, ION_NAMES, labCheck, type IonName, type LabCheck, type Verdict, type WaterAnalysis } from "#app/lib/water/index.ts";
import { wallTimeToInstant } from "#app/lib/zoned-time.ts";

/** The major ions every entry grid shows (Standard Methods 1030 E needs them for the balance). */
export const MAIN_IONS = ["Ca", "Mg", "Na", "K", "NH4", "Cl", "SO4", "HCO3", "CO3", "NO3", "F"] as const satisfies readonly IonName[];

/**
 * The other ions of the ion table, offered as optional extras. H⁺ and OH⁻ are left out: the check
 * derives them from the pH.
 */
export const EXTRA_IONS = ION_NAMES.filter(
  (ion) => !(MAIN_IONS as readonly string[]).includes(ion) && ion !== "H" && ion !== "OH",
) as Exclude<IonName, (typeof MAIN_IONS)[number] | "H" | "OH">[];

export const FORM_IONS = [...MAIN_IONS, ...EXTRA_IONS] as const;
export type FormIon = (typeof FORM_IONS)[number];

export const ION_LABELS: Record<FormIon, string> = {
  Ca: "Calcium",
  Mg: "Magnesium",
  Na: "Sodium",
  K: "Potassium",
  NH4: "Ammonium",
  Cl: "Chloride",
  SO4: "Sulfate",
  HCO3: "Bicarbonate",
  CO3: "Carbonate",
  NO3: "Nitrate",
  F: "Fluoride",
  Li: "Lithium",
  Sr: "Strontium",
  Ba: "Barium",
  Fe: "Iron (II)",
  Mn: "Manganese (II)",
  Br: "Bromide",
  NO2: "Nitrite",
  PO4: "Phosphate",
  HPO4: "Hydrogen phosphate",
  H2PO4: "Dihydrogen phosphate",
};

/**
 * Hints for the ions most often reported in another form: nitrogen species "as N" and alkalinity
 * "as CaCO₃" entered as the ion are a common cause of a failed balance (common practice in
 * laboratory review). The factors are ratios of molar masses from the ion table (IUPAC 2013 atomic
 * weights): NH₄⁺/N 18.04/14.01, NO₃⁻/N 62.00/14.01, NO₂⁻/N 46.01/14.01, HCO₃⁻/(½CaCO₃) 61.02/50.04
 * (the last only below pH 8.3, where all alkalinity is bicarbonate).
 */
export const ION_HINTS: Partial<Record<FormIon, string>> = {
  NH4: "As NH₄⁺, not as N (× 1.288)",
  NO3: "As NO₃⁻, not as N (× 4.427)",
  NO2: "As NO₂⁻, not as N (× 3.284)",
  HCO3: "As HCO₃⁻, not alkalinity as CaCO₃ (× 1.219)",
};

export function ionFormula(ion: IonName): string {
  return IONS[ion].formula;
}

export function isCation(ion: IonName) {
  return IONS[ion].charge > 0;
}

// ---- validation -------------------------------------------------------------------------------

const MAX_CONCENTRATION_MG_PER_L = 500_000; // beyond any brine; catches a unit slip (µg/L as mg/L)
const MAX_EC_US_PER_CM = 300_000;

function amount(what: string, max: number, unit: string) {
  return z
    .number({ error: `Enter the ${what} as a number of ${unit}, or leave it blank` })
    .min(0, `The ${what} cannot be negative`)
    .max(max, `That is more than ${max.toLocaleString("en-GB")} ${unit}: check the unit`)
    .optional();
}

function ionConcentration(ion: FormIon) {
  return amount(`${ION_LABELS[ion].toLowerCase()} concentration`, MAX_CONCENTRATION_MG_PER_L, "mg/L");
}

const ionsShape = Object.fromEntries(FORM_IONS.map((ion) => [ion, ionConcentration(ion)])) as Record<
  FormIon,
  ReturnType<typeof ionConcentration>
>;

/** The fields of an analysis besides where and when it was sampled. */
export const analysisShape = {
  labReference: z.string().trim().max(60, "Use at most 60 characters").optional(),
  ions: z.object(ionsShape),
  measuredEc: z
    .number({ error: "Enter the EC as a number of µS/cm at 25 °C, or leave it blank" })
    .gt(0, "The measured EC must be more than 0 µS/cm")
    .max(MAX_EC_US_PER_CM, `That is more than ${MAX_EC_US_PER_CM.toLocaleString("en-GB")} µS/cm: check the unit (mS/cm?)`)
    .optional(),
  measuredTds: z
    .number({ error: "Enter the TDS as a number of mg/L, or leave it blank" })
    .gt(0, "The measured TDS must be more than 0 mg/L")
    .max(MAX_CONCENTRATION_MG_PER_L, "That TDS is beyond any natural water: check the unit")
    .optional(),
  pH: z
    .number({ error: "Enter the pH as a number from 0 to 14, or leave it blank" })
    .min(0, "The pH must be between 0 and 14")
    .max(14, "The pH must be between 0 and 14")
    .optional(),
  silica: amount("silica", MAX_CONCENTRATION_MG_PER_L, "mg/L"),
  notes: z.string().trim().max(2000, "Use at most 2000 characters").default(""),
};

export type AnalysisValues = {
  labReference?: string;
  ions: Partial<Record<FormIon, number | undefined>>;
  measuredEc?: number;
  measuredTds?: number;
  pH?: number;
  silica?: number;
  notes: string;
};

export const MIN_IONS_EACH_SIDE = 2;
export const ION_COUNT_MESSAGE = `Enter at least ${MIN_IONS_EACH_SIDE} cations and ${MIN_IONS_EACH_SIDE} anions (values above 0): the checks need both sides of the balance`;

/** How many cations and anions were reported above zero. */
export function countIons(ions: Partial<Record<IonName, number | undefined>>) {
  let cations = 0;
  let anions = 0;
  for (const [ion, value] of Object.entries(ions)) {
    if (value === undefined || !(value > 0)) continue;
    if (isCation(ion as IonName)) cations += 1;
    else anions += 1;
  }
  return { cations, anions };
}

function ionCountRule(value: { ions: Partial<Record<IonName, number | undefined>> }, ctx: z.RefinementCtx) {
  const { cations, anions } = countIons(value.ions);
  if (cations < MIN_IONS_EACH_SIDE || anions < MIN_IONS_EACH_SIDE) {
    ctx.addIssue({ code: "custom", path: ["ions"], message: ION_COUNT_MESSAGE });
  }
}

/** The analysis alone (the CSV import checks each row's values with it). */
export const analysisSchema = z.object(analysisShape).superRefine(ionCountRule);

export type SiteZone = { id: string; timeZone: string };

/** Slack for clocks that run a little ahead of the server's. */
const FUTURE_SLACK_MS = 2 * 60_000;
const EARLIEST_SAMPLE = Date.UTC(1900, 0, 1);

/** Problems with a sampling instant, or null. */
export function sampledAtProblem(instant: Date, now: Date): string | null {
  if (instant.getTime() > now.getTime() + FUTURE_SLACK_MS) return "The sampling time is in the future";
  if (instant.getTime() < EARLIEST_SAMPLE) return "Enter a sampling date after 1900";
  return null;
}

/**
 * The entry form: a site from `sites`, the sampling time as the site's local wall time (what a
 * `datetime-local` field sends), and the analysis. The output carries the instant.
 */
export function labEntrySchema(sites: readonly SiteZone[], now: () => Date = () => new Date()) {
  return z
    .object({
      siteId: z.string({ error: "Choose the site the sample was taken at" }).refine((id) => sites.some((s) => s.id === id), "Choose a site from the list"),
      sampledAt: z.string({ error: "Enter when the sample was taken" }).trim().min(1, "Enter when the sample was taken"),
      ...analysisShape,
    })
    .superRefine((value, ctx) => {
      ionCountRule(value, ctx);
      // Checked here rather than in the transform, so the time's problem shows with the others.
      const site = sites.find((s) => s.id === value.siteId);
      if (!site || typeof value.sampledAt !== "string" || !value.sampledAt) return;
      const wall = wallTimeToInstant(value.sampledAt, site.timeZone);
      const problem = !wall.ok
        ? wall.reason === "nonexistent"
          ? "That time did not exist at the site (the clocks went forward)"
          : "Enter the date and time as shown, such as 2025-03-14 09:30"
        : sampledAtProblem(wall.instant, now());
      if (problem) ctx.addIssue({ code: "custom", path: ["sampledAt"], message: problem });
    })
    .transform((value) => {
      const site = sites.find((s) => s.id === value.siteId)!;
      const wall = wallTimeToInstant(value.sampledAt, site.timeZone);
      if (!wall.ok) throw new Error("unreachable: the refinement checked the sampling time");
      return { ...value, sampledAtInstant: wall.instant };
    });
}

export type LabEntry = z.output<ReturnType<typeof labEntrySchema>>;

// ---- the stored record ------------------------------------------------------------------------

/** The reported ions only (blank fields are "not analysed", not zero). */
export function reportedIons(ions: Partial<Record<string, number | undefined>>): Partial<Record<IonName, number>> {
  const out: Partial<Record<IonName, number>> = {};
  for (const ion of FORM_IONS) {
    const value = ions[ion];
    if (value !== undefined && value !== null && Number.isFinite(value)) out[ion] = value;
  }
  return out;
}

export function toWaterAnalysis(values: AnalysisValues): WaterAnalysis {
  const analysis: WaterAnalysis = { ionsMgPerL: reportedIons(values.ions) };
  if (values.measuredEc !== undefined) analysis.measuredEcUsPerCm = values.measuredEc;
  if (values.measuredTds !== undefined) analysis.measuredTdsMgPerL = values.measuredTds;
  if (values.pH !== undefined) analysis.pH = values.pH;
  if (values.silica !== undefined) analysis.silicaMgPerL = values.silica;
  return analysis;
}

/** The row of `lab_sample` for an analysis, with the checks computed now. */
export function labSampleColumns(values: AnalysisValues) {
  const check = labCheck(toWaterAnalysis(values));
  const ecRatio = check.checks.find((c) => c.id === "calculated-vs-measured-ec");
  return {
    check,
    columns: {
      lab_reference: values.labReference ? values.labReference : null,
      ions_mg_l: reportedIons(values.ions),
      measured_ec_us_cm: values.measuredEc ?? null,
      measured_tds_mg_l: values.measuredTds ?? null,
      ph: values.pH ?? null,
      silica_mg_l: values.silica ?? null,
      notes: values.notes,
      calculated_ec_us_cm: check.calculatedConductivity.calculatedEcUsPerCm,
      calculated_tds_mg_l: check.calculatedTdsMgPerL,
      ec_ratio: ecRatio && ecRatio.verdict !== "not-run" ? ecRatio.value : null,
      ion_balance_percent: check.ionBalance.percentDifference,
      verdict: check.overall as Verdict,
    },
  };
}

export type LabSampleColumns = ReturnType<typeof labSampleColumns>["columns"];

/** Reads a stored `results` value back (written by labSampleColumns); null when it is not one. */
export function storedLabCheck(results: unknown): LabCheck | null {
  if (!results || typeof results !== "object") return null;
  const r = results as Partial<LabCheck>;
  if (!r.calculatedConductivity || !r.ionBalance || !Array.isArray(r.checks) || !r.overall) return null;
  return r as LabCheck;
}

// ---- the live preview -------------------------------------------------------------------------

/**
 * The analysis as far as the half-filled form allows, for the preview while someone types: fields
 * that are blank or not (yet) valid are left out. Null until there are enough ions to check.
 */
export function draftAnalysis(form: Record<string, unknown>): { analysis: WaterAnalysis; skipped: string[] } | null {
  const skipped: string[] = [];
  const num = (raw: unknown, label: string, ok: (n: number) => boolean) => {
    if (typeof raw !== "string" || raw.trim() === "") return undefined;
    const n = Number(raw.trim());
    if (!Number.isFinite(n) || !ok(n)) {
      skipped.push(label);
      return undefined;
    }
    return n;
  };
  const rawIons = (form.ions && typeof form.ions === "object" ? form.ions : {}) as Record<string, unknown>;
  const ions: Partial<Record<FormIon, number>> = {};
  for (const ion of FORM_IONS) {
    const v = num(rawIons[ion], ionFormula(ion), (n) => n >= 0 && n <= MAX_CONCENTRATION_MG_PER_L);
    if (v !== undefined) ions[ion] = v;
  }
  const { cations, anions } = countIons(ions);
  if (cations < MIN_IONS_EACH_SIDE || anions < MIN_IONS_EACH_SIDE) return null;
  return {
    analysis: toWaterAnalysis({
      ions,
      measuredEc: num(form.measuredEc, "measured EC", (n) => n > 0 && n <= MAX_EC_US_PER_CM),
      measuredTds: num(form.measuredTds, "measured TDS", (n) => n > 0 && n <= MAX_CONCENTRATION_MG_PER_L),
      pH: num(form.pH, "pH", (n) => n >= 0 && n <= 14),
      silica: num(form.silica, "silica", (n) => n >= 0 && n <= MAX_CONCENTRATION_MG_PER_L),
      notes: "",
    }),
    skipped,
  };
}
