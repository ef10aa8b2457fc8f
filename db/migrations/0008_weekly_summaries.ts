import { sql, type Kysely } from "kysely";

// Weekly site summaries, cached: one row per site and week (Monday 00:00 to the next Monday 00:00 at
// the site's clock, so a clock-change week lasts 167 or 169 hours). The `summarise-weeks` job writes
// them from the readings (app/models/weekly-summary.server.ts); the summary pages, exports and the
// weekly digest only read them. Changes against the previous week and the same ISO week a year
// before are worked out when read (a self-join), so a recomputed week never leaves a neighbour stale.
//
// weekly_digest_delivery: one row per person and week once that week's digest is claimed for them,
// so a rerun of the digest job never mails anyone twice.
export async function up(db: Kysely<any>): Promise<void> {
  await db.schema
    .createTable("weekly_summary")
    .addColumn("site_id", "uuid", (c) => c.notNull().references("site.id").onDelete("cascade"))
    // The local Monday that starts the week (ISO 8601 week), and its ISO year and week number.
    .addColumn("week_start", "date", (c) => c.notNull())
    .addColumn("iso_year", "integer", (c) => c.notNull())
    .addColumn("iso_week", "integer", (c) => c.notNull().check(sql`iso_week between 1 and 53`))
    .addColumn("starts_at", "timestamptz", (c) => c.notNull())
    .addColumn("ends_at", "timestamptz", (c) => c.notNull())
    // Readings stored in the week, those excluded by a quality flag, and the readings the deployed
    // loggers' intervals say to expect (null when no logger was deployed).
    .addColumn("readings", "integer", (c) => c.notNull().defaultTo(0))
    .addColumn("readings_excluded", "integer", (c) => c.notNull().defaultTo(0))
    .addColumn("readings_expected", "double precision")
    .addColumn("completeness", "double precision", (c) => c.check(sql`completeness between 0 and 1`))
    .addColumn("sc25_count", "integer", (c) => c.notNull().defaultTo(0))
    .addColumn("sc25_min", "double precision")
    .addColumn("sc25_mean", "double precision")
    .addColumn("sc25_median", "double precision")
    .addColumn("sc25_p95", "double precision")
    .addColumn("sc25_max", "double precision")
    .addColumn("tds_count", "integer", (c) => c.notNull().defaultTo(0))
    .addColumn("tds_min", "double precision")
    .addColumn("tds_mean", "double precision")
    .addColumn("tds_median", "double precision")
    .addColumn("tds_p95", "double precision")
    .addColumn("tds_max", "double precision")
    .addColumn("temperature_mean", "double precision")
    // [{ parameter, bound, value, share }]: time-weighted share of the week beyond each display threshold.
    .addColumn("thresholds", "jsonb", (c) => c.notNull().defaultTo(sql`'[]'::jsonb`))
    // Share of time above the site's upper specific-conductance threshold (null without one), for the heat-map.
    .addColumn("sc25_above_share", "double precision")
    // Seven medians of specific conductance, Monday to Sunday (null for a day without readings).
    .addColumn("daily_sc25_medians", "jsonb", (c) => c.notNull().defaultTo(sql`'[]'::jsonb`))
    // Exceedance events that started in the week, by outcome, and their total.
    .addColumn("events", "jsonb", (c) => c.notNull().defaultTo(sql`'{}'::jsonb`))
    .addColumn("events_total", "integer", (c) => c.notNull().defaultTo(0))
    // The data grade and approval of the periods of record covering the week (null when none).
    .addColumn("grade", "text")
    .addColumn("approved", "boolean")
    .addColumn("computed_at", "timestamptz", (c) => c.notNull().defaultTo(sql`now()`))
    .addPrimaryKeyConstraint("weekly_summary_pk", ["site_id", "week_start"])
    .execute();
  await db.schema.createIndex("weekly_summary_week_idx").on("weekly_summary").columns(["week_start", "site_id"]).execute();
  await db.schema.createIndex("weekly_summary_iso_idx").on("weekly_summary").columns(["iso_year", "iso_week"]).execute();

  await db.schema
    .createTable("weekly_digest_delivery")
    .addColumn("person_id", "uuid", (c) => c.notNull().references("person.id").onDelete("cascade"))
    .addColumn("week_start", "date", (c) => c.notNull())
    .addColumn("claimed_at", "timestamptz", (c) => c.notNull().defaultTo(sql`now()`))
    .addColumn("sent_at", "timestamptz")
    .addColumn("message_id", "text")
    .addPrimaryKeyConstraint("weekly_digest_delivery_pk", ["person_id", "week_start"])
    .execute();
}

export async function down(db: Kysely<any>): Promise<void> {
  await db.schema.dropTable("weekly_digest_delivery").ifExists().execute();
  await db.schema.dropTable("weekly_summary").ifExists().execute();
}
