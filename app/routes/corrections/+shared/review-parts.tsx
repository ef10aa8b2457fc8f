import { getFormProps, getInputProps, getSelectProps, getTextareaProps, useForm, type FieldMetadata, type SubmissionResult } from "@conform-to/react";
import { parseWithZod } from "@conform-to/zod/v4";
import { useFetcher } from "react-router";
import type { z } from "zod";
import { ErrorList, FormErrors } from "#app/components/forms.tsx";
import { CORRECTION_KINDS, OFFSET_UNITS } from "#app/lib/quality/corrections.ts";
import { GRADE_DESCRIPTIONS, type Grade } from "#app/lib/quality/grades.ts";
import { addSchema, adjustSchema, approvePeriodSchema, decideSchema, KIND_LABELS, reopenPeriodSchema, STATUS_LABELS, UNIT_LABELS } from "#app/lib/visits/review-input.ts";
import { offsetText } from "../../visits/+shared/format.ts";
import type { ReviewData } from "./review.server.ts";

// The parts of a site's review page. Each form posts with its own fetcher (the page stays where it
// is) and shows its own errors; the loader's data follows after every change.

type ActionReply = { result?: SubmissionResult<string[]> };
type CorrectionView = ReviewData["corrections"][number];
type PeriodView = ReviewData["periods"][number];

function useReviewForm<S extends z.ZodType>(id: string, schema: S, fetcher: ReturnType<typeof useFetcher<ActionReply>>) {
  return useForm({
    id,
    lastResult: fetcher.state === "idle" ? fetcher.data?.result : undefined,
    onValidate: ({ formData }) => parseWithZod(formData, { schema }),
    shouldValidate: "onSubmit",
    shouldRevalidate: "onInput",
  });
}

function Note({ meta, required }: { meta: FieldMetadata<any>; required: boolean }) {
  return (
    <div className="min-w-64 flex-1">
      <label className="field-label" htmlFor={meta.id}>
        {required ? "Reason for changing the approved record (required)" : "Note for the record (optional)"}
      </label>
      <input className="field-input min-h-11" {...getInputProps(meta, { type: "text" })} key={meta.key} autoComplete="off" />
      <ErrorList id={meta.errorId} errors={meta.errors} />
    </div>
  );
}

function NumberInput({ meta, label }: { meta: FieldMetadata<any>; label: string }) {
  return (
    <div>
      <label className="field-label" htmlFor={meta.id}>{label}</label>
      <input className="field-input min-h-11" {...getInputProps(meta, { type: "text" })} key={meta.key} inputMode="decimal" autoComplete="off" />
      <ErrorList id={meta.errorId} errors={meta.errors} />
    </div>
  );
}

function Choice({ meta, label, options }: { meta: FieldMetadata<any>; label: string; options: { value: string; label: string }[] }) {
  const props = getSelectProps(meta);
  return (
    <div>
      <label className="field-label" htmlFor={meta.id}>{label}</label>
      <select className="field-input min-h-11" {...props} key={props.key}>
        {options.map((o) => (
          <option key={o.value} value={o.value}>{o.label}</option>
        ))}
      </select>
      <ErrorList id={meta.errorId} errors={meta.errors} />
    </div>
  );
}

const KIND_OPTIONS = CORRECTION_KINDS.map((k) => ({ value: k, label: KIND_LABELS[k] }));
const UNIT_OPTIONS = OFFSET_UNITS.map((u) => ({ value: u, label: UNIT_LABELS[u] }));

function DecideForm({ c }: { c: CorrectionView }) {
  const fetcher = useFetcher<ActionReply>();
  const [form, fields] = useReviewForm(`decide-${c.id}`, decideSchema, fetcher);
  const busy = fetcher.state !== "idle";
  return (
    <fetcher.Form method="post" {...getFormProps(form)} className="flex flex-wrap items-end gap-3">
      <input type="hidden" name="correctionId" value={c.id} />
      <FormErrors id={form.errorId} errors={form.errors} />
      <Note meta={fields.note} required={c.locked} />
      {c.status !== "approved" ? (
        <button type="submit" name="intent" value="approve" className="btn min-h-11" disabled={busy}>
          Approve and apply
        </button>
      ) : null}
      {c.status !== "rejected" ? (
        <button type="submit" name="intent" value="reject" className="btn-quiet min-h-11" disabled={busy}>
          {c.status === "approved" ? "Withdraw (reject)" : "Reject"}
        </button>
      ) : null}
    </fetcher.Form>
  );
}

function AdjustForm({ c }: { c: CorrectionView }) {
  const fetcher = useFetcher<ActionReply>();
  const schema = adjustSchema;
  const [form, fields] = useForm({
    id: `adjust-${c.id}`,
    lastResult: fetcher.state === "idle" ? fetcher.data?.result : undefined,
    defaultValue: { kind: c.kind, unit: c.unit, startOffset: String(+c.startOffset.toFixed(4)), endOffset: String(+c.endOffset.toFixed(4)), reason: c.reason },
    onValidate: ({ formData }) => parseWithZod(formData, { schema }),
    shouldValidate: "onSubmit",
    shouldRevalidate: "onInput",
  });
  return (
    <details className="rounded border border-ink-100 px-3 py-2">
      <summary className="cursor-pointer py-1 font-semibold">Adjust this correction</summary>
      <fetcher.Form method="post" {...getFormProps(form)} className="mt-3 space-y-3">
        <input type="hidden" name="intent" value="adjust" />
        <input type="hidden" name="correctionId" value={c.id} />
        <FormErrors id={form.errorId} errors={form.errors} />
        <div className="grid gap-3 sm:grid-cols-2 lg:grid-cols-4">
          <Choice meta={fields.kind} label="Kind" options={KIND_OPTIONS} />
          <Choice meta={fields.unit} label="Unit" options={UNIT_OPTIONS} />
          <NumberInput meta={fields.startOffset} label="Offset at the start" />
          <NumberInput meta={fields.endOffset} label="Offset at the end" />
        </div>
        <div>
          <label className="field-label" htmlFor={fields.reason.id}>Why this correction</label>
          <textarea className="field-input" rows={2} {...getTextareaProps(fields.reason)} key={fields.reason.key} />
          <ErrorList id={fields.reason.errorId} errors={fields.reason.errors} />
        </div>
        <div className="flex flex-wrap items-end gap-3">
          <Note meta={fields.note} required={c.locked} />
          <button type="submit" className="btn min-h-11" disabled={fetcher.state !== "idle"}>Save the adjustment</button>
        </div>
      </fetcher.Form>
    </details>
  );
}

export function CorrectionCard({ c }: { c: CorrectionView }) {
  return (
    <li className="card space-y-3" data-testid="correction" data-status={c.status} data-kind={c.kind}>
      <div className="flex flex-wrap items-baseline justify-between gap-2">
        <h3 className="text-lg font-semibold">
          {KIND_LABELS[c.kind]} · logger {c.logger}
        </h3>
        <span className="font-semibold" data-testid="correction-status">
          {STATUS_LABELS[c.status]}
          {c.locked ? " · in an approved period" : ""}
        </span>
      </div>
      <p>
        From {c.from} ({offsetText(c.startOffset, c.unit)}) to {c.to} ({offsetText(c.endOffset, c.unit)}), prorated linearly in between
        {c.unit === "percent" ? ", as a percentage of the recorded specific conductance" : ""}.
      </p>
      {c.reason ? <p className="text-ink-700">{c.reason}</p> : null}
      <p className="text-sm text-ink-500">
        {c.author ? `Entered by ${c.author}` : "Proposed by Ripplemark from two field visits"}
        {c.toVisitId ? (
          <>
            {" · "}
            <a className="text-lake-700 underline" href={`/visits/${c.toVisitId}`}>the visit of {c.toVisitAt}</a>
          </>
        ) : null}
        {c.editedBy ? ` · last changed by ${c.editedBy}` : ""}
        {c.approvedBy ? ` · approved by ${c.approvedBy}, ${c.approvedAt}` : ""}
      </p>
      <DecideForm c={c} />
      <AdjustForm c={c} />
    </li>
  );
}

/** A grade as a word with a bar of filled steps (shape and text, not colour alone). */
export function GradeMark({ grade, label }: { grade: Grade | null; label: string }) {
  const steps = grade ? { excellent: 4, good: 3, fair: 2, poor: 1, "beyond-limit": 0 }[grade] : 0;
  return (
    <span className="inline-flex items-center gap-2" title={grade ? GRADE_DESCRIPTIONS[grade] : undefined} data-grade={grade ?? "none"}>
      <span aria-hidden="true" className="inline-flex gap-0.5">
        {[0, 1, 2, 3].map((i) => (
          <span key={i} className={`inline-block h-3 w-2 rounded-sm border border-ink-700 ${i < steps ? "bg-ink-700" : "bg-white"}`} />
        ))}
      </span>
      <span className="font-semibold">{label}</span>
    </span>
  );
}

function PeriodAction({ p }: { p: PeriodView }) {
  const fetcher = useFetcher<ActionReply>();
  const [form, fields] = useReviewForm(`period-${p.id}`, p.locked ? reopenPeriodSchema : approvePeriodSchema, fetcher);
  return (
    <fetcher.Form method="post" {...getFormProps(form)} className="flex flex-wrap items-end gap-2">
      <input type="hidden" name="periodId" value={p.id} />
      <FormErrors id={form.errorId} errors={form.errors} />
      {p.locked ? (
        <>
          <input type="hidden" name="intent" value="reopen-period" />
          <div>
            <label className="sr-only" htmlFor={fields.reason.id}>Reason for reopening the period {p.from} to {p.to}</label>
            <input className="field-input min-h-11" placeholder="Reason for reopening" {...getInputProps(fields.reason, { type: "text" })} key={fields.reason.key} />
            <ErrorList id={fields.reason.errorId} errors={fields.reason.errors} />
          </div>
          <button type="submit" className="btn-quiet min-h-11" disabled={fetcher.state !== "idle"}>Reopen</button>
        </>
      ) : (
        <>
          <input type="hidden" name="intent" value="approve-period" />
          <button type="submit" className="btn min-h-11" disabled={fetcher.state !== "idle" || p.pending > 0} aria-describedby={p.pending ? `pending-${p.id}` : undefined}>
            Approve the period
          </button>
          {p.pending ? <span id={`pending-${p.id}`} className="text-sm text-ink-700">{p.pending} correction{p.pending === 1 ? "" : "s"} awaiting review first</span> : null}
        </>
      )}
    </fetcher.Form>
  );
}

export function PeriodsTable({ periods, canApprove }: { periods: PeriodView[]; canApprove: boolean }) {
  return (
    <div className="overflow-x-auto rounded-lg border border-ink-100 bg-white">
      <table className="data-table" data-testid="periods">
        <caption className="sr-only">Periods of record between visits</caption>
        <thead>
          <tr>
            <th scope="col">Period</th>
            <th scope="col">Logger</th>
            <th scope="col" className="text-right">Total correction</th>
            <th scope="col">Grade</th>
            <th scope="col">Approval</th>
            {canApprove ? <th scope="col">Action</th> : null}
          </tr>
        </thead>
        <tbody>
          {periods.length === 0 ? (
            <tr>
              <td colSpan={canApprove ? 6 : 5} className="py-6 text-center text-ink-500">No periods yet: a period runs from one visit to the next.</td>
            </tr>
          ) : (
            periods.map((p) => (
              <tr key={p.id} data-testid="period" data-grade={p.grade ?? "none"} data-locked={p.locked ? "yes" : "no"}>
                <th scope="row" className="border-b border-ink-100 font-normal">{p.from} to {p.to}</th>
                <td>{p.logger}</td>
                <td className="text-right tabular-nums">{p.totalPercent === null ? "—" : `${p.totalPercent.toLocaleString("en-GB", { minimumFractionDigits: 1, maximumFractionDigits: 1 })} %`}</td>
                <td><GradeMark grade={p.grade} label={p.gradeLabel} /></td>
                <td>{p.locked ? <span><span aria-hidden="true">🔒 </span>Approved by {p.approvedBy ?? "someone"}, {p.approvedAt}; locked</span> : "Not approved yet"}</td>
                {canApprove ? <td><PeriodAction p={p} /></td> : null}
              </tr>
            ))
          )}
        </tbody>
      </table>
    </div>
  );
}

export function AddCorrectionForm({ periods }: { periods: PeriodView[] }) {
  const fetcher = useFetcher<ActionReply>();
  const [form, fields] = useForm({
    id: "add-correction",
    lastResult: fetcher.state === "idle" ? fetcher.data?.result : undefined,
    defaultValue: { kind: "other", unit: "us_cm", startOffset: "0" },
    onValidate: ({ formData }) => parseWithZod(formData, { schema: addSchema }),
    shouldValidate: "onSubmit",
    shouldRevalidate: "onInput",
  });
  if (!periods.length) return <p className="text-ink-700">A correction needs a period between two visits; there is none yet.</p>;
  return (
    <fetcher.Form method="post" {...getFormProps(form)} className="space-y-3">
      <input type="hidden" name="intent" value="add" />
      <FormErrors id={form.errorId} errors={form.errors} />
      <div className="grid gap-3 sm:grid-cols-2 lg:grid-cols-5">
        <div className="lg:col-span-2">
          <Choice
            meta={fields.periodId}
            label="Period"
            options={[{ value: "", label: "Choose a period…" }, ...periods.map((p) => ({ value: p.id, label: `${p.from} to ${p.to} · ${p.logger}${p.locked ? " (approved)" : ""}` }))]}
          />
        </div>
        <Choice meta={fields.kind} label="Kind" options={KIND_OPTIONS} />
        <Choice meta={fields.unit} label="Unit" options={UNIT_OPTIONS} />
        <div className="grid grid-cols-2 gap-3">
          <NumberInput meta={fields.startOffset} label="At the start" />
          <NumberInput meta={fields.endOffset} label="At the end" />
        </div>
      </div>
      <div>
        <label className="field-label" htmlFor={fields.reason.id}>Why this correction</label>
        <textarea className="field-input" rows={2} {...getTextareaProps(fields.reason)} key={fields.reason.key} />
        <ErrorList id={fields.reason.errorId} errors={fields.reason.errors} />
      </div>
      <div className="flex flex-wrap items-end gap-3">
        <Note meta={fields.note} required={false} />
        <label className="flex min-h-11 items-center gap-2">
          <input className="h-5 w-5" {...getInputProps(fields.approve, { type: "checkbox" })} key={fields.approve.key} />
          Approve and apply it now
        </label>
        <button type="submit" className="btn min-h-11" disabled={fetcher.state !== "idle"}>Add the correction</button>
      </div>
    </fetcher.Form>
  );
}
