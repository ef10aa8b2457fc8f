import { getFormProps, useForm, type SubmissionResult } from "@conform-to/react";
import { parseWithZod } from "@conform-to/zod/v4";
import { Form, useNavigation } from "react-router";
import { z } from "zod";
import { Field, FormErrors } from "#app/components/forms.tsx";
import { LAB_CSV_COLUMNS, LAB_CSV_MAX_BYTES, LAB_CSV_MAX_ROWS, type LabCsvRowError } from "#app/lib/lab/csv.ts";

export const LAB_CSV_TEMPLATE_PATH = "/api/lab/template.csv";

export const uploadSchema = z.object({
  intent: z.literal("upload"),
  file: z
    .file({ error: "Choose a CSV file" })
    .min(1, "The file is empty")
    .max(LAB_CSV_MAX_BYTES, `Files are limited to ${LAB_CSV_MAX_BYTES / 1_000_000} MB; split it into smaller files`),
});

/** Importing analyses from a CSV file: the layout, the template and the row-by-row report. */
export function CsvUpload({
  lastResult,
  rowErrors,
  errorCount,
}: {
  lastResult?: SubmissionResult<string[]> | null;
  rowErrors?: LabCsvRowError[];
  errorCount?: number;
}) {
  const navigation = useNavigation();
  const [form, fields] = useForm({
    id: "lab-upload",
    lastResult,
    onValidate: ({ formData }) => parseWithZod(formData, { schema: uploadSchema }),
    shouldValidate: "onSubmit",
  });
  const busy = navigation.state !== "idle" && navigation.formData?.get("intent") === "upload";
  const required = LAB_CSV_COLUMNS.filter((c) => c.required).map((c) => c.name);
  return (
    <section className="card space-y-4" aria-labelledby="upload-title">
      <h2 id="upload-title">Import analyses from a CSV file</h2>
      <p className="text-ink-700">
        One analysis per row, up to {LAB_CSV_MAX_ROWS} rows. The first row names the columns; only{" "}
        {required.map((r, i) => (
          <span key={r}>
            {i ? " and " : ""}
            <code>{r}</code>
          </span>
        ))}{" "}
        are required, the others may be left out or empty, in any order (names are matched ignoring case; a unit in
        brackets after a name is ignored). Every row is checked before anything is saved: if any row has a problem,
        nothing is imported and each problem is listed by row and column.
      </p>
      <p>
        <a href={LAB_CSV_TEMPLATE_PATH} download className="btn-quiet">
          <span aria-hidden="true">↓</span> Download the template (CSV)
        </a>
      </p>
      <details className="rounded border border-ink-100 px-3 py-2">
        <summary className="cursor-pointer font-semibold">The columns</summary>
        <div className="mt-2 overflow-x-auto">
          <table className="data-table">
            <caption className="sr-only">Columns of the lab analysis CSV</caption>
            <thead>
              <tr>
                <th scope="col">Column</th>
                <th scope="col">Contents</th>
                <th scope="col">Required</th>
              </tr>
            </thead>
            <tbody>
              {LAB_CSV_COLUMNS.map((c) => (
                <tr key={c.name}>
                  <th scope="row" className="font-normal"><code>{c.name}</code></th>
                  <td>{c.meaning}</td>
                  <td>{c.required ? "Yes" : "No"}</td>
                </tr>
              ))}
            </tbody>
          </table>
          <p className="mt-2 text-sm text-ink-700">
            Numbers use a decimal point and no thousands separators. Write 0 for a result below the detection limit
            rather than “&lt;0.05”. Row numbers in the report count the column names as row 1, as a spreadsheet does.
          </p>
        </div>
      </details>
      <Form method="post" encType="multipart/form-data" className="flex flex-wrap items-end gap-3" {...getFormProps(form)}>
        <input type="hidden" name="intent" value="upload" />
        <Field label="CSV file" meta={fields.file} type="file" accept=".csv,text/csv" className="min-w-64" />
        <button type="submit" className="btn" disabled={busy}>
          {busy ? "Checking…" : "Check and import"}
        </button>
      </Form>
      <FormErrors id={form.errorId} errors={form.errors} />
      {rowErrors?.length ? (
        <div className="overflow-x-auto rounded-lg border border-ink-100">
          <table className="data-table" aria-describedby={form.errorId}>
            <caption className="px-3 pt-2 text-left text-sm text-ink-700">
              Problems found{errorCount && errorCount > rowErrors.length ? ` (the first ${rowErrors.length} of ${errorCount})` : ""}
            </caption>
            <thead>
              <tr>
                <th scope="col" className="text-right">Row</th>
                <th scope="col">Column</th>
                <th scope="col">Value</th>
                <th scope="col">Problem</th>
              </tr>
            </thead>
            <tbody>
              {rowErrors.map((e, i) => (
                <tr key={`${e.row}-${e.column}-${i}`} data-row={e.row} data-column={e.column}>
                  <td className="text-right tabular-nums">{e.row}</td>
                  <td><code>{e.column || "—"}</code></td>
                  <td className="break-words">{e.value || <span className="whitespace-nowrap text-ink-500">(empty)</span>}</td>
                  <td>{e.reason}</td>
                </tr>
              ))}
            </tbody>
          </table>
        </div>
      ) : null}
    </section>
  );
}
