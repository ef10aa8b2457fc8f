import { sql, type Kysely } from "kysely";

// Display thresholds per site: the lines drawn on a site's charts and the levels the overview's
// status compares the latest reading with. One row per (site, parameter, bound). These are not alert
// rules (those add durations and clear levels); they are what an officer wants to see at a glance.
export async function up(db: Kysely<any>): Promise<void> {
  await db.schema
    .createTable("site_threshold")
    .addColumn("site_id", "uuid", (c) => c.notNull().references("site.id").onDelete("cascade"))
    .addColumn("parameter", "text", (c) =>
      c.notNull().check(sql`parameter in ('sc25', 'temperature', 'tds', 'salinity', 'ph', 'depth')`),
    )
    .addColumn("bound", "text", (c) => c.notNull().check(sql`bound in ('upper', 'lower')`))
    .addColumn("value", "double precision", (c) => c.notNull())
    .addColumn("updated_at", "timestamptz", (c) => c.notNull().defaultTo(sql`now()`))
    .addColumn("updated_by", "uuid", (c) => c.references("person.id").onDelete("set null"))
    .addPrimaryKeyConstraint("site_threshold_pk", ["site_id", "parameter", "bound"])
    .execute();
}

export async function down(db: Kysely<any>): Promise<void> {
  await db.schema.dropTable("site_threshold").ifExists().execute();
}
