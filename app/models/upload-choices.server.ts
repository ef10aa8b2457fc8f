import { db } from "#app/utils/db.server.ts";
import { listProfileChoices } from "./import-profile.server.ts";
import { listSitesWithLoggers } from "./site.server.ts";

/**
 * What the uploads page offers for each file: sites (the person's assigned sites first), every
 * logger with the site it is deployed at now (to fill the site from the logger), and the saved
 * import profiles with their header signatures (to pick the profile from the file's header line).
 */
export async function uploadChoices(personId: string) {
  const [sites, loggers, profiles] = await Promise.all([
    listSitesWithLoggers({ assignedTo: personId }),
    db
      .selectFrom("logger")
      // A logger has at most one open deployment.
      .leftJoin("logger_deployment as d", (j) => j.onRef("d.logger_id", "=", "logger.id").on("d.deployed_until", "is", null))
      .select(["logger.id", "logger.serial", "logger.model", "d.site_id"])
      .orderBy("logger.serial")
      .execute(),
    listProfileChoices(),
  ]);
  return {
    sites: sites.map((s) => ({ id: s.id, code: s.code, name: s.name, assigned: Boolean(s.assigned) })),
    loggers: loggers.map((l) => ({ id: l.id, serial: l.serial, model: l.model, siteId: l.site_id })),
    profiles: profiles.map((p) => ({ id: p.id, name: p.name, headerSignature: p.header_signature })),
  };
}
