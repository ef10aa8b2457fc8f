import { sql, type Kysely } from "kysely";

// Every version of every alert rule. A row-level trigger on alert_rule writes one row per insert and
// per update that changes anything (whatever wrote it: the rule pages, the default-rule seed, a
// psql prompt), with the rule before and after as JSON and the person who saved it (updated_by).
// The rule page shows them as "what changed". Rules that exist when this runs get a first row.
export async function up(db: Kysely<any>): Promise<void> {
  await db.schema
    .createTable("alert_rule_change")
    .addColumn("id", "bigserial", (c) => c.primaryKey())
    .addColumn("rule_id", "uuid", (c) => c.notNull().references("alert_rule.id").onDelete("cascade"))
    .addColumn("person_id", "uuid", (c) => c.references("person.id").onDelete("set null"))
    .addColumn("at", "timestamptz", (c) => c.notNull().defaultTo(sql`now()`))
    .addColumn("action", "text", (c) => c.notNull().check(sql`action in ('created', 'changed')`))
    .addColumn("before", "jsonb")
    .addColumn("after", "jsonb", (c) => c.notNull())
    .execute();
  await db.schema.createIndex("alert_rule_change_rule_idx").on("alert_rule_change").columns(["rule_id", "at"]).execute();

  await sql`
    create function record_alert_rule_change() returns trigger language plpgsql as $$
    begin
      insert into alert_rule_change (rule_id, person_id, at, action, before, after)
      values (
        new.id,
        new.updated_by,
        now(),
        case when tg_op = 'INSERT' then 'created' else 'changed' end,
        case when tg_op = 'INSERT' then null else to_jsonb(old) end,
        to_jsonb(new)
      );
      return null;
    end $$`.execute(db);
  await sql`
    create trigger alert_rule_history_insert after insert on alert_rule
    for each row execute function record_alert_rule_change()`.execute(db);
  await sql`
    create trigger alert_rule_history_update after update on alert_rule
    for each row when (old.* is distinct from new.*) execute function record_alert_rule_change()`.execute(db);

  await sql`
    insert into alert_rule_change (rule_id, person_id, at, action, before, after)
    select id, updated_by, created_at, 'created', null, to_jsonb(alert_rule) from alert_rule`.execute(db);
}

export async function down(db: Kysely<any>): Promise<void> {
  await sql`drop trigger if exists alert_rule_history_update on alert_rule`.execute(db);
  await sql`drop trigger if exists alert_rule_history_insert on alert_rule`.execute(db);
  await sql`drop function if exists record_alert_rule_change()`.execute(db);
  await db.schema.dropTable("alert_rule_change").ifExists().execute();
}
