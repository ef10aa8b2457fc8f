import { sql, type Kysely } from "kysely";

// Change notices: after any statement that writes one of these tables, PostgreSQL sends a
// notification on the channel `ripplemark_changes` whose payload is the table's name. Notifications
// are delivered when the writing transaction commits (and never if it rolls back), to every
// connection listening. The app's response caches (app/utils/change-feed.server.ts) listen, so a
// cached chart or overview is dropped as soon as the data under it changes, whoever changed it: the
// app, the worker, a migration or someone at a psql prompt.
//
// Statement-level triggers, so a 300,000-row COPY costs one notice, not 300,000. On the partitioned
// `readings` table the trigger on the parent fires for statements addressed to the parent, which is
// how every writer in the app writes readings.
export const NOTIFIED_TABLES = [
  "readings",
  "site",
  "logger",
  "logger_deployment",
  "site_assignment",
  "site_threshold",
  "exceedance",
  "alert_rule",
] as const;

export async function up(db: Kysely<any>): Promise<void> {
  await sql`
    create function notify_table_change() returns trigger language plpgsql as $$
    begin
      perform pg_notify('ripplemark_changes', tg_table_name);
      return null;
    end $$`.execute(db);
  for (const table of NOTIFIED_TABLES) {
    await sql`
      create trigger ${sql.id(`${table}_change_notice`)}
      after insert or update or delete or truncate on ${sql.table(table)}
      for each statement execute function notify_table_change()`.execute(db);
  }
}

export async function down(db: Kysely<any>): Promise<void> {
  for (const table of NOTIFIED_TABLES) {
    await sql`drop trigger if exists ${sql.id(`${table}_change_notice`)} on ${sql.table(table)}`.execute(db);
  }
  await sql`drop function if exists notify_table_change()`.execute(db);
}
