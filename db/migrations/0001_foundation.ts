import { sql, type Kysely } from "kysely";

// Foundation: roles, people, sessions, one-time tokens, sign-in throttling, sites, loggers,
// technicians' site assignments and a general audit trail.
export async function up(db: Kysely<any>): Promise<void> {
  await sql`create extension if not exists pgcrypto`.execute(db);

  await db.schema
    .createTable("role")
    .addColumn("name", "text", (c) => c.primaryKey())
    .addColumn("label", "text", (c) => c.notNull())
    .addColumn("description", "text", (c) => c.notNull())
    .addColumn("rank", "integer", (c) => c.notNull())
    .execute();
  // Roles are data the code depends on, so they belong to the migration, not the demo seed.
  await db
    .insertInto("role")
    .values([
      { name: "technician", label: "Field technician", rank: 1, description: "Uploads logger files, maps file layouts, records field visits." },
      { name: "officer", label: "Environmental officer", rank: 2, description: "Reviews exceedances, sets alert rules, corrects drift and fouling, approves records, enters lab results." },
      { name: "manager", label: "Utility manager", rank: 3, description: "Reads weekly site summaries and reports; receives the weekly digest." },
      { name: "admin", label: "Administrator", rank: 4, description: "Manages people, roles, sites and loggers." },
    ])
    .execute();

  await db.schema
    .createTable("person")
    .addColumn("id", "uuid", (c) => c.primaryKey().defaultTo(sql`gen_random_uuid()`))
    .addColumn("email", "text", (c) => c.notNull())
    .addColumn("name", "text", (c) => c.notNull())
    .addColumn("role", "text", (c) => c.notNull().references("role.name"))
    .addColumn("password_hash", "text")
    .addColumn("weekly_digest", "boolean", (c) => c.notNull().defaultTo(false))
    .addColumn("disabled_at", "timestamptz")
    .addColumn("created_at", "timestamptz", (c) => c.notNull().defaultTo(sql`now()`))
    .addColumn("updated_at", "timestamptz", (c) => c.notNull().defaultTo(sql`now()`))
    .execute();
  await sql`create unique index person_email_key on person (lower(email))`.execute(db);

  await db.schema
    .createTable("session")
    .addColumn("id", "text", (c) => c.primaryKey())
    .addColumn("person_id", "uuid", (c) => c.notNull().references("person.id").onDelete("cascade"))
    .addColumn("created_at", "timestamptz", (c) => c.notNull().defaultTo(sql`now()`))
    .addColumn("expires_at", "timestamptz", (c) => c.notNull())
    .addColumn("revoked_at", "timestamptz")
    .addColumn("user_agent", "text")
    .execute();
  await db.schema.createIndex("session_person_idx").on("session").column("person_id").execute();

  // One-time tokens for password resets and invitations; only a hash of the token is stored.
  await db.schema
    .createTable("password_token")
    .addColumn("token_hash", "text", (c) => c.primaryKey())
    .addColumn("person_id", "uuid", (c) => c.notNull().references("person.id").onDelete("cascade"))
    .addColumn("purpose", "text", (c) => c.notNull().check(sql`purpose in ('reset', 'invite')`))
    .addColumn("created_at", "timestamptz", (c) => c.notNull().defaultTo(sql`now()`))
    .addColumn("expires_at", "timestamptz", (c) => c.notNull())
    .addColumn("used_at", "timestamptz")
    .execute();

  await db.schema
    .createTable("sign_in_failure")
    .addColumn("id", "bigserial", (c) => c.primaryKey())
    .addColumn("email", "text", (c) => c.notNull())
    .addColumn("at", "timestamptz", (c) => c.notNull().defaultTo(sql`now()`))
    .execute();
  await sql`create index sign_in_failure_email_at_idx on sign_in_failure (lower(email), at)`.execute(db);

  await db.schema
    .createTable("site")
    .addColumn("id", "uuid", (c) => c.primaryKey().defaultTo(sql`gen_random_uuid()`))
    .addColumn("code", "text", (c) => c.notNull().unique())
    .addColumn("name", "text", (c) => c.notNull())
    .addColumn("kind", "text", (c) =>
      c.notNull().check(sql`kind in ('spring', 'river', 'tidal', 'reservoir', 'treatment-works', 'borehole', 'other')`),
    )
    .addColumn("latitude", "double precision", (c) => c.notNull().check(sql`latitude between -90 and 90`))
    .addColumn("longitude", "double precision", (c) => c.notNull().check(sql`longitude between -180 and 180`))
    .addColumn("time_zone", "text", (c) => c.notNull().defaultTo("UTC"))
    .addColumn("notes", "text", (c) => c.notNull().defaultTo(""))
    // Derivation settings (used by ingest and recomputation).
    .addColumn("compensation_method", "text", (c) =>
      c.notNull().defaultTo("linear").check(sql`compensation_method in ('linear', 'natural-water')`),
    )
    .addColumn("alpha_per_c", "double precision", (c) => c.notNull().defaultTo(0.0191))
    .addColumn("reference_c", "double precision", (c) => c.notNull().defaultTo(25).check(sql`reference_c in (20, 25)`))
    .addColumn("tds_factor", "double precision", (c) => c.notNull().defaultTo(0.65).check(sql`tds_factor between 0.5 and 1.0`))
    .addColumn("settings_version", "integer", (c) => c.notNull().defaultTo(1))
    .addColumn("created_at", "timestamptz", (c) => c.notNull().defaultTo(sql`now()`))
    .addColumn("updated_at", "timestamptz", (c) => c.notNull().defaultTo(sql`now()`))
    .execute();

  await db.schema
    .createTable("logger")
    .addColumn("id", "uuid", (c) => c.primaryKey().defaultTo(sql`gen_random_uuid()`))
    .addColumn("serial", "text", (c) => c.notNull().unique())
    .addColumn("model", "text", (c) => c.notNull().defaultTo(""))
    .addColumn("logging_interval_s", "integer", (c) => c.notNull().defaultTo(900).check(sql`logging_interval_s > 0`))
    .addColumn("notes", "text", (c) => c.notNull().defaultTo(""))
    .addColumn("created_at", "timestamptz", (c) => c.notNull().defaultTo(sql`now()`))
    .execute();

  // Where a logger is (or was) deployed; deployed_until null means "still there".
  await db.schema
    .createTable("logger_deployment")
    .addColumn("id", "uuid", (c) => c.primaryKey().defaultTo(sql`gen_random_uuid()`))
    .addColumn("logger_id", "uuid", (c) => c.notNull().references("logger.id").onDelete("cascade"))
    .addColumn("site_id", "uuid", (c) => c.notNull().references("site.id").onDelete("cascade"))
    .addColumn("deployed_from", "timestamptz", (c) => c.notNull())
    .addColumn("deployed_until", "timestamptz")
    .addCheckConstraint("logger_deployment_range", sql`deployed_until is null or deployed_until > deployed_from`)
    .execute();
  await db.schema.createIndex("logger_deployment_logger_idx").on("logger_deployment").columns(["logger_id", "deployed_from"]).execute();
  await db.schema.createIndex("logger_deployment_site_idx").on("logger_deployment").columns(["site_id", "deployed_from"]).execute();

  await db.schema
    .createTable("site_assignment")
    .addColumn("person_id", "uuid", (c) => c.notNull().references("person.id").onDelete("cascade"))
    .addColumn("site_id", "uuid", (c) => c.notNull().references("site.id").onDelete("cascade"))
    .addPrimaryKeyConstraint("site_assignment_pkey", ["person_id", "site_id"])
    .execute();

  await db.schema
    .createTable("audit_event")
    .addColumn("id", "bigserial", (c) => c.primaryKey())
    .addColumn("at", "timestamptz", (c) => c.notNull().defaultTo(sql`now()`))
    .addColumn("person_id", "uuid", (c) => c.references("person.id").onDelete("set null"))
    .addColumn("entity", "text", (c) => c.notNull())
    .addColumn("entity_id", "text", (c) => c.notNull())
    .addColumn("action", "text", (c) => c.notNull())
    .addColumn("before", "jsonb")
    .addColumn("after", "jsonb")
    .addColumn("reason", "text")
    .execute();
  await db.schema.createIndex("audit_event_entity_idx").on("audit_event").columns(["entity", "entity_id", "at"]).execute();
}

export async function down(db: Kysely<any>): Promise<void> {
  for (const t of [
    "audit_event", "site_assignment", "logger_deployment", "logger", "site",
    "sign_in_failure", "password_token", "session", "person", "role",
  ]) {
    await db.schema.dropTable(t).ifExists().execute();
  }
}
