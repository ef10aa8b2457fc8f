import { getFormProps, useForm, type SubmissionResult } from "@conform-to/react";
import { parseWithZod } from "@conform-to/zod/v4";
import { Form, useNavigation } from "react-router";
import { Field, FormErrors, TextareaField } from "#app/components/forms.tsx";
import { loggerSchema } from "./schemas.ts";

export type LoggerFormValues = { serial: string; model: string; intervalMinutes: string; notes: string };

/** A logger's identity; used by "new logger" and the logger page. */
export function LoggerForm({
  lastResult,
  defaultValue,
  submitLabel,
}: {
  lastResult?: SubmissionResult<string[]> | null;
  defaultValue?: Partial<LoggerFormValues>;
  submitLabel: string;
}) {
  const navigation = useNavigation();
  const [form, fields] = useForm({
    id: "logger-form",
    lastResult,
    defaultValue,
    onValidate: ({ formData }) => parseWithZod(formData, { schema: loggerSchema }),
    shouldRevalidate: "onBlur",
  });
  return (
    <Form method="post" className="grid gap-4 sm:grid-cols-2" {...getFormProps(form)}>
      <input type="hidden" name="intent" value="save" />
      <FormErrors id={form.errorId} errors={form.errors} />
      <Field label="Serial number" meta={fields.serial} autoComplete="off" hint="As printed on the housing; must be unique." />
      <Field label="Model" meta={fields.model} autoComplete="off" hint="Maker and model, in your own words." />
      <Field label="Logging interval (minutes)" meta={fields.intervalMinutes} inputMode="decimal" hint="How often it records, such as 15. Use 0.5 for 30 seconds." />
      <TextareaField className="sm:col-span-2" label="Notes" meta={fields.notes} />
      <div className="sm:col-span-2">
        <button type="submit" className="btn" disabled={navigation.state !== "idle"}>{submitLabel}</button>
      </div>
    </Form>
  );
}

/** "15 min", "30 s", "1 h 30 min" */
export function formatInterval(seconds: number) {
  if (seconds < 60) return `${seconds} s`;
  const minutes = seconds / 60;
  if (minutes < 60 || minutes % 60 !== 0) {
    if (minutes >= 60) return `${Math.floor(minutes / 60)} h ${+(minutes % 60).toFixed(2)} min`;
    return `${+minutes.toFixed(2)} min`;
  }
  return `${minutes / 60} h`;
}
