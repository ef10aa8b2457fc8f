import { sql, type Kysely } from "kysely";

// Alert rules, the exceedances they find, the review trail, in-app notifications and the e-mail
// bookkeeping (rate limits, retries).
//
// - alert_rule: one condition on one parameter for a set of sites: listed sites (site_ids), every
//   site of some kinds (site_kinds, so a new site of that kind is covered at once), or every site
//   (both null). `params` holds the condition's settings in canonical units (µS/cm, mg/L, °C,
//   minutes) plus the units the form showed, so editing shows what was entered. `default_key`
//   names the rules the app ships with (the seed matches on it, so it is idempotent).
// - exceedance: one event per (rule, site, start) — that key makes detection idempotent: running it
//   again over the same readings updates the same rows. ended_at null = still going on at the
//   latest reading. threshold_value/clear_value are the levels as applied at the site (e.g. a
//   20 °C guideline value converted to the site's reference temperature), for the chart.
// - exceedance_audit: every change to an event (detection, review, flags), before → after as JSON.
// - notification: one per person and event; read_at null = unread.
// - email_send: one row per alert e-mail (one event, or a summary of events held back by the rule's
//   hourly limit); status and attempts are kept by the send-alert-email job.
export async function up(db: Kysely<any>): Promise<void> {
  await db.schema
    .createTable("alert_rule")
    .addColumn("id", "uuid", (c) => c.primaryKey().defaultTo(sql`gen_random_uuid()`))
    .addColumn("name", "text", (c) => c.notNull())
    .addColumn("parameter", "text", (c) =>
      c.notNull().check(sql`parameter in ('sc25', 'conductivity', 'temperature', 'tds', 'salinity', 'ph', 'depth', 'battery')`),
    )
    .addColumn("condition", "text", (c) =>
      c
        .notNull()
        .check(sql`condition in ('above', 'below', 'rate-of-change', 'flat-line', 'spike', 'out-of-range', 'temperature-range', 'missing-data')`),
    )
    .addColumn("params", "jsonb", (c) => c.notNull())
    .addColumn("site_ids", sql`uuid[]`)
    .addColumn("site_kinds", sql`text[]`)
    .addColumn("notify_roles", sql`text[]`, (c) => c.notNull().defaultTo(sql`'{}'::text[]`))
    .addColumn("email", "boolean", (c) => c.notNull().defaultTo(false))
    .addColumn("emails_per_hour", "integer", (c) => c.notNull().defaultTo(4).check(sql`emails_per_hour between 1 and 60`))
    .addColumn("enabled", "boolean", (c) => c.notNull().defaultTo(true))
    .addColumn("guideline_source", "text", (c) => c.notNull().defaultTo(""))
    .addColumn("default_key", "text", (c) => c.unique())
    .addColumn("created_at", "timestamptz", (c) => c.notNull().defaultTo(sql`now()`))
    .addColumn("updated_at", "timestamptz", (c) => c.notNull().defaultTo(sql`now()`))
    .addColumn("updated_by", "uuid", (c) => c.references("person.id").onDelete("set null"))
    .addCheckConstraint("alert_rule_scope_check", sql`site_ids is null or site_kinds is null`)
    .execute();
  await db.schema.createIndex("alert_rule_enabled_idx").on("alert_rule").column("enabled").execute();

  await db.schema
    .createTable("exceedance")
    .addColumn("id", "uuid", (c) => c.primaryKey().defaultTo(sql`gen_random_uuid()`))
    .addColumn("rule_id", "uuid", (c) => c.notNull().references("alert_rule.id"))
    .addColumn("site_id", "uuid", (c) => c.notNull().references("site.id").onDelete("cascade"))
    .addColumn("parameter", "text", (c) => c.notNull())
    .addColumn("condition", "text", (c) => c.notNull())
    .addColumn("started_at", "timestamptz", (c) => c.notNull())
    .addColumn("ended_at", "timestamptz")
    .addColumn("last_reading_at", "timestamptz", (c) => c.notNull())
    .addColumn("duration_s", "double precision", (c) => c.notNull().defaultTo(0))
    .addColumn("peak_value", "double precision", (c) => c.notNull())
    .addColumn("peak_at", "timestamptz", (c) => c.notNull())
    .addColumn("threshold_value", "double precision")
    .addColumn("clear_value", "double precision")
    .addColumn("status", "text", (c) => c.notNull().defaultTo("open").check(sql`status in ('open', 'closed', 'withdrawn')`))
    .addColumn("outcome", "text", (c) =>
      c.check(sql`outcome in ('water-quality', 'sensor-fault', 'calibration', 'field-work', 'undetermined')`),
    )
    .addColumn("comment", "text", (c) => c.notNull().defaultTo(""))
    .addColumn("readings_flagged", "integer", (c) => c.notNull().defaultTo(0))
    .addColumn("detected_at", "timestamptz", (c) => c.notNull().defaultTo(sql`now()`))
    .addColumn("updated_at", "timestamptz", (c) => c.notNull().defaultTo(sql`now()`))
    .addColumn("closed_by", "uuid", (c) => c.references("person.id").onDelete("set null"))
    .addColumn("closed_at", "timestamptz")
    .addUniqueConstraint("exceedance_rule_site_start_key", ["rule_id", "site_id", "started_at"])
    .execute();
  // The list's filters and sorts: by site, by status, by parameter, newest first.
  await db.schema.createIndex("exceedance_site_started_idx").on("exceedance").columns(["site_id", "started_at"]).execute();
  await db.schema.createIndex("exceedance_status_started_idx").on("exceedance").columns(["status", "started_at"]).execute();
  await db.schema.createIndex("exceedance_parameter_started_idx").on("exceedance").columns(["parameter", "started_at"]).execute();
  await db.schema.createIndex("exceedance_started_idx").on("exceedance").column("started_at").execute();
  await sql`create index exceedance_open_idx on exceedance (site_id) where status = 'open'`.execute(db);

  await db.schema
    .createTable("exceedance_audit")
    .addColumn("id", "bigserial", (c) => c.primaryKey())
    .addColumn("exceedance_id", "uuid", (c) => c.notNull().references("exceedance.id").onDelete("cascade"))
    .addColumn("person_id", "uuid", (c) => c.references("person.id").onDelete("set null"))
    .addColumn("at", "timestamptz", (c) => c.notNull().defaultTo(sql`now()`))
    .addColumn("action", "text", (c) => c.notNull())
    .addColumn("before", "jsonb")
    .addColumn("after", "jsonb")
    .execute();
  await db.schema.createIndex("exceedance_audit_event_idx").on("exceedance_audit").columns(["exceedance_id", "at"]).execute();

  await db.schema
    .createTable("notification")
    .addColumn("id", "bigserial", (c) => c.primaryKey())
    .addColumn("person_id", "uuid", (c) => c.notNull().references("person.id").onDelete("cascade"))
    .addColumn("exceedance_id", "uuid", (c) => c.notNull().references("exceedance.id").onDelete("cascade"))
    .addColumn("created_at", "timestamptz", (c) => c.notNull().defaultTo(sql`now()`))
    .addColumn("read_at", "timestamptz")
    .addUniqueConstraint("notification_person_event_key", ["person_id", "exceedance_id"])
    .execute();
  await db.schema.createIndex("notification_person_created_idx").on("notification").columns(["person_id", "created_at"]).execute();
  // The header's unread count reads only this small index.
  await sql`create index notification_unread_idx on notification (person_id) where read_at is null`.execute(db);

  await db.schema
    .createTable("email_send")
    .addColumn("id", "uuid", (c) => c.primaryKey().defaultTo(sql`gen_random_uuid()`))
    .addColumn("rule_id", "uuid", (c) => c.notNull().references("alert_rule.id").onDelete("cascade"))
    .addColumn("exceedance_id", "uuid", (c) => c.references("exceedance.id").onDelete("cascade"))
    .addColumn("kind", "text", (c) => c.notNull().check(sql`kind in ('event', 'summary')`))
    // queued → sent; failed (an attempt failed, the queue retries); held (over the hourly limit,
    // waiting for the summary) → summarised (went out in summary_id).
    .addColumn("status", "text", (c) => c.notNull().check(sql`status in ('queued', 'sent', 'failed', 'held', 'summarised')`))
    .addColumn("summary_id", "uuid", (c) => c.references("email_send.id").onDelete("set null"))
    .addColumn("attempts", "integer", (c) => c.notNull().defaultTo(0))
    .addColumn("last_error", "text")
    .addColumn("recipients", sql`text[]`, (c) => c.notNull().defaultTo(sql`'{}'::text[]`))
    .addColumn("message_id", "text")
    .addColumn("created_at", "timestamptz", (c) => c.notNull().defaultTo(sql`now()`))
    .addColumn("sent_at", "timestamptz")
    .execute();
  await db.schema.createIndex("email_send_rule_created_idx").on("email_send").columns(["rule_id", "created_at"]).execute();
  await sql`create index email_send_held_idx on email_send (rule_id) where status = 'held'`.execute(db);
}

export async function down(db: Kysely<any>): Promise<void> {
  for (const t of ["email_send", "notification", "exceedance_audit", "exceedance", "alert_rule"]) {
    await db.schema.dropTable(t).ifExists().execute();
  }
}
