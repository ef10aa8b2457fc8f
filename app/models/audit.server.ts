import type { Transaction } from "kysely";
import type { DB } from "#db/schema.ts";
import { db } from "#app/utils/db.server.ts";

type Executor = typeof db | Transaction<DB>;

export type AuditEntity = "person" | "site" | "logger" | "import_profile" | "lab_sample";

type Json = string | number | boolean | null | Json[] | { [key: string]: Json };
export type AuditValues = Record<string, Json>;

/**
 * The fields that differ between `before` and `after` (compared as JSON), as two objects holding
 * only those fields. Returns null when nothing changed, so callers can skip a no-op write.
 */
export function changedFields(before: AuditValues, after: AuditValues) {
  const b: AuditValues = {};
  const a: AuditValues = {};
  for (const key of new Set([...Object.keys(before), ...Object.keys(after)])) {
    if (JSON.stringify(before[key] ?? null) !== JSON.stringify(after[key] ?? null)) {
      b[key] = before[key] ?? null;
      a[key] = after[key] ?? null;
    }
  }
  return Object.keys(a).length ? { before: b, after: a } : null;
}

/** Field names that must never reach the audit trail, whatever a caller passes. */
const NEVER_AUDITED = new Set(["password_hash", "passwordHash", "password", "token", "token_hash"]);

function scrub(values: AuditValues | null | undefined) {
  if (!values) return null;
  return Object.fromEntries(Object.entries(values).filter(([k]) => !NEVER_AUDITED.has(k)));
}

export async function recordAudit(
  event: {
    actorId: string;
    entity: AuditEntity;
    entityId: string;
    action: string;
    before?: AuditValues | null;
    after?: AuditValues | null;
    reason?: string | null;
  },
  trx: Executor = db,
) {
  const before = scrub(event.before);
  const after = scrub(event.after);
  await trx
    .insertInto("audit_event")
    .values({
      person_id: event.actorId,
      entity: event.entity,
      entity_id: event.entityId,
      action: event.action,
      // pg sends objects as JSON text; jsonb columns take it as is.
      before: before ? JSON.stringify(before) : null,
      after: after ? JSON.stringify(after) : null,
      reason: event.reason ?? null,
    })
    .execute();
}

/** The latest changes to one record, newest first, with the acting person's name. */
export async function listAuditEvents(entity: AuditEntity, entityId: string, limit = 20, trx: Executor = db) {
  return trx
    .selectFrom("audit_event as e")
    .leftJoin("person as p", "p.id", "e.person_id")
    .select(["e.id", "e.at", "e.action", "e.before", "e.after", "p.name as actorName"])
    .where("e.entity", "=", entity)
    .where("e.entity_id", "=", entityId)
    .orderBy("e.at", "desc")
    .orderBy("e.id", "desc")
    .limit(limit)
    .execute();
}

export type AuditEventRow = Awaited<ReturnType<typeof listAuditEvents>>[number];

function show(value: unknown): string {
  if (value === null || value === undefined || value === "") return "—";
  if (Array.isArray(value)) return value.length ? value.map(show).join(", ") : "none";
  if (typeof value === "object") return JSON.stringify(value);
  return String(value);
}

/**
 * Audit rows as plain text for a page: the change of each field as before → after. Fields ending in
 * `_id` are left out when the row also names the record readably (e.g. `site` beside `site_id`).
 */
export function describeAuditEvents(events: AuditEventRow[], formatAt: (at: Date) => string) {
  return events.map((e) => {
    const before = (e.before ?? {}) as Record<string, unknown>;
    const after = (e.after ?? {}) as Record<string, unknown>;
    const keys = [...new Set([...Object.keys(before), ...Object.keys(after)])].filter(
      (k) => !(k.endsWith("_id") && (k.slice(0, -3) in before || k.slice(0, -3) in after)),
    );
    return {
      id: String(e.id),
      at: formatAt(e.at),
      action: e.action,
      actorName: e.actorName ?? "someone no longer listed",
      changes: keys.map((k) => ({ field: k, before: k in before ? show(before[k]) : null, after: k in after ? show(after[k]) : null })),
    };
  });
}

export type AuditLine = ReturnType<typeof describeAuditEvents>[number];
