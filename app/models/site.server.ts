import type { Transaction } from "kysely";
import type { DB } from "#db/schema.ts";
import { db } from "#app/utils/db.server.ts";

type Executor = typeof db | Transaction<DB>;

/** Sites with their currently deployed loggers; technicians see their assigned sites first. */
export async function listSitesWithLoggers(options: { assignedTo?: string } = {}, trx: Executor = db) {
  const sites = await trx
    .selectFrom("site")
    .leftJoin("site_assignment as sa", (j) =>
      j.onRef("sa.site_id", "=", "site.id").on("sa.person_id", "=", options.assignedTo ?? "00000000-0000-0000-0000-000000000000"),
    )
    .select((eb) => [
      "site.id",
      "site.code",
      "site.name",
      "site.kind",
      "site.latitude",
      "site.longitude",
      "site.time_zone",
      "site.compensation_method",
      eb("sa.person_id", "is not", null).as("assigned"),
    ])
    .orderBy("site.code")
    .execute();
  const deployments = await trx
    .selectFrom("logger_deployment as d")
    .innerJoin("logger as l", "l.id", "d.logger_id")
    .select(["d.site_id", "l.serial", "l.logging_interval_s", "d.deployed_from"])
    .where("d.deployed_until", "is", null)
    .execute();
  return sites
    .map((s) => ({ ...s, loggers: deployments.filter((d) => d.site_id === s.id) }))
    .sort((a, b) => Number(b.assigned) - Number(a.assigned) || a.code.localeCompare(b.code));
}
