import type { Kysely, Transaction } from "kysely";
import type { DB } from "#db/schema.ts";
import { db } from "#app/utils/db.server.ts";

type Executor = Kysely<DB> | Transaction<DB>;

type Json = string | number | boolean | null | Json[] | { [key: string]: Json };
export type RecordValues = Record<string, Json>;

export type RecordChange = {
  actorId: string | null;
  siteId: string;
  entity: "field_visit" | "correction" | "record_period";
  entityId: string;
  action: string;
  before?: RecordValues | null;
  after?: RecordValues | null;
  reason?: string | null;
  inLockedPeriod?: boolean;
};

/** One row of the record's audit trail (corrections, visits, periods of record). */
export async function recordChange(change: RecordChange, trx: Executor = db) {
  await trx
    .insertInto("record_audit")
    .values({
      person_id: change.actorId,
      site_id: change.siteId,
      entity: change.entity,
      entity_id: change.entityId,
      action: change.action,
      before: change.before ? JSON.stringify(change.before) : null,
      after: change.after ? JSON.stringify(change.after) : null,
      reason: change.reason || null,
      in_locked_period: change.inLockedPeriod ?? false,
    })
    .execute();
}

/** The latest changes to a site's record, newest first, with the person's name. */
export async function listRecordAudit(filter: { siteId?: string; entity?: RecordChange["entity"]; entityId?: string }, limit = 30, trx: Executor = db) {
  let q = trx
    .selectFrom("record_audit as a")
    .leftJoin("person as p", "p.id", "a.person_id")
    .select(["a.id", "a.at", "a.entity", "a.entity_id", "a.action", "a.before", "a.after", "a.reason", "a.in_locked_period", "p.name as actor_name"]);
  if (filter.siteId) q = q.where("a.site_id", "=", filter.siteId);
  if (filter.entity) q = q.where("a.entity", "=", filter.entity);
  if (filter.entityId) q = q.where("a.entity_id", "=", filter.entityId);
  return q.orderBy("a.at", "desc").orderBy("a.id", "desc").limit(limit).execute();
}

export type RecordAuditRow = Awaited<ReturnType<typeof listRecordAudit>>[number];

function show(value: unknown): string {
  if (value === null || value === undefined || value === "") return "—";
  if (typeof value === "number") return Number.isInteger(value) ? String(value) : value.toFixed(3).replace(/0+$/, "").replace(/\.$/, "");
  if (Array.isArray(value)) return value.length ? value.map(show).join(", ") : "none";
  if (typeof value === "object") return JSON.stringify(value);
  return String(value);
}

/** Audit rows as text for a page: each changed field as before → after. */
export function describeRecordAudit(rows: RecordAuditRow[], formatAt: (at: Date) => string) {
  return rows.map((r) => {
    const before = (r.before ?? {}) as Record<string, unknown>;
    const after = (r.after ?? {}) as Record<string, unknown>;
    const keys = [...new Set([...Object.keys(before), ...Object.keys(after)])];
    return {
      id: String(r.id),
      at: formatAt(r.at),
      entity: r.entity,
      entityId: r.entity_id,
      action: r.action,
      actorName: r.actor_name ?? "Ripplemark",
      reason: r.reason,
      inLockedPeriod: r.in_locked_period,
      changes: keys.map((k) => ({ field: k, before: k in before ? show(before[k]) : null, after: k in after ? show(after[k]) : null })),
    };
  });
}

export type RecordAuditLine = ReturnType<typeof describeRecordAudit>[number];
