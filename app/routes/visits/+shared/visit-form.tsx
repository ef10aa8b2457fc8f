import { getFormProps, getInputProps, getSelectProps, getTextareaProps, useForm, type FieldMetadata, type SubmissionResult } from "@conform-to/react";
import { parseWithZod } from "@conform-to/zod/v4";
import { useMemo, type ReactNode } from "react";
import { Form, useNavigation } from "react-router";
import { ErrorList, FormErrors } from "#app/components/forms.tsx";
import { STANDARD_CHOICES, STANDARD_LABELS, type StandardChoice } from "#app/lib/quality/calibration.ts";
import { assessVisitInput, draftNumbers, MAX_CHECKS, visitSchema } from "#app/lib/visits/visit-input.ts";
import { PhotoPicker } from "./photo-picker.tsx";
import { CheckLine, FoulingLine, OverallVerdict, TemperatureLine } from "./results.tsx";

// The visit form, made for a tablet at the site: one column on narrow screens, large touch targets,
// and the results computed as the technician types (the same functions the server runs on save),
// with a pass/fail verdict before they leave.

export type FormSite = { id: string; code: string; name: string; timeZone: string; loggers: { id: string; serial: string }[]; currentLoggerId: string | null };

export type VisitDefaults = {
  siteId?: string;
  loggerId?: string;
  visitedAt?: string;
  beforeSc?: string;
  beforeTemperature?: string;
  afterSc?: string;
  afterTemperature?: string;
  meterSc?: string;
  meterTemperature?: string;
  checks?: { standard: StandardChoice; customValue?: string; temperature?: string; sensor?: string }[];
  recalibrated?: boolean;
  notes?: string;
  photoKeys?: string[];
  reason?: string;
};

const INPUT = "field-input min-h-12 text-lg";

function NumberField({ label, unit, meta, hint }: { label: ReactNode; unit: string; meta: FieldMetadata<any>; hint?: string }) {
  const hintId = hint ? `${meta.id}-hint` : undefined;
  const props = getInputProps(meta, { type: "text", ariaDescribedBy: hintId });
  return (
    <div>
      <label className="field-label" htmlFor={meta.id}>
        {label} <span className="font-normal text-ink-500">({unit})</span>
      </label>
      <input className={INPUT} {...props} key={props.key} inputMode="decimal" autoComplete="off" />
      {hint ? <p id={hintId} className="mt-0.5 text-sm text-ink-500">{hint}</p> : null}
      <ErrorList id={meta.errorId} errors={meta.errors} />
    </div>
  );
}

function ReadingRow({ title, sc, temperature, hint }: { title: string; sc: FieldMetadata<any>; temperature: FieldMetadata<any>; hint?: string }) {
  return (
    <fieldset className="space-y-2 rounded-lg border border-ink-100 p-3">
      <legend className="px-1 font-semibold">{title}</legend>
      {hint ? <p className="text-sm text-ink-500">{hint}</p> : null}
      <div className="grid gap-3 sm:grid-cols-2">
        <NumberField label="Specific conductance" unit="µS/cm at 25 °C" meta={sc} />
        <NumberField label="Temperature" unit="°C" meta={temperature} />
      </div>
    </fieldset>
  );
}

export function VisitForm({
  sites,
  defaultValue,
  lastResult,
  submitLabel,
  fixedSite,
  askReason,
}: {
  sites: FormSite[];
  defaultValue: VisitDefaults;
  lastResult?: SubmissionResult<string[]> | null;
  submitLabel: string;
  /** On the edit page the site and logger stay as recorded. */
  fixedSite?: boolean;
  /** The visit touches an approved period of record: a reason is asked for. */
  askReason?: boolean;
}) {
  const navigation = useNavigation();
  const schemaSites = useMemo(() => sites.map((s) => ({ id: s.id, timeZone: s.timeZone, loggerIds: s.loggers.map((l) => l.id) })), [sites]);
  const schema = useMemo(() => visitSchema(schemaSites), [schemaSites]);
  const [form, fields] = useForm({
    id: "visit-form",
    lastResult,
    defaultValue,
    onValidate: ({ formData }) => parseWithZod(formData, { schema }),
    shouldValidate: "onBlur",
    shouldRevalidate: "onInput",
  });
  const checks = fields.checks.getFieldList();
  const value = (form.value ?? {}) as Record<string, unknown>;
  const siteId = typeof value.siteId === "string" ? value.siteId : defaultValue.siteId;
  const site = sites.find((s) => s.id === siteId);
  const assessment = useMemo(() => assessVisitInput(draftNumbers(value)), [value]);
  const busy = navigation.state !== "idle" && navigation.formMethod?.toLowerCase() === "post";
  const checkLabel = (i: number) => {
    const c = (Array.isArray(value.checks) ? value.checks[i] : undefined) as Record<string, string> | undefined;
    const std = (c?.standard ?? "1413") as StandardChoice;
    return std === "custom" ? `custom standard ${c?.customValue ?? ""} µS/cm` : STANDARD_LABELS[std];
  };
  const failing = [
    assessment.fouling?.passed === false ? "fouling" : null,
    assessment.temperature?.passed === false ? "temperature" : null,
    ...assessment.checks.map((c, i) => (c?.passed === false ? `calibration check ${i + 1}` : null)),
  ].filter((x): x is string => !!x);
  const computed = [assessment.fouling, assessment.temperature, ...assessment.checks].filter(Boolean).length;
  const siteProps = getSelectProps(fields.siteId);
  const loggerProps = getSelectProps(fields.loggerId);

  return (
    <Form method="post" className="space-y-6" {...getFormProps(form)}>
      <FormErrors id={form.errorId} errors={form.errors} />

      <section className="card space-y-4" aria-labelledby="where-title">
        <h2 id="where-title">Where and when</h2>
        <div className="grid gap-4 md:grid-cols-3">
          <div>
            <label className="field-label" htmlFor={fields.siteId.id}>Site</label>
            {fixedSite ? (
              <>
                <input type="hidden" name={fields.siteId.name} value={defaultValue.siteId} />
                <p className="min-h-12 py-2 text-lg" id={fields.siteId.id}>{site ? `${site.code} · ${site.name}` : "—"}</p>
              </>
            ) : (
              <select className={INPUT} {...siteProps} key={siteProps.key}>
                <option value="">Choose a site…</option>
                {sites.map((s) => (
                  <option key={s.id} value={s.id}>{`${s.code} · ${s.name}`}</option>
                ))}
              </select>
            )}
            <ErrorList id={fields.siteId.errorId} errors={fields.siteId.errors} />
          </div>
          <div>
            <label className="field-label" htmlFor={fields.loggerId.id}>Logger</label>
            {fixedSite ? (
              <>
                <input type="hidden" name={fields.loggerId.name} value={defaultValue.loggerId} />
                <p className="min-h-12 py-2 text-lg">{site?.loggers.find((l) => l.id === defaultValue.loggerId)?.serial ?? "—"}</p>
              </>
            ) : (
              // Keyed by site: choosing another site puts in the logger deployed there now.
              <select
                className={INPUT}
                {...loggerProps}
                key={`${loggerProps.key}-${siteId ?? ""}`}
                defaultValue={siteId === defaultValue.siteId && defaultValue.loggerId ? defaultValue.loggerId : (site?.currentLoggerId ?? "")}
              >
                {site ? null : <option value="">Choose the site first</option>}
                {site?.loggers.map((l) => (
                  <option key={l.id} value={l.id}>
                    {l.serial}
                    {l.id === site.currentLoggerId ? " (deployed now)" : ""}
                  </option>
                ))}
              </select>
            )}
            <ErrorList id={fields.loggerId.errorId} errors={fields.loggerId.errors} />
          </div>
          <div>
            <label className="field-label" htmlFor={fields.visitedAt.id}>Time of the visit</label>
            <input className={INPUT} {...getInputProps(fields.visitedAt, { type: "datetime-local", ariaDescribedBy: `${fields.visitedAt.id}-hint` })} key={fields.visitedAt.key} />
            <p id={`${fields.visitedAt.id}-hint`} className="mt-0.5 text-sm text-ink-500">Local time at the site{site ? ` (${site.timeZone})` : ""}.</p>
            <ErrorList id={fields.visitedAt.errorId} errors={fields.visitedAt.errors} />
          </div>
        </div>
      </section>

      <section className="card space-y-4" aria-labelledby="readings-title">
        <h2 id="readings-title">Readings at the site</h2>
        <ReadingRow title="Sensor before cleaning" sc={fields.beforeSc} temperature={fields.beforeTemperature} hint="What the logger's sensor shows as you arrive, before touching it." />
        <ReadingRow title="Sensor after cleaning" sc={fields.afterSc} temperature={fields.afterTemperature} hint="Back in the water, once the reading has settled." />
        <ReadingRow title="Field meter" sc={fields.meterSc} temperature={fields.meterTemperature} hint="Your independent, calibrated meter beside the sensor." />
        <div className="space-y-2 rounded-lg bg-ink-50 p-3">
          <FoulingLine fouling={assessment.fouling} />
          <TemperatureLine temperature={assessment.temperature} />
        </div>
      </section>

      <section className="card space-y-4" aria-labelledby="checks-title">
        <h2 id="checks-title">Calibration checks</h2>
        <p className="text-ink-700">
          The cleaned sensor in a standard solution, at the standard's temperature (conductivity as the sensor reads it in the
          standard, not compensated). Ripplemark looks up what the standard should read at that temperature.
        </p>
        <ErrorList id={fields.checks.errorId} errors={fields.checks.errors} />
        <ol className="space-y-4">
          {checks.map((check, i) => {
            const c = check.getFieldset();
            const std = (Array.isArray(value.checks) ? (value.checks[i] as Record<string, string> | undefined)?.standard : undefined) ?? "1413";
            const stdProps = getSelectProps(c.standard);
            return (
              <li key={check.key} className="space-y-3 rounded-lg border border-ink-100 p-3" data-testid="check-entry">
                <div className="flex flex-wrap items-center justify-between gap-2">
                  <h3 className="font-semibold">Check {i + 1}</h3>
                  <button className="btn-quiet min-h-11" {...form.remove.getButtonProps({ name: fields.checks.name, index: i })}>
                    Remove check {i + 1}
                  </button>
                </div>
                <div className="grid gap-3 md:grid-cols-2">
                  <div>
                    <label className="field-label" htmlFor={c.standard.id}>Standard</label>
                    <select className={INPUT} {...stdProps} key={stdProps.key}>
                      {STANDARD_CHOICES.map((s) => (
                        <option key={s} value={s}>{STANDARD_LABELS[s]}</option>
                      ))}
                    </select>
                    <ErrorList id={c.standard.errorId} errors={c.standard.errors} />
                  </div>
                  {std === "custom" ? <NumberField label="Standard's value at its temperature" unit="µS/cm" meta={c.customValue} hint="From the bottle's table." /> : null}
                  <NumberField label="Standard's temperature" unit="°C" meta={c.temperature} />
                  <NumberField label="Sensor reading in the standard" unit="µS/cm" meta={c.sensor} />
                </div>
                <CheckLine
                  index={i}
                  check={assessment.checks[i] ? { ...assessment.checks[i]!, label: checkLabel(i), temperatureC: Number(String((value.checks as Record<string, string>[] | undefined)?.[i]?.temperature ?? "").replace(",", ".")) } : null}
                />
              </li>
            );
          })}
        </ol>
        {checks.length < MAX_CHECKS ? (
          <button className="btn-quiet min-h-12 px-5 text-base" {...form.insert.getButtonProps({ name: fields.checks.name, defaultValue: { standard: "1413" } })}>
            Add a calibration check
          </button>
        ) : null}
        <label className="flex min-h-12 items-center gap-3 text-lg">
          <input className="h-6 w-6" {...getInputProps(fields.recalibrated, { type: "checkbox" })} key={fields.recalibrated.key} />
          The sensor was recalibrated at this visit
        </label>
      </section>

      <section className="card space-y-4" aria-labelledby="notes-title">
        <h2 id="notes-title">Notes and photos</h2>
        <div>
          <label className="field-label" htmlFor={fields.notes.id}>Notes</label>
          <textarea className="field-input text-lg" rows={3} {...getTextareaProps(fields.notes)} key={fields.notes.key} />
          <ErrorList id={fields.notes.errorId} errors={fields.notes.errors} />
        </div>
        <PhotoPicker initialKeys={defaultValue.photoKeys} />
        <ErrorList id={fields.photoKeys.errorId} errors={fields.photoKeys.errors} />
      </section>

      <section className="card space-y-4 border-2 border-ink-300" aria-labelledby="verdict-title">
        <h2 id="verdict-title">Before you leave the site</h2>
        <OverallVerdict verdict={assessment.passed} failing={failing} computed={computed} />
        {askReason || fields.reason.errors?.length ? (
          <div>
            <label className="field-label" htmlFor={fields.reason.id}>Reason for changing the approved record</label>
            <textarea className="field-input text-lg" rows={2} {...getTextareaProps(fields.reason, { ariaDescribedBy: `${fields.reason.id}-hint` })} key={fields.reason.key} />
            <p id={`${fields.reason.id}-hint`} className="mt-0.5 text-sm text-ink-500">
              This visit falls in a period of record an officer has approved; the change is kept in the record's history with your reason.
            </p>
            <ErrorList id={fields.reason.errorId} errors={fields.reason.errors} />
          </div>
        ) : null}
        <p className="text-sm text-ink-500">Ripplemark computes these again when you save and keeps that result.</p>
        <button type="submit" className="btn min-h-12 px-6 text-lg" disabled={busy}>
          {busy ? "Saving…" : submitLabel}
        </button>
      </section>
    </Form>
  );
}
