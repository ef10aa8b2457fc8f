import type { AlertParameterName, ExceedanceOutcome, ExceedanceStatus } from "#db/schema.ts";
import { showValue } from "#app/lib/quality/alert-rules.ts";
import { OUTCOME_LABELS, STATUS_LABELS } from "#app/lib/quality/exceedance-words.ts";

// The change history of an event in words: who, when, and each field's before → after.

const ACTIONS: Record<string, string> = {
  detected: "Found by the alert rule",
  extended: "Changed by new or re-processed readings",
  "found-again": "Found again in the readings",
  withdrawn: "No longer supported by the readings",
  levels: "Levels updated after the rule changed",
  reviewed: "Reviewed",
  closed: "Closed",
  reopened: "Reopened",
};

const FIELDS: Record<string, string> = {
  outcome: "Outcome",
  comment: "Comment",
  status: "Status",
  readings_flagged: "Readings flagged",
  started_at: "Started",
  ended_at: "Ended",
  peak_value: "Peak",
  peak_at: "Peak at",
  threshold_value: "Threshold",
  clear_value: "Clear level",
};

type Row = { id: number; at: Date; action: string; before: unknown; after: unknown; person_id: string | null; personName: string | null };

export function describeAudit(rows: Row[], parameter: AlertParameterName, unit: string | undefined, formatAt: (d: Date) => string) {
  const show = (field: string, value: unknown): string => {
    if (value === null || value === undefined || value === "") {
      if (field === "outcome") return "not classified";
      if (field === "ended_at") return "still going on";
      return "—";
    }
    if (field === "outcome") return OUTCOME_LABELS[value as ExceedanceOutcome] ?? String(value);
    if (field === "status") return STATUS_LABELS[value as ExceedanceStatus] ?? String(value);
    if (field.endsWith("_at") && typeof value === "string") return formatAt(new Date(value));
    if ((field === "peak_value" || field === "threshold_value" || field === "clear_value") && typeof value === "number") return showValue(parameter, value, unit);
    if (field === "comment") return `“${String(value)}”`;
    return String(value);
  };
  return rows.map((r) => {
    const before = (r.before ?? {}) as Record<string, unknown>;
    const after = (r.after ?? {}) as Record<string, unknown>;
    const keys = [...new Set([...Object.keys(before), ...Object.keys(after)])].filter((k) => k in FIELDS);
    return {
      id: String(r.id),
      at: formatAt(r.at),
      action: ACTIONS[r.action] ?? r.action,
      who: r.person_id ? (r.personName ?? "someone no longer listed") : "Ripplemark",
      changes: keys.map((k) => ({ field: FIELDS[k], before: r.action === "detected" ? "—" : show(k, before[k]), after: show(k, after[k]) })),
    };
  });
}
