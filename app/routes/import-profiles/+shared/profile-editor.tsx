import { getFormProps, useForm, type SubmissionResult } from "@conform-to/react";
import { parseWithZod } from "@conform-to/zod/v4";
import { useEffect, useMemo, useRef, useState, type ReactNode } from "react";
import { useFetcher } from "react-router";
import { ErrorList, FormErrors } from "#app/components/forms.tsx";
import { isMeasured, UNIT_CHOICES } from "#app/lib/import/measurement-units.ts";
import { PARAMETER_LABELS, PARAMETERS, type ImportProfile, type Parameter } from "#app/lib/import/profile.ts";
import { sniffFile } from "#app/lib/import/sniff.ts";
import {
  DECIMAL_MARKS,
  DELIMITERS,
  emptyValues,
  formatUtcOffset,
  profileFormSchema,
  TIME_FORMAT_LABELS,
  TIME_FORMATS,
  unitFor,
  UTC_OFFSETS_MINUTES,
  valuesFromProfile,
  valuesFromSniff,
  type DecimalName,
  type DelimiterName,
  type EditorValues,
  type TimeFormat,
} from "./profile-form.ts";
import { columnSamples, columnsFromRecords, readFileSample, sampleRecords, type Sample } from "./sample.ts";
import { SamplePreview, SampleTable } from "./sample-views.tsx";

export type SavedProfile = { id: string; name: string; headerSignature: string };
export type ProfileActionData = { result: SubmissionResult<string[]>; saved: SavedProfile | null };

type Props = {
  formId: string;
  /** Where the form posts (the new or edit route). */
  action: string;
  initialName: string;
  /** The stored profile being edited; null for a new one. */
  initialProfile: ImportProfile | null;
  sample: Sample | null;
  /** Whether the person may choose or drop a local file as the sample. */
  allowPickSample: boolean;
  /** Extra hidden fields (e.g. the upload to return to, `respond=json` in a dialog). */
  hidden?: Record<string, string>;
  submitLabel: string;
  /** The action's answer after a plain (no-JavaScript) post of the route's own form. */
  serverResult?: SubmissionResult<string[]> | null;
  onSaved?: (saved: SavedProfile) => void;
  onCancel?: () => void;
  /** Heading level of the editor's sections (2 on a page, 3 in a dialog). */
  headingLevel?: 2 | 3;
};

const PARAMETER_HINTS: Partial<Record<Parameter, string>> = {
  conductivity: "conductivity at the water's temperature",
  "specific-conductance": "specific conductance, already at 25 °C",
  depth: "depth or water level",
  battery: "battery voltage",
  ignore: "not used",
};

function parameterLabel(p: Parameter) {
  const text = PARAMETER_HINTS[p] ?? PARAMETER_LABELS[p];
  return text.charAt(0).toUpperCase() + text.slice(1);
}

function initialValues(props: Props): EditorValues {
  const sniff = props.sample ? sniffFile(props.sample.text, { fileName: props.sample.fileName, truncated: props.sample.truncated }) : null;
  if (props.initialProfile) {
    const values = valuesFromProfile(props.initialProfile, props.initialName);
    // A sample with dates that read either way keeps the profile's choice if it is one of the two.
    return { ...values, ambiguousDates: sniff?.ambiguousDates ?? false };
  }
  if (sniff && !sniff.problem) return valuesFromSniff(sniff, props.initialName);
  return emptyValues(props.initialName);
}

export function ProfileEditor(props: Props) {
  const { formId, action, allowPickSample, hidden, submitLabel, onSaved, onCancel } = props;
  const H = props.headingLevel === 3 ? "h3" : "h2";
  // h2 has the base style; an h3 (in the dialog) looks the same size as its dialog's sections need.
  const headingClass = props.headingLevel === 3 ? "text-lg font-semibold" : undefined;
  const fetcher = useFetcher<ProfileActionData>();
  const [sample, setSample] = useState<Sample | null>(props.sample);
  const [values, setValues] = useState<EditorValues>(() => initialValues(props));
  const [sampleMessage, setSampleMessage] = useState<string | null>(null);

  const sniff = useMemo(
    () => (sample ? sniffFile(sample.text, { fileName: sample.fileName, truncated: sample.truncated }) : null),
    [sample],
  );
  const delimiterChar = DELIMITERS[values.delimiter].char;
  const records = useMemo(() => (sample ? sampleRecords(sample, delimiterChar) : []), [sample, delimiterChar]);

  const [form] = useForm({
    id: formId,
    lastResult: fetcher.data?.result ?? props.serverResult ?? null,
    onValidate: ({ formData }) => parseWithZod(formData, { schema: profileFormSchema }),
    shouldValidate: "onSubmit",
    shouldRevalidate: "onInput",
  });
  const errorsOf = (name: string) => form.allErrors[name];

  const savedRef = useRef<SavedProfile | null>(null);
  useEffect(() => {
    const saved = fetcher.data?.saved;
    if (fetcher.state === "idle" && saved && savedRef.current !== saved) {
      savedRef.current = saved;
      onSaved?.(saved);
    }
  }, [fetcher.state, fetcher.data, onSaved]);

  async function chooseSample(file: File | undefined) {
    if (!file) return;
    const next = await readFileSample(file);
    const result = sniffFile(next.text, { fileName: next.fileName, truncated: next.truncated });
    if (result.problem) {
      setSampleMessage(`${file.name}: ${result.problem.message}`);
      return;
    }
    setSampleMessage(null);
    setSample(next);
    setValues((v) =>
      props.initialProfile ? { ...v, ambiguousDates: result.ambiguousDates } : { ...valuesFromSniff(result, v.name) },
    );
  }

  /** Layout changes re-read the columns from the sample, keeping the choices made per position. */
  function changeLayout(patch: Partial<Pick<EditorValues, "delimiter" | "headerLine" | "dataStartLine">>) {
    setValues((v) => {
      const next = { ...v, ...patch };
      if (!sample || Number.isNaN(next.headerLine) || Number.isNaN(next.dataStartLine)) return next;
      const recs = patch.delimiter ? sampleRecords(sample, DELIMITERS[next.delimiter].char) : records;
      return { ...next, columns: columnsFromRecords(recs, next.headerLine - 1, next.dataStartLine - 1, v.columns) };
    });
  }

  function changeColumn(index: number, patch: { parameter?: Parameter; unit?: string | null }) {
    setValues((v) => ({
      ...v,
      columns: v.columns.map((c) => {
        if (c.index !== index) return c;
        const parameter = patch.parameter ?? c.parameter;
        const unit = patch.unit !== undefined ? patch.unit : unitFor(parameter, c.unit);
        return { ...c, parameter, unit };
      }),
    }));
  }

  const busy = fetcher.state !== "idle";
  const id = (name: string) => `${formId}-${name}`;
  const fieldProps = (name: string, hint?: boolean) => {
    const errors = errorsOf(name);
    const describedBy = [hint ? `${id(name)}-hint` : null, errors?.length ? `${id(name)}-error` : null].filter(Boolean).join(" ");
    return { id: id(name), name, "aria-invalid": errors?.length ? true : undefined, "aria-describedby": describedBy || undefined };
  };
  const timeFormats: readonly TimeFormat[] = values.ambiguousDates ? ["dmy", "mdy"] : TIME_FORMATS;

  return (
    <fetcher.Form method="post" action={action} {...getFormProps(form)} className="space-y-5">
      <input type="hidden" name="intent" value="save" />
      {Object.entries(hidden ?? {}).map(([k, v]) => (
        <input key={k} type="hidden" name={k} value={v} />
      ))}
      {values.ambiguousDates ? <input type="hidden" name="ambiguousDates" value="on" /> : null}
      <FormErrors errors={form.errors} />

      <section className="card space-y-3" aria-labelledby={id("sample-title")}>
        <H id={id("sample-title")} className={headingClass}>Sample of the file</H>
        {allowPickSample ? <SamplePicker id={id("sample-file")} onFile={chooseSample} hasSample={!!sample} /> : null}
        {sampleMessage ? <p role="alert" className="caution">{sampleMessage}</p> : null}
        {sample ? (
          <SampleTable
            records={records}
            fileName={sample.fileName}
            headerRow={values.headerLine - 1}
            dataStartRow={values.dataStartLine - 1}
            delimiter={values.delimiter}
          />
        ) : (
          <p className="text-ink-500">
            No sample yet. {allowPickSample ? "Choose a logger file to see its first lines and a preview of how they are read." : ""}
          </p>
        )}
        {sniff && sniff.warnings.length > 0 ? (
          <ul className="caution list-inside list-disc" aria-label="Notes on the sample">
            {sniff.warnings.slice(0, 5).map((w) => (
              <li key={w}>{w}</li>
            ))}
          </ul>
        ) : null}
      </section>

      <section className="card space-y-4" aria-labelledby={id("layout-title")}>
        <H id={id("layout-title")} className={headingClass}>Layout</H>
        <div className="grid gap-4 sm:grid-cols-2 lg:grid-cols-3">
          <Labelled label="Values separated by" htmlFor={id("delimiter")} errors={errorsOf("delimiter")} errorId={`${id("delimiter")}-error`}>
            <select
              className="field-input"
              {...fieldProps("delimiter")}
              value={values.delimiter}
              onChange={(e) => changeLayout({ delimiter: e.target.value as DelimiterName })}
            >
              {Object.entries(DELIMITERS).map(([k, d]) => (
                <option key={k} value={k}>{d.label}</option>
              ))}
            </select>
          </Labelled>
          <Labelled label="Decimal mark" htmlFor={id("decimalMark")} errors={errorsOf("decimalMark")} errorId={`${id("decimalMark")}-error`}>
            <select
              className="field-input"
              {...fieldProps("decimalMark")}
              value={values.decimalMark}
              onChange={(e) => setValues((v) => ({ ...v, decimalMark: e.target.value as DecimalName }))}
            >
              {Object.entries(DECIMAL_MARKS).map(([k, d]) => (
                <option key={k} value={k}>{d.label}</option>
              ))}
            </select>
          </Labelled>
          <Labelled
            label="Header line"
            htmlFor={id("headerLine")}
            hint="The line with the column names; 0 when there is none."
            hintId={`${id("headerLine")}-hint`}
            errors={errorsOf("headerLine")}
            errorId={`${id("headerLine")}-error`}
          >
            <input
              type="number"
              min={0}
              inputMode="numeric"
              className="field-input"
              {...fieldProps("headerLine", true)}
              value={Number.isNaN(values.headerLine) ? "" : values.headerLine}
              onChange={(e) => changeLayout({ headerLine: e.target.value === "" ? Number.NaN : Number(e.target.value) })}
            />
          </Labelled>
          <Labelled
            label="First data line"
            htmlFor={id("dataStartLine")}
            hint="Lines between the header and this one (units, say) are skipped."
            hintId={`${id("dataStartLine")}-hint`}
            errors={errorsOf("dataStartLine")}
            errorId={`${id("dataStartLine")}-error`}
          >
            <input
              type="number"
              min={1}
              inputMode="numeric"
              className="field-input"
              {...fieldProps("dataStartLine", true)}
              value={Number.isNaN(values.dataStartLine) ? "" : values.dataStartLine}
              onChange={(e) => changeLayout({ dataStartLine: e.target.value === "" ? Number.NaN : Number(e.target.value) })}
            />
          </Labelled>
          <Labelled
            label="Logger clock, offset from UTC"
            htmlFor={id("utcOffset")}
            hint="Most loggers keep one clock time all year. For a logger kept on local standard time, choose that standard offset (winter time, no summer change). Timestamps written with their own offset ignore this."
            hintId={`${id("utcOffset")}-hint`}
            errors={errorsOf("utcOffset")}
            errorId={`${id("utcOffset")}-error`}
          >
            <select
              className="field-input"
              {...fieldProps("utcOffset", true)}
              value={String(values.utcOffset)}
              onChange={(e) => setValues((v) => ({ ...v, utcOffset: Number(e.target.value) }))}
            >
              {UTC_OFFSETS_MINUTES.map((m) => (
                <option key={m} value={m}>
                  UTC{formatUtcOffset(m)}
                </option>
              ))}
            </select>
          </Labelled>
          <Labelled
            label="Dates are written"
            htmlFor={id("timeFormat")}
            hint={values.ambiguousDates ? (sniff?.dateMessage ?? "The dates read either way: choose day-first or month-first.") : undefined}
            hintId={`${id("timeFormat")}-hint`}
            errors={errorsOf("timeFormat")}
            errorId={`${id("timeFormat")}-error`}
          >
            <select
              className="field-input"
              {...fieldProps("timeFormat", values.ambiguousDates)}
              value={values.timeFormat}
              onChange={(e) => setValues((v) => ({ ...v, timeFormat: e.target.value as TimeFormat | "" }))}
            >
              <option value="">Choose…</option>
              {timeFormats.map((f) => (
                <option key={f} value={f}>{TIME_FORMAT_LABELS[f]}</option>
              ))}
            </select>
          </Labelled>
        </div>
        <MissingValues
          idPrefix={id("missing")}
          values={values.missingValues}
          errorsOf={errorsOf}
          onChange={(missingValues) => setValues((v) => ({ ...v, missingValues }))}
        />
      </section>

      <section className="card space-y-3" aria-labelledby={id("columns-title")}>
        <H id={id("columns-title")} className={headingClass}>Columns</H>
        <ErrorList id={`${id("columns")}-error`} errors={errorsOf("columns")} />
        {values.columns.length === 0 ? (
          <p className="text-ink-500">Choose a sample file to list its columns.</p>
        ) : (
          <div className="overflow-x-auto">
            <table className="data-table" aria-describedby={errorsOf("columns")?.length ? `${id("columns")}-error` : undefined}>
              <caption className="sr-only">What each column of the file holds</caption>
              <thead>
                <tr>
                  <th scope="col">#</th>
                  <th scope="col">Header</th>
                  <th scope="col">Values in the sample</th>
                  <th scope="col">Holds</th>
                  <th scope="col">Unit</th>
                </tr>
              </thead>
              <tbody>
                {values.columns.map((c, i) => {
                  const label = `column ${c.index + 1}${c.header ? ` (${c.header})` : ""}`;
                  const pName = `columns[${i}].parameter`;
                  const uName = `columns[${i}].unit`;
                  const measured = isMeasured(c.parameter);
                  const choices = measured ? UNIT_CHOICES[c.parameter as keyof typeof UNIT_CHOICES].filter((u): u is string => u !== null) : [];
                  return (
                    <tr key={c.index}>
                      <td className="tabular-nums">
                        {c.index + 1}
                        <input type="hidden" name={`columns[${i}].index`} value={c.index} />
                        <input type="hidden" name={`columns[${i}].header`} value={c.header} />
                      </td>
                      <th scope="row" className="border-b border-ink-100 font-semibold">{c.header || <span className="text-ink-500">(no name)</span>}</th>
                      <td className="max-w-56 truncate font-mono text-sm text-ink-700">{columnSamples(records, values.dataStartLine - 1, c.index).join(" · ")}</td>
                      <td>
                        <select
                          className="field-input"
                          aria-label={`What ${label} holds`}
                          {...fieldProps(pName)}
                          value={c.parameter}
                          onChange={(e) => changeColumn(c.index, { parameter: e.target.value as Parameter })}
                        >
                          {PARAMETERS.map((p) => (
                            <option key={p} value={p}>{parameterLabel(p)}</option>
                          ))}
                        </select>
                        <ErrorList id={`${id(pName)}-error`} errors={errorsOf(pName)} />
                      </td>
                      <td>
                        {choices.length > 0 ? (
                          <select
                            className="field-input"
                            aria-label={`Unit of ${label}`}
                            {...fieldProps(uName)}
                            value={c.unit ?? ""}
                            onChange={(e) => changeColumn(c.index, { unit: e.target.value || null })}
                          >
                            <option value="">Choose…</option>
                            {choices.map((u) => (
                              <option key={u} value={u}>{u}</option>
                            ))}
                          </select>
                        ) : (
                          <span className="text-ink-500">{c.parameter === "ph" ? "pH units" : "—"}</span>
                        )}
                        <ErrorList id={`${id(uName)}-error`} errors={errorsOf(uName)} />
                      </td>
                    </tr>
                  );
                })}
              </tbody>
            </table>
          </div>
        )}
      </section>

      {sample ? (
        <section className="card space-y-3" aria-labelledby={id("preview-title")}>
          <H id={id("preview-title")} className={headingClass}>How the first rows are read</H>
          <SamplePreview values={values} sample={sample} />
        </section>
      ) : null}

      <section className="card space-y-3" aria-labelledby={id("save-title")}>
        <H id={id("save-title")} className="sr-only">Save</H>
        <Labelled
          label="Profile name"
          htmlFor={id("name")}
          hint="For example the logger model and export layout, “Four-electrode logger, comma export”."
          hintId={`${id("name")}-hint`}
          errors={errorsOf("name")}
          errorId={`${id("name")}-error`}
        >
          <input
            type="text"
            className="field-input max-w-xl"
            maxLength={80}
            {...fieldProps("name", true)}
            value={values.name}
            onChange={(e) => setValues((v) => ({ ...v, name: e.target.value }))}
          />
        </Labelled>
        <div className="flex flex-wrap gap-3">
          <button type="submit" className="btn" disabled={busy}>
            {busy ? "Saving…" : submitLabel}
          </button>
          {onCancel ? (
            <button type="button" className="btn-quiet" onClick={onCancel}>
              Cancel
            </button>
          ) : null}
        </div>
      </section>
    </fetcher.Form>
  );
}

function Labelled({
  label,
  htmlFor,
  hint,
  hintId,
  errors,
  errorId,
  children,
}: {
  label: string;
  htmlFor: string;
  hint?: string;
  hintId?: string;
  errors?: string[];
  errorId: string;
  children: ReactNode;
}) {
  return (
    <div>
      <label className="field-label" htmlFor={htmlFor}>{label}</label>
      {children}
      {hint ? <p id={hintId} className="mt-0.5 text-sm text-ink-500">{hint}</p> : null}
      <ErrorList id={errorId} errors={errors} />
    </div>
  );
}

function SamplePicker({ id, onFile, hasSample }: { id: string; onFile: (file: File | undefined) => void; hasSample: boolean }) {
  const input = useRef<HTMLInputElement>(null);
  const [over, setOver] = useState(false);
  return (
    <div
      className={`flex flex-wrap items-center gap-3 rounded-lg border-2 border-dashed p-3 ${over ? "border-lake-600 bg-lake-100" : "border-ink-200"}`}
      onDragOver={(e) => {
        e.preventDefault();
        setOver(true);
      }}
      onDragLeave={() => setOver(false)}
      onDrop={(e) => {
        e.preventDefault();
        setOver(false);
        onFile(e.dataTransfer.files[0]);
      }}
    >
      <input
        ref={input}
        id={id}
        type="file"
        accept=".csv,.txt,.tsv,.dat,text/csv,text/plain"
        className="sr-only"
        tabIndex={-1}
        aria-label="Sample logger file"
        onChange={(e) => {
          void onFile(e.target.files?.[0]);
          e.target.value = "";
        }}
      />
      <button type="button" className="btn-quiet" onClick={() => input.current?.click()}>
        {hasSample ? "Use another sample file" : "Choose a sample file"}
      </button>
      <span className="text-sm text-ink-500">or drop one here. Only its first 64 KB are read, in this browser.</span>
    </div>
  );
}

function MissingValues({
  idPrefix,
  values,
  errorsOf,
  onChange,
}: {
  idPrefix: string;
  values: string[];
  errorsOf: (name: string) => string[] | undefined;
  onChange: (values: string[]) => void;
}) {
  return (
    <fieldset className="space-y-2">
      <legend className="field-label">Values that mean “no reading”</legend>
      <p className="text-sm text-ink-500">Compared without regard to case. Empty cells always count as missing.</p>
      <ul className="flex flex-wrap gap-2">
        {values.map((v, i) => (
          <li key={i} className="flex items-center gap-1">
            <input
              type="text"
              name={`missingValues[${i}]`}
              id={`${idPrefix}-${i}`}
              aria-label={`No-reading value ${i + 1}`}
              className="field-input w-28 font-mono"
              maxLength={40}
              value={v}
              aria-invalid={errorsOf(`missingValues[${i}]`)?.length ? true : undefined}
              onChange={(e) => onChange(values.map((x, j) => (j === i ? e.target.value : x)))}
            />
            <button
              type="button"
              className="btn-quiet px-2 py-1"
              aria-label={`Remove “${v}”`}
              onClick={() => onChange(values.filter((_, j) => j !== i))}
            >
              <span aria-hidden="true">×</span>
            </button>
            <ErrorList errors={errorsOf(`missingValues[${i}]`)} />
          </li>
        ))}
        <li>
          <button type="button" className="btn-quiet py-1" onClick={() => onChange([...values, ""])}>
            Add a value
          </button>
        </li>
      </ul>
    </fieldset>
  );
}
