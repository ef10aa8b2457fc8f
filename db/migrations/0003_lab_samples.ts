import { sql, type Kysely } from "kysely";

// Laboratory analyses of grab samples and the Standard Methods 1030 E checks made when each was
// entered. The inputs are kept as entered (ions in mg/L as a JSON object keyed by ion name, the
// measured values in their own columns); `results` is the full check output at entry time, for the
// record. The few figures other pages draw or sort by (calculated EC, the EC ratio, the ion balance,
// the overall verdict) are copied into columns so they can be queried without reading the JSON:
// site charts read lab samples by (site_id, sampled_at) beside the logger's specific conductance.
export async function up(db: Kysely<any>): Promise<void> {
  await db.schema
    .createTable("lab_sample")
    .addColumn("id", "uuid", (c) => c.primaryKey().defaultTo(sql`gen_random_uuid()`))
    .addColumn("site_id", "uuid", (c) => c.notNull().references("site.id"))
    .addColumn("sampled_at", "timestamptz", (c) => c.notNull())
    .addColumn("lab_reference", "text")
    .addColumn("ions_mg_l", "jsonb", (c) => c.notNull())
    .addColumn("measured_ec_us_cm", "double precision", (c) => c.check(sql`measured_ec_us_cm > 0`))
    .addColumn("measured_tds_mg_l", "double precision", (c) => c.check(sql`measured_tds_mg_l > 0`))
    .addColumn("ph", "double precision", (c) => c.check(sql`ph between 0 and 14`))
    .addColumn("silica_mg_l", "double precision", (c) => c.check(sql`silica_mg_l >= 0`))
    .addColumn("notes", "text", (c) => c.notNull().defaultTo(""))
    .addColumn("calculated_ec_us_cm", "double precision", (c) => c.notNull())
    .addColumn("calculated_tds_mg_l", "double precision", (c) => c.notNull())
    // Calculated EC ÷ measured EC; null when no EC was measured.
    .addColumn("ec_ratio", "double precision")
    // 100 (Σcations − Σanions) / (Σcations + Σanions), meq/L.
    .addColumn("ion_balance_percent", "double precision", (c) => c.notNull())
    .addColumn("results", "jsonb", (c) => c.notNull())
    .addColumn("verdict", "text", (c) => c.notNull().check(sql`verdict in ('pass', 'warn', 'fail')`))
    .addColumn("entered_by", "uuid", (c) => c.references("person.id").onDelete("set null"))
    .addColumn("created_at", "timestamptz", (c) => c.notNull().defaultTo(sql`now()`))
    .addColumn("updated_at", "timestamptz", (c) => c.notNull().defaultTo(sql`now()`))
    .execute();
  await db.schema.createIndex("lab_sample_site_time_idx").on("lab_sample").columns(["site_id", "sampled_at"]).execute();
  await db.schema.createIndex("lab_sample_sampled_idx").on("lab_sample").column("sampled_at").execute();
}

export async function down(db: Kysely<any>): Promise<void> {
  await db.schema.dropTable("lab_sample").ifExists().execute();
}
