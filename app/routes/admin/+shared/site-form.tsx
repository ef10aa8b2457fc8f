import { getFormProps, useForm, type SubmissionResult } from "@conform-to/react";
import { parseWithZod } from "@conform-to/zod/v4";
import { Form, useNavigation } from "react-router";
import { SITE_KINDS } from "#db/schema.ts";
import { Field, FormErrors, SelectField, TextareaField } from "#app/components/forms.tsx";
import { SITE_KIND_LABELS } from "#app/utils/site-labels.ts";
import { SITE_CODE_MAX, siteSchema } from "./schemas.ts";

export type SiteFormValues = {
  code: string;
  name: string;
  kind: string;
  latitude: string;
  longitude: string;
  timeZone: string;
  notes: string;
};

/** The site's identity and place; used by "new site" and the site page. */
export function SiteForm({
  lastResult,
  defaultValue,
  timeZones,
  submitLabel,
}: {
  lastResult?: SubmissionResult<string[]> | null;
  defaultValue?: Partial<SiteFormValues>;
  timeZones: string[];
  submitLabel: string;
}) {
  const navigation = useNavigation();
  const [form, fields] = useForm({
    id: "site-form",
    lastResult,
    defaultValue,
    onValidate: ({ formData }) => parseWithZod(formData, { schema: siteSchema }),
    shouldRevalidate: "onBlur",
  });
  return (
    <Form method="post" className="grid gap-4 sm:grid-cols-2" {...getFormProps(form)}>
      <input type="hidden" name="intent" value="save" />
      <FormErrors id={form.errorId} errors={form.errors} />
      <Field
        label="Code"
        meta={fields.code}
        autoComplete="off"
        maxLength={SITE_CODE_MAX}
        className="sm:col-span-1"
        hint={`Up to ${SITE_CODE_MAX} capital letters, digits and dashes, such as QL-03. Shown in tables and file names.`}
      />
      <Field label="Name" meta={fields.name} autoComplete="off" />
      <SelectField label="Kind of site" meta={fields.kind} options={SITE_KINDS.map((k) => ({ value: k, label: SITE_KIND_LABELS[k] }))} />
      <div>
        <Field label="Time zone" meta={fields.timeZone} list="time-zones" autoComplete="off" hint="The local clock at the site, such as Europe/London; logger times and deployments are read in it." />
        <datalist id="time-zones">
          {timeZones.map((tz) => (
            <option key={tz} value={tz} />
          ))}
        </datalist>
      </div>
      <Field label="Latitude" meta={fields.latitude} inputMode="decimal" hint="Decimal degrees, north positive (−90 to 90)." />
      <Field label="Longitude" meta={fields.longitude} inputMode="decimal" hint="Decimal degrees, east positive (−180 to 180)." />
      <TextareaField className="sm:col-span-2" label="Notes" meta={fields.notes} hint="Access, hazards, landmarks: anything the next visitor should know." />
      <div className="sm:col-span-2">
        <button type="submit" className="btn" disabled={navigation.state !== "idle"}>{submitLabel}</button>
      </div>
    </Form>
  );
}

/** Every zone name the server knows, plus UTC (which some platforms leave out of the list). */
export function timeZoneNames(): string[] {
  const names = typeof Intl.supportedValuesOf === "function" ? Intl.supportedValuesOf("timeZone") : [];
  return names.includes("UTC") ? names : ["UTC", ...names];
}
