import { sql, type Kysely } from "kysely";

// Uploads, import profiles, the readings store and its provenance.
export async function up(db: Kysely<any>): Promise<void> {
  await db.schema
    .createTable("import_profile")
    .addColumn("id", "uuid", (c) => c.primaryKey().defaultTo(sql`gen_random_uuid()`))
    .addColumn("name", "text", (c) => c.notNull().unique())
    .addColumn("header_signature", "text", (c) => c.notNull())
    .addColumn("settings", "jsonb", (c) => c.notNull())
    .addColumn("created_by", "uuid", (c) => c.references("person.id").onDelete("set null"))
    .addColumn("created_at", "timestamptz", (c) => c.notNull().defaultTo(sql`now()`))
    .addColumn("updated_at", "timestamptz", (c) => c.notNull().defaultTo(sql`now()`))
    .execute();
  await db.schema.createIndex("import_profile_signature_idx").on("import_profile").column("header_signature").execute();

  // A snapshot of a site's derivation settings; every derived value points at the one used.
  await db.schema
    .createTable("derivation_settings")
    .addColumn("id", "serial", (c) => c.primaryKey())
    .addColumn("site_id", "uuid", (c) => c.notNull().references("site.id").onDelete("cascade"))
    .addColumn("compensation_method", "text", (c) => c.notNull())
    .addColumn("alpha_per_c", "double precision", (c) => c.notNull())
    .addColumn("reference_c", "double precision", (c) => c.notNull())
    .addColumn("tds_factor", "double precision", (c) => c.notNull())
    .addColumn("created_at", "timestamptz", (c) => c.notNull().defaultTo(sql`now()`))
    .addColumn("created_by", "uuid", (c) => c.references("person.id").onDelete("set null"))
    .execute();
  await db.schema.createIndex("derivation_settings_site_idx").on("derivation_settings").columns(["site_id", "id"]).execute();

  await db.schema
    .createTable("upload")
    .addColumn("id", "uuid", (c) => c.primaryKey().defaultTo(sql`gen_random_uuid()`))
    .addColumn("object_key", "text", (c) => c.notNull().unique())
    .addColumn("file_name", "text", (c) => c.notNull())
    .addColumn("size_bytes", "bigint", (c) => c.notNull())
    .addColumn("content_type", "text", (c) => c.notNull())
    .addColumn("sha256", "text", (c) => c.notNull())
    .addColumn("site_id", "uuid", (c) => c.notNull().references("site.id"))
    .addColumn("logger_id", "uuid", (c) => c.notNull().references("logger.id"))
    .addColumn("profile_id", "uuid", (c) => c.references("import_profile.id").onDelete("set null"))
    .addColumn("uploaded_by", "uuid", (c) => c.references("person.id").onDelete("set null"))
    .addColumn("status", "text", (c) =>
      c.notNull().defaultTo("awaiting-file").check(sql`status in ('awaiting-file', 'queued', 'processing', 'done', 'failed', 'duplicate')`),
    )
    .addColumn("duplicate_of", "uuid", (c) => c.references("upload.id"))
    .addColumn("message", "text")
    .addColumn("rows_total", "integer", (c) => c.notNull().defaultTo(0))
    .addColumn("rows_accepted", "integer", (c) => c.notNull().defaultTo(0))
    .addColumn("rows_rejected", "integer", (c) => c.notNull().defaultTo(0))
    .addColumn("rows_duplicate", "integer", (c) => c.notNull().defaultTo(0))
    .addColumn("bytes_processed", "bigint", (c) => c.notNull().defaultTo(0))
    .addColumn("first_reading_at", "timestamptz")
    .addColumn("last_reading_at", "timestamptz")
    .addColumn("attempts", "integer", (c) => c.notNull().defaultTo(0))
    .addColumn("created_at", "timestamptz", (c) => c.notNull().defaultTo(sql`now()`))
    .addColumn("confirmed_at", "timestamptz")
    .addColumn("started_at", "timestamptz")
    .addColumn("finished_at", "timestamptz")
    .execute();
  await db.schema.createIndex("upload_sha256_idx").on("upload").column("sha256").execute();
  await db.schema.createIndex("upload_created_idx").on("upload").columns(["created_at"]).execute();
  await db.schema.createIndex("upload_logger_idx").on("upload").columns(["logger_id", "created_at"]).execute();

  // Rejected rows of an upload (the error report). Kept beside the upload, replaced on re-process.
  await db.schema
    .createTable("upload_error")
    .addColumn("upload_id", "uuid", (c) => c.notNull().references("upload.id").onDelete("cascade"))
    .addColumn("row_number", "integer", (c) => c.notNull())
    .addColumn("column_name", "text", (c) => c.notNull())
    .addColumn("raw_value", "text", (c) => c.notNull())
    .addColumn("reason", "text", (c) => c.notNull())
    .execute();
  await db.schema.createIndex("upload_error_upload_idx").on("upload_error").columns(["upload_id", "row_number"]).execute();

  // The readings store. Range-partitioned by time (one partition a year, created as needed by
  // ensure_reading_partitions), and every key carries site_id so the table can be distributed by
  // site_id on a Citus cluster without a schema change. Raw values (converted to canonical units,
  // never otherwise altered) sit beside the derived ones; settings_id says how they were derived.
  await sql`
    create table readings (
      site_id uuid not null,
      logger_id uuid not null,
      time timestamptz not null,
      upload_id uuid not null,
      row_number integer not null,
      conductivity_us_cm double precision,
      logger_sc_us_cm double precision,
      temperature_c double precision,
      ph double precision,
      depth_m double precision,
      battery_v double precision,
      sc25_us_cm double precision,
      tds_mg_l double precision,
      salinity_psu double precision,
      settings_id integer,
      quality_flag text,
      primary key (site_id, time, logger_id)
    ) partition by range (time)`.execute(db);
  // No index on upload_id: re-processing deletes an upload's rows through the primary key, by
  // the time range the upload covered (saves an index insert per reading).

  await sql`
    create or replace function ensure_reading_partitions(from_ts timestamptz, to_ts timestamptz)
    returns void language plpgsql as $$
    declare
      y int;
      part text;
    begin
      for y in extract(year from from_ts at time zone 'UTC')::int .. extract(year from to_ts at time zone 'UTC')::int loop
        part := format('readings_y%s', y);
        if to_regclass(part) is null then
          execute format(
            'create table if not exists %I partition of readings for values from (%L) to (%L)',
            part, make_timestamptz(y, 1, 1, 0, 0, 0, 'UTC'), make_timestamptz(y + 1, 1, 1, 0, 0, 0, 'UTC'));
        end if;
      end loop;
    end $$`.execute(db);
}

export async function down(db: Kysely<any>): Promise<void> {
  await sql`drop function if exists ensure_reading_partitions(timestamptz, timestamptz)`.execute(db);
  await sql`drop table if exists readings cascade`.execute(db);
  for (const t of ["upload_error", "upload", "derivation_settings", "import_profile"]) {
    await db.schema.dropTable(t).ifExists().execute();
  }
}
