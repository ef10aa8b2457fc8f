import { getFormProps, useForm, type SubmissionResult } from "@conform-to/react";
import { parseWithZod } from "@conform-to/zod/v4";
import { Form, useNavigation } from "react-router";
import { Field, FormErrors, SelectField } from "#app/components/forms.tsx";
import { deploySchema, endDeploymentSchema } from "./schemas.ts";

type SiteOption = { id: string; code: string; name: string; timeZone: string };

/** Puts a logger at a site from a given time; an open deployment elsewhere ends at that time. */
export function DeployForm({ sites, lastResult, current }: { sites: SiteOption[]; lastResult?: SubmissionResult<string[]>; current: string | null }) {
  const navigation = useNavigation();
  const [form, fields] = useForm({
    id: "deploy-form",
    lastResult,
    onValidate: ({ formData }) => parseWithZod(formData, { schema: deploySchema }),
    shouldRevalidate: "onBlur",
  });
  if (sites.length === 0) return <p className="mt-2 text-ink-500">There are no sites yet; add one first.</p>;
  return (
    <Form method="post" className="mt-2 grid gap-3 sm:grid-cols-2" {...getFormProps(form)}>
      <input type="hidden" name="intent" value="deploy" />
      <FormErrors id={form.errorId} errors={form.errors} />
      <SelectField
        label="Site"
        meta={fields.siteId}
        options={[{ value: "", label: "Choose a site…" }, ...sites.map((s) => ({ value: s.id, label: `${s.code} ${s.name} (${s.timeZone})` }))]}
      />
      <Field
        label="In the water from"
        meta={fields.deployedFrom}
        type="datetime-local"
        hint="The site’s local time (its zone is shown beside its name)."
      />
      <p className="text-sm text-ink-700 sm:col-span-2">
        {current ? `The deployment at ${current} ends at this time.` : "The logger is not deployed anywhere now."} The start must be after the start of its previous deployment.
      </p>
      <div className="sm:col-span-2">
        <button type="submit" className="btn" disabled={navigation.state !== "idle"}>Record the deployment</button>
      </div>
    </Form>
  );
}

/** Ends the open deployment (the logger came out and was not put in anywhere else). */
export function EndDeploymentForm({ siteLabel, timeZone, lastResult }: { siteLabel: string; timeZone: string; lastResult?: SubmissionResult<string[]> }) {
  const navigation = useNavigation();
  const [form, fields] = useForm({
    id: "end-deployment-form",
    lastResult,
    onValidate: ({ formData }) => parseWithZod(formData, { schema: endDeploymentSchema }),
    shouldRevalidate: "onBlur",
  });
  return (
    <Form method="post" className="mt-2 flex flex-wrap items-end gap-3" {...getFormProps(form)}>
      <input type="hidden" name="intent" value="end-deployment" />
      <FormErrors id={form.errorId} errors={form.errors} />
      <Field
        label={`Out of the water at ${siteLabel}`}
        meta={fields.deployedUntil}
        type="datetime-local"
        hint={`Local time at the site (${timeZone}).`}
      />
      <button type="submit" className="btn-quiet" disabled={navigation.state !== "idle"}>End the deployment</button>
    </Form>
  );
}
