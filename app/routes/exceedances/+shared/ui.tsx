import type { ExceedanceOutcome, ExceedanceStatus } from "#db/schema.ts";
import { OUTCOME_LABELS, STATUS_LABELS } from "#app/lib/quality/exceedance-words.ts";

// Marks for an event's status and outcome: a shape and a word, never colour alone.

const STATUS_SHAPE: Record<ExceedanceStatus, string> = { open: "◆", closed: "✓", withdrawn: "–" };
const STATUS_CLASS: Record<ExceedanceStatus, string> = { open: "text-brick-700 font-semibold", closed: "text-reed-700", withdrawn: "text-ink-500" };

export function StatusMark({ status }: { status: ExceedanceStatus }) {
  return (
    <span className={STATUS_CLASS[status]} data-status={status}>
      <span aria-hidden="true">{STATUS_SHAPE[status]} </span>
      {STATUS_LABELS[status]}
    </span>
  );
}

export function OutcomeText({ outcome }: { outcome: ExceedanceOutcome | null }) {
  return outcome ? <>{OUTCOME_LABELS[outcome]}</> : <span className="text-ink-500">Not classified yet</span>;
}
