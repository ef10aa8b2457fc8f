import { getInputProps, getSelectProps, getTextareaProps, type FieldMetadata } from "@conform-to/react";
import type { ReactNode } from "react";

// Form fields wired to conform: label, input, hint and inline error, with aria-invalid and
// aria-describedby so screen readers announce the error with the field.

export function ErrorList({ id, errors }: { id?: string; errors?: string[] }) {
  if (!errors?.length) return null;
  return (
    <ul id={id} className="field-error" aria-live="polite">
      {errors.map((e) => (
        <li key={e}>{e}</li>
      ))}
    </ul>
  );
}

type InputType = Parameters<typeof getInputProps>[1]["type"];

export function Field({
  label,
  meta,
  type = "text",
  hint,
  className,
  ...rest
}: {
  label: ReactNode;
  meta: FieldMetadata<any>;
  type?: InputType;
  hint?: ReactNode;
  className?: string;
} & Omit<React.InputHTMLAttributes<HTMLInputElement>, "type" | "name" | "id" | "defaultValue">) {
  const hintId = hint ? `${meta.id}-hint` : undefined;
  const props = getInputProps(meta, { type: type as any, ariaDescribedBy: hintId });
  return (
    <div className={className}>
      <label className="field-label" htmlFor={meta.id}>{label}</label>
      <input className="field-input" {...props} {...rest} key={props.key} />
      {hint ? <p id={hintId} className="mt-0.5 text-sm text-ink-500">{hint}</p> : null}
      <ErrorList id={meta.errorId} errors={meta.errors} />
    </div>
  );
}

export function SelectField({
  label,
  meta,
  options,
  hint,
  className,
}: {
  label: ReactNode;
  meta: FieldMetadata<any>;
  options: { value: string; label: string }[];
  hint?: ReactNode;
  className?: string;
}) {
  const hintId = hint ? `${meta.id}-hint` : undefined;
  const props = getSelectProps(meta, { ariaDescribedBy: hintId });
  return (
    <div className={className}>
      <label className="field-label" htmlFor={meta.id}>{label}</label>
      <select className="field-input" {...props} key={props.key}>
        {options.map((o) => (
          <option key={o.value} value={o.value}>{o.label}</option>
        ))}
      </select>
      {hint ? <p id={hintId} className="mt-0.5 text-sm text-ink-500">{hint}</p> : null}
      <ErrorList id={meta.errorId} errors={meta.errors} />
    </div>
  );
}

export function TextareaField({
  label,
  meta,
  hint,
  className,
  rows = 3,
}: {
  label: ReactNode;
  meta: FieldMetadata<any>;
  hint?: ReactNode;
  className?: string;
  rows?: number;
}) {
  const hintId = hint ? `${meta.id}-hint` : undefined;
  const props = getTextareaProps(meta, { ariaDescribedBy: hintId });
  return (
    <div className={className}>
      <label className="field-label" htmlFor={meta.id}>{label}</label>
      <textarea className="field-input" rows={rows} {...props} key={props.key} />
      {hint ? <p id={hintId} className="mt-0.5 text-sm text-ink-500">{hint}</p> : null}
      <ErrorList id={meta.errorId} errors={meta.errors} />
    </div>
  );
}

export function FormErrors({ errors, id }: { errors?: string[]; id?: string }) {
  if (!errors?.length) return null;
  return (
    <div id={id} role="alert" className="rounded border border-brick-600 bg-brick-100 px-3 py-2 text-brick-700">
      {errors.map((e) => (
        <p key={e}>{e}</p>
      ))}
    </div>
  );
}
