import { sql, type Transaction } from "kysely";
import type { DB, RoleName } from "#db/schema.ts";
import { db } from "#app/utils/db.server.ts";

type Executor = typeof db | Transaction<DB>;

// In-app notifications: one row per person and event. Who is told: every active person whose role
// the rule names; technicians only for the sites assigned to them (the sites they look after).

/** Notifies the people a rule names about a new event; returns how many were notified. */
export async function notifyAboutEvent(trx: Executor, o: { exceedanceId: string; siteId: string; roles: readonly RoleName[] }) {
  if (!o.roles.length) return 0;
  const result = await sql`
    insert into notification (person_id, exceedance_id)
    select p.id, ${o.exceedanceId}::uuid
    from person p
    where p.disabled_at is null
      and p.role = any(${[...o.roles]}::text[])
      and (p.role <> 'technician' or exists (
        select 1 from site_assignment sa where sa.person_id = p.id and sa.site_id = ${o.siteId}::uuid))
    on conflict (person_id, exceedance_id) do nothing`.execute(trx);
  return Number(result.numAffectedRows ?? 0);
}

/** The header's count: served by the partial index on unread rows. */
export async function unreadCount(personId: string, trx: Executor = db) {
  const row = await trx
    .selectFrom("notification")
    .select((eb) => eb.fn.countAll<number>().as("n"))
    .where("person_id", "=", personId)
    .where("read_at", "is", null)
    .executeTakeFirstOrThrow();
  return Number(row.n);
}

export const NOTIFICATION_PAGE = 50;

/** A person's notifications, newest first, with what the page shows of each event. */
export async function listNotifications(personId: string, o: { unreadOnly: boolean; before?: number }, trx: Executor = db) {
  let q = trx
    .selectFrom("notification as n")
    .innerJoin("exceedance as e", "e.id", "n.exceedance_id")
    .innerJoin("site as s", "s.id", "e.site_id")
    .innerJoin("alert_rule as r", "r.id", "e.rule_id")
    .select([
      "n.id",
      "n.created_at",
      "n.read_at",
      "e.id as exceedanceId",
      "e.parameter",
      "e.condition",
      "e.started_at",
      "e.ended_at",
      "e.duration_s",
      "e.peak_value",
      "e.status",
      "e.outcome",
      "s.code as siteCode",
      "s.name as siteName",
      "s.time_zone as timeZone",
      "r.name as ruleName",
      "r.params",
    ])
    .where("n.person_id", "=", personId);
  if (o.unreadOnly) q = q.where("n.read_at", "is", null);
  if (o.before) q = q.where("n.id", "<", o.before);
  return q.orderBy("n.id", "desc").limit(NOTIFICATION_PAGE + 1).execute();
}

/** Marks one or all of a person's notifications read; never touches anyone else's. */
export async function markRead(personId: string, which: { id: number } | { all: true } | { exceedanceId: string }, trx: Executor = db) {
  let q = trx.updateTable("notification").set({ read_at: new Date() }).where("person_id", "=", personId).where("read_at", "is", null);
  if ("id" in which) q = q.where("id", "=", which.id);
  if ("exceedanceId" in which) q = q.where("exceedance_id", "=", which.exceedanceId);
  const r = await q.executeTakeFirst();
  return Number(r.numUpdatedRows);
}

export async function markUnread(personId: string, id: number, trx: Executor = db) {
  await trx.updateTable("notification").set({ read_at: null }).where("person_id", "=", personId).where("id", "=", id).execute();
}

/** Whether a person was told about an event (lets a technician or manager open the event they were sent). */
export async function wasNotified(personId: string, exceedanceId: string, trx: Executor = db) {
  const row = await trx.selectFrom("notification").select("id").where("person_id", "=", personId).where("exceedance_id", "=", exceedanceId).executeTakeFirst();
  return !!row;
}
