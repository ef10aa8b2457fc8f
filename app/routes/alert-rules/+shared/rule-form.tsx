import { getCollectionProps, getFormProps, getInputProps, getSelectProps, useForm, type FieldMetadata, type SubmissionResult } from "@conform-to/react";
import { parseWithZod } from "@conform-to/zod/v4";
import { useState, type ReactNode } from "react";
import { Form, useNavigation } from "react-router";
import { ErrorList, Field, FormErrors, SelectField, TextareaField } from "#app/components/forms.tsx";
import {
  ALERT_CONDITIONS,
  CONDITION_HELP,
  CONDITION_LABELS,
  CONDITION_PARAMETERS,
  DURATION_UNITS,
  PARAMETER_NAMES,
  PARAMETER_UNITS,
  type AlertConditionName,
  type AlertParameterName,
} from "#app/lib/quality/alert-rules.ts";
import { ROLE_LABELS, ROLES } from "#app/utils/permissions.ts";
import { SITE_KIND_LABELS } from "#app/utils/site-labels.ts";
import { SITE_KINDS, type SiteKind } from "#db/schema.ts";
import { ruleSchema } from "./rule-schema.ts";
import { ScreeningCaution } from "./ui.tsx";

/** The value of the input or select an onChange bubbled up from. */
function valueOf(target: EventTarget) {
  return target instanceof HTMLInputElement || target instanceof HTMLSelectElement ? target.value : "";
}

type Site = { id: string; code: string; name: string; kind: SiteKind; reference_c: number };

/** A value field with the unit chosen beside it (the unit select is shared by every value of the rule). */
function ValueWithUnit({ label, meta, unit, hint }: { label: string; meta: FieldMetadata<any>; unit: ReactNode; hint?: string }) {
  const hintId = hint ? `${meta.id}-hint` : undefined;
  const props = getInputProps(meta, { type: "text", ariaDescribedBy: hintId });
  return (
    <div>
      <label className="field-label" htmlFor={meta.id}>{label}</label>
      <div className="flex items-center gap-2">
        <input className="field-input" inputMode="decimal" {...props} key={props.key} />
        <span className="shrink-0 text-ink-700">{unit}</span>
      </div>
      {hint ? <p id={hintId} className="mt-0.5 text-sm text-ink-500">{hint}</p> : null}
      <ErrorList id={meta.errorId} errors={meta.errors} />
    </div>
  );
}

function CheckboxGroup({ legend, meta, options }: { legend: string; meta: FieldMetadata<any>; options: { value: string; label: string }[] }) {
  const boxes = getCollectionProps(meta, { type: "checkbox", options: options.map((o) => o.value) });
  return (
    <fieldset aria-describedby={meta.errors?.length ? meta.errorId : undefined}>
      <legend className="field-label">{legend}</legend>
      <div className="flex flex-wrap gap-x-4 gap-y-1">
        {boxes.map((b, i) => (
          <label key={b.key} className="inline-flex items-center gap-1.5">
            <input {...b} key={b.key} />
            {options[i].label}
          </label>
        ))}
      </div>
      <ErrorList id={meta.errorId} errors={meta.errors} />
    </fieldset>
  );
}

export function RuleForm({
  defaultValue,
  lastResult,
  sites,
  submitLabel,
}: {
  defaultValue: Record<string, unknown>;
  lastResult?: SubmissionResult<string[]> | null;
  sites: Site[];
  submitLabel: string;
}) {
  const navigation = useNavigation();
  const [form, fields] = useForm({
    id: "alert-rule",
    lastResult,
    defaultValue: defaultValue as Record<string, string | string[] | undefined>,
    onValidate: ({ formData }) => parseWithZod(formData, { schema: ruleSchema }),
    shouldValidate: "onBlur",
    shouldRevalidate: "onInput",
  });
  const [condition, setCondition] = useState(String(defaultValue.condition ?? "above") as AlertConditionName);
  const [parameter, setParameter] = useState(String(defaultValue.parameter ?? "sc25") as AlertParameterName);
  const [scope, setScope] = useState(String(defaultValue.scope ?? "sites"));
  const [unit, setUnit] = useState(String(defaultValue.valueUnit ?? PARAMETER_UNITS[parameter][0].unit));
  const units = PARAMETER_UNITS[parameter];
  const { defaultValue: _unitDefault, ...unitProps } = getSelectProps(fields.valueUnit);
  const shownUnit = units.some((u) => u.unit === unit) ? unit : units[0].unit;
  const unitSelect =
    units.length > 1 ? (
      <select
        aria-label="Unit of the values"
        className="field-input w-auto"
        {...unitProps}
        key={fields.valueUnit.key}
        value={shownUnit}
        onChange={(e) => setUnit(e.target.value)}
      >
        {units.map((u) => (
          <option key={u.unit} value={u.unit}>{u.unit}</option>
        ))}
      </select>
    ) : (
      <>
        <input type="hidden" name={fields.valueUnit.name} value={units[0].unit} />
        {units[0].unit}
      </>
    );
  const durationSelect = (
    <select aria-label="Unit of the duration" className="field-input w-auto" {...getSelectProps(fields.durationUnit)} key={fields.durationUnit.key}>
      {DURATION_UNITS.map((u) => (
        <option key={u.unit} value={u.unit}>{u.unit === "min" ? "minutes" : "hours"}</option>
      ))}
    </select>
  );
  const allowed = CONDITION_PARAMETERS[condition];

  return (
    <Form method="post" {...getFormProps(form)} className="space-y-5">
      <input type="hidden" name="intent" value="save" />
      <FormErrors id={form.errorId} errors={form.errors} />

      <fieldset className="card grid gap-4 sm:grid-cols-2">
        <legend className="px-1 text-lg font-semibold">What the rule watches</legend>
        <Field label="Name" meta={fields.name} className="sm:col-span-2" hint="Shown in lists, notifications and e-mails." />
        <div onChange={(e) => setCondition(valueOf(e.target) as AlertConditionName)}>
          <SelectField label="Condition" meta={fields.condition} options={ALERT_CONDITIONS.map((c) => ({ value: c, label: CONDITION_LABELS[c] }))} />
        </div>
        <div onChange={(e) => setParameter(valueOf(e.target) as AlertParameterName)}>
          <SelectField
            label="Parameter"
            meta={fields.parameter}
            options={allowed.map((p) => ({ value: p, label: PARAMETER_NAMES[p] }))}
            hint={allowed.includes(parameter) ? undefined : "Choose a parameter this condition can watch."}
          />
        </div>
        <p className="text-sm text-ink-700 sm:col-span-2" data-testid="condition-help">{CONDITION_HELP[condition]}</p>
      </fieldset>

      {condition !== "temperature-range" ? (
        <fieldset className="card grid gap-4 sm:grid-cols-2">
          <legend className="px-1 text-lg font-semibold">Levels</legend>
          {condition === "above" || condition === "below" ? (
            <>
              <ValueWithUnit
                label="Threshold"
                meta={fields.threshold}
                unit={unitSelect}
                hint={condition === "above" ? "An event starts above this value." : "An event starts below this value."}
              />
              <ValueWithUnit
                label="Clear level"
                meta={fields.clearLevel}
                unit={shownUnit}
                hint={
                  condition === "above"
                    ? "The event ends when the value falls to this level: at or below the threshold. The same value as the threshold means no margin."
                    : "The event ends when the value rises to this level: at or above the threshold."
                }
              />
              <ValueWithUnit label="Minimum duration" meta={fields.minDuration} unit={durationSelect} hint="How long the value must stay beyond the threshold first (0 for at once)." />
              {parameter === "sc25" ? (
                <SelectField
                  label="Levels are stated at"
                  meta={fields.referenceC}
                  options={[{ value: "25", label: "25 °C" }, { value: "20", label: "20 °C (converted to each site's reference temperature)" }]}
                  hint="Guidelines quote conductivity at 20 °C or 25 °C; each site reports at its own reference temperature."
                />
              ) : null}
            </>
          ) : null}
          {condition === "rate-of-change" ? (
            <>
              <ValueWithUnit label="Change of more than" meta={fields.change} unit={unitSelect} />
              <ValueWithUnit label="Within" meta={fields.window} unit={durationSelect} />
              <SelectField
                label="Direction"
                meta={fields.direction}
                options={[{ value: "either", label: "Rise or fall" }, { value: "rise", label: "Rise only" }, { value: "fall", label: "Fall only" }]}
              />
            </>
          ) : null}
          {condition === "flat-line" ? (
            <>
              <Field label="Readings in a row" meta={fields.readings} inputMode="numeric" hint="At 15-minute logging, 8 readings are 2 hours." />
              <ValueWithUnit label="Allowed difference" meta={fields.tolerance} unit={unitSelect} hint="0 means exactly the same value." />
            </>
          ) : null}
          {condition === "spike" ? <ValueWithUnit label="Jump of more than" meta={fields.jump} unit={unitSelect} hint="Away from both the reading before and the reading after." /> : null}
          {condition === "out-of-range" ? (
            <>
              <ValueWithUnit label="Lowest value the sensor measures" meta={fields.rangeMin} unit={unitSelect} />
              <ValueWithUnit label="Highest value the sensor measures" meta={fields.rangeMax} unit={shownUnit} hint="From the sensor's data sheet." />
            </>
          ) : null}
          {condition === "missing-data" ? (
            <Field label="Logging intervals without a reading" meta={fields.intervals} inputMode="decimal" hint="4 at 15-minute logging: no reading for more than an hour." />
          ) : null}
        </fieldset>
      ) : null}

      <fieldset className="card space-y-3">
        <legend className="px-1 text-lg font-semibold">Where it applies</legend>
        <div className="flex flex-wrap gap-4" onChange={(e) => setScope(valueOf(e.target))} role="radiogroup" aria-label="Where the rule applies">
          {getCollectionProps(fields.scope, { type: "radio", options: ["sites", "kinds", "all"] }).map((r) => (
            <label key={r.key} className="inline-flex items-center gap-1.5">
              <input {...r} key={r.key} />
              {r.value === "sites" ? "Chosen sites" : r.value === "kinds" ? "Every site of some kinds (new sites included)" : "Every site"}
            </label>
          ))}
        </div>
        {scope === "sites" ? (
          <CheckboxGroup legend="Sites" meta={fields.siteIds} options={sites.map((s) => ({ value: s.id, label: `${s.code} · ${s.name}` }))} />
        ) : null}
        {scope === "kinds" ? (
          <CheckboxGroup legend="Kinds of site" meta={fields.siteKinds} options={SITE_KINDS.map((k) => ({ value: k, label: SITE_KIND_LABELS[k] }))} />
        ) : null}
      </fieldset>

      <fieldset className="card grid gap-4 sm:grid-cols-2">
        <legend className="px-1 text-lg font-semibold">Who is told</legend>
        <div className="sm:col-span-2">
          <CheckboxGroup legend="Roles notified in Ripplemark" meta={fields.notifyRoles} options={ROLES.map((r) => ({ value: r, label: ROLE_LABELS[r] }))} />
          <p className="mt-1 text-sm text-ink-500">Technicians are told only about the sites assigned to them. Managers and technicians can see the rules that tell them; technicians only sensor checks.</p>
        </div>
        <label className="inline-flex items-center gap-2 self-end">
          <input {...getInputProps(fields.email, { type: "checkbox" })} key={fields.email.key} />
          Also send an e-mail for each new event
        </label>
        <Field label="At most this many e-mails an hour" meta={fields.emailsPerHour} inputMode="numeric" hint="Further events in the hour go out together in one summary." />
      </fieldset>

      <fieldset className="card space-y-3">
        <legend className="px-1 text-lg font-semibold">Source of the values</legend>
        <TextareaField
          label="Guideline or reason"
          meta={fields.guidelineSource}
          hint="Name the document and edition a level comes from, or say why it was chosen."
        />
        <ScreeningCaution />
        <label className="inline-flex items-center gap-2">
          <input {...getInputProps(fields.enabled, { type: "checkbox" })} key={fields.enabled.key} />
          Enabled: check new readings against this rule
        </label>
      </fieldset>

      <button type="submit" className="btn" disabled={navigation.state !== "idle"}>
        {submitLabel}
      </button>
    </Form>
  );
}
