import { getFormProps, useForm, type SubmissionResult } from "@conform-to/react";
import { parseWithZod } from "@conform-to/zod/v4";
import { useDeferredValue, useMemo, useState } from "react";
import { Form, useNavigation } from "react-router";
import { ErrorList, Field, FormErrors, SelectField, TextareaField } from "#app/components/forms.tsx";
import { draftAnalysis, EXTRA_IONS, ION_HINTS, ION_LABELS, ionFormula, labEntrySchema, MAIN_IONS, type FormIon } from "#app/lib/lab/analysis-input.ts";
import { labCheck } from "#app/lib/water/lab-check.ts";
import { formatEc, formatPercent } from "./format.ts";
import { LabCheckReport, VERDICT_WORDS } from "./report.tsx";

export type SiteOption = { id: string; code: string; name: string; timeZone: string };

/** Form values as strings, the way the fields hold them. */
export type EntryDefaults = {
  siteId?: string;
  sampledAt?: string;
  labReference?: string;
  ions?: Partial<Record<FormIon, string>>;
  measuredEc?: string;
  measuredTds?: string;
  pH?: string;
  silica?: string;
  notes?: string;
};

/** FormData → the nested shape conform uses ("ions.Ca" → { ions: { Ca } }). */
function formDraft(formData: FormData): Record<string, unknown> {
  const out: Record<string, unknown> = { ions: {} };
  for (const [name, value] of formData) {
    if (typeof value !== "string") continue;
    if (name.startsWith("ions.")) (out.ions as Record<string, string>)[name.slice(5)] = value;
    else out[name] = value;
  }
  return out;
}

function IonField({ ion, meta }: { ion: FormIon; meta: Parameters<typeof Field>[0]["meta"] }) {
  return (
    <Field
      meta={meta}
      label={
        <>
          {ION_LABELS[ion]} <span className="font-normal">{ionFormula(ion)}</span> <span className="font-normal text-ink-500">(mg/L)</span>
        </>
      }
      inputMode="decimal"
      autoComplete="off"
      hint={ION_HINTS[ion]}
    />
  );
}

/**
 * The analysis entry form with the checks previewed beside it as the officer types (computed in the
 * browser with the same labCheck the server uses when saving).
 */
export function LabEntryForm({
  sites,
  lastResult,
  defaultValue,
  submitLabel,
}: {
  sites: SiteOption[];
  lastResult?: SubmissionResult<string[]> | null;
  defaultValue?: EntryDefaults;
  submitLabel: string;
}) {
  const navigation = useNavigation();
  const schema = useMemo(() => labEntrySchema(sites), [sites]);
  const [form, fields] = useForm({
    id: "lab-entry",
    lastResult,
    defaultValue,
    onValidate: ({ formData }) => parseWithZod(formData, { schema }),
    shouldValidate: "onBlur",
    shouldRevalidate: "onInput",
  });
  const ions = fields.ions.getFieldset();
  const [draft, setDraft] = useState<Record<string, unknown>>(() => ({ ...defaultValue, ions: { ...defaultValue?.ions } }));
  const deferred = useDeferredValue(draft);
  const preview = useMemo(() => {
    const d = draftAnalysis(deferred);
    if (!d) return null;
    try {
      return { check: labCheck(d.analysis), skipped: d.skipped, measuredEc: d.analysis.measuredEcUsPerCm };
    } catch {
      return null;
    }
  }, [deferred]);
  const site = sites.find((s) => s.id === draft.siteId);
  const extrasOpen = EXTRA_IONS.some((ion) => defaultValue?.ions?.[ion]) || !!defaultValue?.silica;
  const busy = navigation.state !== "idle" && navigation.formData?.get("intent") === "save";

  return (
    <div className="grid items-start gap-6 min-[1200px]:grid-cols-[minmax(0,5fr)_minmax(0,6fr)]">
      <Form
        method="post"
        className="card space-y-5"
        {...getFormProps(form)}
        onInput={(e) => setDraft(formDraft(new FormData(e.currentTarget)))}
        aria-labelledby="entry-title"
      >
        <h2 id="entry-title">Enter the analysis</h2>
        <input type="hidden" name="intent" value="save" />
        <FormErrors id={form.errorId} errors={form.errors} />
        <div className="grid gap-4 sm:grid-cols-2">
          <SelectField
            label="Site"
            meta={fields.siteId}
            options={[{ value: "", label: "Choose a site…" }, ...sites.map((s) => ({ value: s.id, label: `${s.code} · ${s.name}` }))]}
          />
          <Field
            label="Sampled at"
            meta={fields.sampledAt}
            type="datetime-local"
            hint={site ? `Local time at the site (${site.timeZone}).` : "Local time at the site."}
          />
          <Field label="Lab reference" meta={fields.labReference} autoComplete="off" hint="The laboratory’s sample number (optional)." />
        </div>

        <fieldset className="space-y-3" aria-describedby={fields.ions.errors?.length ? fields.ions.errorId : "ions-help"}>
          <legend className="text-lg font-semibold">Major ions</legend>
          <p id="ions-help" className="text-sm text-ink-700">
            Concentrations in mg/L of the ion itself. Leave a field blank if the laboratory did not analyse it; enter 0 for
            a result below the detection limit. At least two cations and two anions are needed.
          </p>
          <ErrorList id={fields.ions.errorId} errors={fields.ions.errors} />
          <div className="grid grid-cols-2 gap-3 sm:grid-cols-3 min-[1200px]:grid-cols-2 xl:grid-cols-3">
            {MAIN_IONS.map((ion) => (
              <IonField key={ion} ion={ion} meta={ions[ion]} />
            ))}
          </div>
          <details open={extrasOpen} className="rounded border border-ink-100 px-3 py-2">
            <summary className="cursor-pointer font-semibold">Other ions and silica (optional)</summary>
            <div className="mt-3 grid grid-cols-2 gap-3 sm:grid-cols-3 min-[1200px]:grid-cols-2 xl:grid-cols-3">
              {EXTRA_IONS.map((ion) => (
                <IonField key={ion} ion={ion} meta={ions[ion]} />
              ))}
              <Field
                meta={fields.silica}
                label={<>Silica <span className="font-normal">SiO₂</span> <span className="font-normal text-ink-500">(mg/L)</span></>}
                inputMode="decimal"
                autoComplete="off"
                hint="Uncharged: counts only in the calculated TDS."
              />
            </div>
          </details>
        </fieldset>

        <fieldset className="space-y-3">
          <legend className="text-lg font-semibold">Measured by the laboratory</legend>
          <div className="grid gap-3 sm:grid-cols-3 min-[1200px]:grid-cols-2 xl:grid-cols-3">
            <Field label="EC (µS/cm at 25 °C)" meta={fields.measuredEc} inputMode="decimal" autoComplete="off" hint="Specific conductance. 1 mS/cm = 1000 µS/cm." />
            <Field label="TDS (mg/L)" meta={fields.measuredTds} inputMode="decimal" autoComplete="off" hint="Dried residue at 180 °C." />
            <Field label="pH" meta={fields.pH} inputMode="decimal" autoComplete="off" hint="0 to 14." />
          </div>
        </fieldset>

        <TextareaField label="Notes" meta={fields.notes} hint="Sampling conditions, anything the laboratory flagged." />
        <div className="flex flex-wrap items-center gap-3">
          <button type="submit" className="btn" disabled={busy}>
            {busy ? "Saving…" : submitLabel}
          </button>
          {/* The same summary as the preview's, near the button for narrow screens where the preview sits below. */}
          {preview ? (
            <span className="text-sm text-ink-700 min-[1200px]:hidden" aria-hidden="true">
              Preview: {VERDICT_WORDS[preview.check.overall].toLowerCase()}, balance {formatPercent(preview.check.ionBalance.percentDifference)}
            </span>
          ) : null}
        </div>
      </Form>

      <section className="card space-y-3" aria-labelledby="preview-title">
        <h2 id="preview-title">Checks as you type</h2>
        <p role="status" className="text-sm text-ink-700">
          {preview
            ? `Overall ${VERDICT_WORDS[preview.check.overall].toLowerCase()}: calculated EC ${formatEc(preview.check.calculatedConductivity.calculatedEcUsPerCm)}, ion balance ${formatPercent(preview.check.ionBalance.percentDifference)}.`
            : "Enter at least two cations and two anions to see the checks."}
        </p>
        {preview?.skipped.length ? (
          <p className="text-sm text-amber-700">Left out until corrected: {preview.skipped.join(", ")}.</p>
        ) : null}
        {preview ? <LabCheckReport check={preview.check} measuredEc={preview.measuredEc} idPrefix="preview" headingLevel={3} /> : null}
        <p className="text-sm text-ink-500">A preview only: the server checks the analysis again when you save, and stores that result.</p>
      </section>
    </div>
  );
}
