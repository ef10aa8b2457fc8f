import { sql, type Kysely } from "kysely";

// Field visits and what follows from them: calibration checks made at each visit, fouling and drift
// corrections of specific conductance (their own records; readings keep the uncorrected value, see
// 0005), periods of record between visits with their grade and approval, and the audit of changes
// to the approved record.
export async function up(db: Kysely<any>): Promise<void> {
  // One visit to a logger at a site: the sensor's readings before and after cleaning and an
  // independent field meter's (specific conductance µS/cm, temperature °C), whether the sensor was
  // recalibrated, notes and photos (S3 object keys). The fouling error is computed on save.
  await db.schema
    .createTable("field_visit")
    .addColumn("id", "uuid", (c) => c.primaryKey().defaultTo(sql`gen_random_uuid()`))
    .addColumn("site_id", "uuid", (c) => c.notNull().references("site.id").onDelete("cascade"))
    .addColumn("logger_id", "uuid", (c) => c.notNull().references("logger.id"))
    .addColumn("visited_at", "timestamptz", (c) => c.notNull())
    .addColumn("technician_id", "uuid", (c) => c.references("person.id").onDelete("set null"))
    .addColumn("before_sc_us_cm", "double precision", (c) => c.check(sql`before_sc_us_cm > 0`))
    .addColumn("before_temperature_c", "double precision")
    .addColumn("after_sc_us_cm", "double precision", (c) => c.check(sql`after_sc_us_cm > 0`))
    .addColumn("after_temperature_c", "double precision")
    .addColumn("meter_sc_us_cm", "double precision", (c) => c.check(sql`meter_sc_us_cm > 0`))
    .addColumn("meter_temperature_c", "double precision")
    .addColumn("fouling_error_us_cm", "double precision")
    .addColumn("fouling_error_percent", "double precision")
    .addColumn("fouling_passed", "boolean")
    .addColumn("temperature_error_c", "double precision")
    .addColumn("temperature_passed", "boolean")
    .addColumn("recalibrated", "boolean", (c) => c.notNull().defaultTo(false))
    .addColumn("notes", "text", (c) => c.notNull().defaultTo(""))
    .addColumn("photo_keys", sql`text[]`, (c) => c.notNull().defaultTo(sql`'{}'::text[]`))
    .addColumn("created_by", "uuid", (c) => c.references("person.id").onDelete("set null"))
    .addColumn("updated_by", "uuid", (c) => c.references("person.id").onDelete("set null"))
    .addColumn("created_at", "timestamptz", (c) => c.notNull().defaultTo(sql`now()`))
    .addColumn("updated_at", "timestamptz", (c) => c.notNull().defaultTo(sql`now()`))
    .execute();
  // Two visits to the same logger at the same instant would make a zero-length period.
  await sql`create unique index field_visit_logger_time_key on field_visit (site_id, logger_id, visited_at)`.execute(db);
  await db.schema.createIndex("field_visit_time_idx").on("field_visit").columns(["visited_at"]).execute();

  // A reading of the cleaned sensor in a calibration standard. The expected value at the standard's
  // temperature, the error and the verdict are computed on save (app/lib/quality/calibration.ts).
  await db.schema
    .createTable("calibration_check")
    .addColumn("id", "uuid", (c) => c.primaryKey().defaultTo(sql`gen_random_uuid()`))
    .addColumn("visit_id", "uuid", (c) => c.notNull().references("field_visit.id").onDelete("cascade"))
    .addColumn("position", "integer", (c) => c.notNull())
    .addColumn("standard", "text", (c) => c.notNull().check(sql`standard in ('1413', '12.88', '146.9', 'custom')`))
    .addColumn("custom_value_us_cm", "double precision", (c) => c.check(sql`custom_value_us_cm > 0`))
    .addColumn("standard_temperature_c", "double precision", (c) => c.notNull())
    .addColumn("sensor_us_cm", "double precision", (c) => c.notNull().check(sql`sensor_us_cm > 0`))
    .addColumn("expected_us_cm", "double precision", (c) => c.notNull())
    .addColumn("error_us_cm", "double precision", (c) => c.notNull())
    .addColumn("error_percent", "double precision", (c) => c.notNull())
    .addColumn("allowance_us_cm", "double precision", (c) => c.notNull())
    .addColumn("passed", "boolean", (c) => c.notNull())
    .addColumn("cell_constant_change_percent", "double precision", (c) => c.notNull())
    .addCheckConstraint("calibration_check_custom_value", sql`(standard = 'custom') = (custom_value_us_cm is not null)`)
    .execute();
  await sql`create unique index calibration_check_visit_position_key on calibration_check (visit_id, position)`.execute(db);

  // A correction of specific conductance over a period, prorated linearly from start_offset at
  // period_start to end_offset at period_end (µS/cm, or % of the uncorrected value). Proposed ones
  // (author_id null: proposed by Ripplemark from two visits) count only once approved.
  await db.schema
    .createTable("correction")
    .addColumn("id", "uuid", (c) => c.primaryKey().defaultTo(sql`gen_random_uuid()`))
    .addColumn("site_id", "uuid", (c) => c.notNull().references("site.id").onDelete("cascade"))
    .addColumn("logger_id", "uuid", (c) => c.notNull().references("logger.id"))
    .addColumn("kind", "text", (c) => c.notNull().check(sql`kind in ('fouling', 'drift', 'other')`))
    .addColumn("from_visit_id", "uuid", (c) => c.references("field_visit.id").onDelete("set null"))
    .addColumn("to_visit_id", "uuid", (c) => c.references("field_visit.id").onDelete("set null"))
    .addColumn("period_start", "timestamptz", (c) => c.notNull())
    .addColumn("period_end", "timestamptz", (c) => c.notNull())
    .addColumn("offset_unit", "text", (c) => c.notNull().check(sql`offset_unit in ('us_cm', 'percent')`))
    .addColumn("start_offset", "double precision", (c) => c.notNull().defaultTo(0))
    .addColumn("end_offset", "double precision", (c) => c.notNull())
    .addColumn("status", "text", (c) => c.notNull().defaultTo("proposed").check(sql`status in ('proposed', 'approved', 'rejected')`))
    .addColumn("author_id", "uuid", (c) => c.references("person.id").onDelete("set null"))
    .addColumn("reason", "text", (c) => c.notNull().defaultTo(""))
    .addColumn("approved_by", "uuid", (c) => c.references("person.id").onDelete("set null"))
    .addColumn("approved_at", "timestamptz")
    .addColumn("updated_by", "uuid", (c) => c.references("person.id").onDelete("set null"))
    .addColumn("created_at", "timestamptz", (c) => c.notNull().defaultTo(sql`now()`))
    .addColumn("updated_at", "timestamptz", (c) => c.notNull().defaultTo(sql`now()`))
    .addCheckConstraint("correction_period", sql`period_end > period_start`)
    .addCheckConstraint("correction_percent_range", sql`offset_unit <> 'percent' or (abs(start_offset) < 100 and abs(end_offset) < 100)`)
    .execute();
  await db.schema.createIndex("correction_site_period_idx").on("correction").columns(["site_id", "period_start", "period_end"]).execute();
  // One proposal of each kind per pair of visits (proposals are refreshed in place).
  await sql`create unique index correction_visits_kind_key on correction (from_visit_id, to_visit_id, kind) where author_id is null`.execute(db);

  // The record between two consecutive visits to a logger: its grade from the total absolute
  // correction (approved and still proposed corrections; rejected ones do not count) and, once
  // reviewed, its approval. An approved period is locked: later changes inside
  // it need a reason and leave a record_audit row.
  await db.schema
    .createTable("record_period")
    .addColumn("id", "uuid", (c) => c.primaryKey().defaultTo(sql`gen_random_uuid()`))
    .addColumn("site_id", "uuid", (c) => c.notNull().references("site.id").onDelete("cascade"))
    .addColumn("logger_id", "uuid", (c) => c.notNull().references("logger.id"))
    .addColumn("from_visit_id", "uuid", (c) => c.references("field_visit.id").onDelete("set null"))
    .addColumn("to_visit_id", "uuid", (c) => c.references("field_visit.id").onDelete("set null"))
    .addColumn("period_start", "timestamptz", (c) => c.notNull())
    .addColumn("period_end", "timestamptz", (c) => c.notNull())
    // Null when a µS/cm correction cannot be put in % (no readings and no visit values to compare).
    .addColumn("grade", "text", (c) => c.check(sql`grade in ('excellent', 'good', 'fair', 'poor', 'beyond-limit')`))
    .addColumn("total_correction_percent", "double precision")
    .addColumn("approved_by", "uuid", (c) => c.references("person.id").onDelete("set null"))
    .addColumn("approved_at", "timestamptz")
    .addColumn("locked", "boolean", (c) => c.notNull().defaultTo(false))
    .addColumn("updated_at", "timestamptz", (c) => c.notNull().defaultTo(sql`now()`))
    .addCheckConstraint("record_period_range", sql`period_end > period_start`)
    .addCheckConstraint("record_period_lock", sql`not locked or approved_at is not null`)
    .execute();
  await sql`create unique index record_period_logger_start_key on record_period (site_id, logger_id, period_start)`.execute(db);
  await db.schema.createIndex("record_period_site_time_idx").on("record_period").columns(["site_id", "period_start", "period_end"]).execute();

  // Every change to corrections, visits and periods of record: who, when, what, before → after, why.
  await db.schema
    .createTable("record_audit")
    .addColumn("id", "bigserial", (c) => c.primaryKey())
    .addColumn("at", "timestamptz", (c) => c.notNull().defaultTo(sql`now()`))
    .addColumn("person_id", "uuid", (c) => c.references("person.id").onDelete("set null"))
    .addColumn("site_id", "uuid", (c) => c.notNull().references("site.id").onDelete("cascade"))
    .addColumn("entity", "text", (c) => c.notNull().check(sql`entity in ('field_visit', 'correction', 'record_period')`))
    .addColumn("entity_id", "uuid", (c) => c.notNull())
    .addColumn("action", "text", (c) => c.notNull())
    .addColumn("before", "jsonb")
    .addColumn("after", "jsonb")
    .addColumn("reason", "text")
    // The change touched an approved (locked) period of record.
    .addColumn("in_locked_period", "boolean", (c) => c.notNull().defaultTo(false))
    .execute();
  await db.schema.createIndex("record_audit_site_idx").on("record_audit").columns(["site_id", "at"]).execute();
  await db.schema.createIndex("record_audit_entity_idx").on("record_audit").columns(["entity", "entity_id", "at"]).execute();
}

export async function down(db: Kysely<any>): Promise<void> {
  for (const t of ["record_audit", "record_period", "correction", "calibration_check", "field_visit"]) {
    await db.schema.dropTable(t).ifExists().execute();
  }
}
