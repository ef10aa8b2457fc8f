import type { ReactNode } from "react";
import { Form, Link, useSearchParams } from "react-router";
import { PERSON_STATUS_LABELS, type PersonStatus } from "#app/utils/person-status.ts";

// Pieces shared by the administration pages.

/** The confirmation line after a redirect with `?saved=<key>`; only known keys show a message. */
export function SavedNotice({ messages }: { messages: Record<string, string> }) {
  const [params] = useSearchParams();
  const key = params.get("saved");
  const message = key ? messages[key] : undefined;
  if (!message) return null;
  return (
    <p role="status" className="rounded border border-reed-600 bg-reed-100 px-3 py-2 text-reed-700">
      <span aria-hidden="true">✓ </span>
      {message}
    </p>
  );
}

/** A warning after a redirect with `?problem=<key>`. */
export function ProblemNotice({ messages }: { messages: Record<string, string> }) {
  const [params] = useSearchParams();
  const key = params.get("problem");
  const message = key ? messages[key] : undefined;
  if (!message) return null;
  return (
    <p role="alert" className="caution">
      {message}
    </p>
  );
}

export function BackLink({ to, children }: { to: string; children: ReactNode }) {
  return (
    <Link to={to} className="text-sm text-lake-700 underline">
      <span aria-hidden="true">← </span>
      {children}
    </Link>
  );
}

const ACTION_LABELS: Record<string, string> = {
  invite: "Invited",
  "resend-invite": "Invitation sent again",
  "change-role": "Role changed",
  "assign-sites": "Sites assigned",
  disable: "Disabled",
  enable: "Enabled again",
  create: "Created",
  update: "Changed",
  deploy: "Deployed",
  "end-deployment": "Deployment ended",
};

type AuditLine = {
  id: string;
  at: string;
  action: string;
  actorName: string;
  changes: { field: string; before: string | null; after: string | null }[];
};

/** The record's change history, newest first. */
export function AuditTrail({ events, headingId }: { events: AuditLine[]; headingId: string }) {
  return (
    <section className="card" aria-labelledby={headingId}>
      <h2 id={headingId}>Change history</h2>
      {events.length === 0 ? (
        <p className="mt-2 text-ink-500">No changes recorded yet.</p>
      ) : (
        <ol className="mt-2 space-y-3">
          {events.map((e) => (
            <li key={e.id} className="border-l-2 border-ink-200 pl-3">
              <p>
                <span className="font-semibold">{ACTION_LABELS[e.action] ?? e.action}</span>
                <span className="text-ink-500"> · {e.at} · by {e.actorName}</span>
              </p>
              {e.changes.length ? (
                <ul className="mt-0.5 text-sm text-ink-700">
                  {e.changes.map((c) => (
                    <li key={c.field}>
                      <span className="font-semibold">{c.field.replaceAll("_", " ")}</span>:{" "}
                      {c.before !== null ? (
                        <>
                          {c.before} <span aria-hidden="true">→</span>
                          <span className="sr-only">changed to</span>{" "}
                        </>
                      ) : null}
                      {c.after ?? "—"}
                    </li>
                  ))}
                </ul>
              ) : null}
            </li>
          ))}
        </ol>
      )}
    </section>
  );
}

/**
 * A GET form of filters above a table. Submitting starts again at page 1 but keeps the sort and
 * page size; "Clear" drops the filters.
 */
export function FilterForm({
  children,
  keep,
  clearTo,
  label,
}: {
  children: ReactNode;
  keep: Record<string, string | number>;
  clearTo: string;
  label: string;
}) {
  return (
    <Form method="get" role="search" aria-label={label} className="flex flex-wrap items-end gap-3">
      {Object.entries(keep).map(([k, v]) => (
        <input key={k} type="hidden" name={k} value={v} />
      ))}
      {children}
      <button type="submit" className="btn-quiet">Apply</button>
      <Link to={clearTo} className="py-2 text-lake-700 underline">Clear</Link>
    </Form>
  );
}

const STATUS: Record<PersonStatus, { mark: string; cls: string }> = {
  active: { mark: "✓", cls: "bg-reed-100 text-reed-700" },
  invited: { mark: "✉", cls: "bg-amber-100 text-amber-700" },
  disabled: { mark: "⊘", cls: "bg-ink-100 text-ink-700" },
};

/** A person's status as a mark and a word (never colour alone). */
export function PersonStatusBadge({ status }: { status: PersonStatus }) {
  const s = STATUS[status];
  return (
    <span className={`inline-flex items-center gap-1 rounded px-1.5 text-sm font-semibold ${s.cls}`}>
      <span aria-hidden="true">{s.mark}</span>
      {PERSON_STATUS_LABELS[status]}
    </span>
  );
}
