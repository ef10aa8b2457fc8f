import { sql, type Transaction } from "kysely";
import type { DB, SiteKind } from "#db/schema.ts";
import { likeContains, type SortDir } from "#app/utils/table-params.ts";
import { db } from "#app/utils/db.server.ts";
import { isUniqueViolation } from "#app/utils/db-errors.server.ts";
import { changedFields, recordAudit } from "./audit.server.ts";

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

// ---- Administration -------------------------------------------------------------------------

export const SITE_SORT_KEYS = ["code", "name", "kind", "timeZone", "loggers"] as const;
export type SiteSortKey = (typeof SITE_SORT_KEYS)[number];

export type SiteFilter = { kind?: SiteKind; search?: string };

function filteredSites(filter: SiteFilter, trx: Executor) {
  let q = trx.selectFrom("site");
  if (filter.kind) q = q.where("site.kind", "=", filter.kind);
  if (filter.search) {
    const pattern = likeContains(filter.search);
    q = q.where((eb) => eb.or([eb("site.code", "ilike", pattern), eb("site.name", "ilike", pattern)]));
  }
  return q;
}

export async function countSites(filter: SiteFilter, trx: Executor = db) {
  const row = await filteredSites(filter, trx).select((eb) => eb.fn.countAll<number>().as("n")).executeTakeFirstOrThrow();
  return Number(row.n);
}

export async function listSitesPage(
  filter: SiteFilter,
  page: { sort: SiteSortKey; dir: SortDir; limit: number; offset: number },
  trx: Executor = db,
) {
  const q = filteredSites(filter, trx).select((eb) => [
    "site.id",
    "site.code",
    "site.name",
    "site.kind",
    "site.latitude",
    "site.longitude",
    "site.time_zone",
    eb
      .selectFrom("logger_deployment as d")
      .select((e) => e.fn.countAll<number>().as("n"))
      .whereRef("d.site_id", "=", "site.id")
      .where("d.deployed_until", "is", null)
      .as("loggersNow"),
  ]);
  const ordered =
    page.sort === "name"
      ? q.orderBy(sql`lower(site.name)`, page.dir)
      : page.sort === "kind"
        ? q.orderBy("site.kind", page.dir)
        : page.sort === "timeZone"
          ? q.orderBy("site.time_zone", page.dir)
          : page.sort === "loggers"
            ? q.orderBy("loggersNow", page.dir)
            : q.orderBy("site.code", page.dir);
  const rows = await ordered.orderBy("site.code").limit(page.limit).offset(page.offset).execute();
  return rows.map((r) => ({ ...r, loggersNow: Number(r.loggersNow ?? 0) }));
}

/** Every column an administrator sees on the site page (derivation settings read-only). */
export async function findSite(id: string, trx: Executor = db) {
  return trx
    .selectFrom("site")
    .select([
      "id",
      "code",
      "name",
      "kind",
      "latitude",
      "longitude",
      "time_zone",
      "notes",
      "compensation_method",
      "alpha_per_c",
      "reference_c",
      "tds_factor",
      "settings_version",
      "created_at",
      "updated_at",
    ])
    .where("id", "=", id)
    .executeTakeFirst();
}

export type SiteRecord = NonNullable<Awaited<ReturnType<typeof findSite>>>;

/** Whether another site already uses `code` (codes are stored upper-case). */
export async function siteCodeTaken(code: string, exceptId?: string, trx: Executor = db) {
  let q = trx.selectFrom("site").select("id").where("code", "=", code.toUpperCase());
  if (exceptId) q = q.where("id", "<>", exceptId);
  return !!(await q.executeTakeFirst());
}

export type SiteFields = {
  code: string;
  name: string;
  kind: SiteKind;
  latitude: number;
  longitude: number;
  time_zone: string;
  notes: string;
};

function auditValues(v: SiteFields) {
  return { ...v };
}

/** Creates a site and its audit row in one transaction. Returns null when the code is taken. */
export async function createSite(actorId: string, values: SiteFields) {
  try {
    return await db.transaction().execute(async (trx) => {
      const row = await trx.insertInto("site").values(values).returning(["id", "code"]).executeTakeFirstOrThrow();
      await recordAudit({ actorId, entity: "site", entityId: row.id, action: "create", after: auditValues(values) }, trx);
      return row;
    });
  } catch (error) {
    if (isUniqueViolation(error)) return null;
    throw error;
  }
}

/**
 * Saves changed fields and audits only those. Returns "unchanged" when nothing differs, "taken"
 * when another site got the code first, "saved" otherwise.
 */
export async function saveSite(actorId: string, id: string, values: SiteFields): Promise<"saved" | "unchanged" | "taken"> {
  try {
    return await db.transaction().execute(async (trx) => {
      const current = await trx
        .selectFrom("site")
        .select(["code", "name", "kind", "latitude", "longitude", "time_zone", "notes"])
        .where("id", "=", id)
        .forUpdate()
        .executeTakeFirstOrThrow();
      const diff = changedFields(auditValues(current), auditValues(values));
      if (!diff) return "unchanged";
      await trx.updateTable("site").set({ ...values, updated_at: new Date() }).where("id", "=", id).execute();
      await recordAudit({ actorId, entity: "site", entityId: id, action: "update", ...diff }, trx);
      return "saved";
    });
  } catch (error) {
    if (isUniqueViolation(error)) return "taken";
    throw error;
  }
}

/** Id, code and name of every site, for pickers (assignments, deployments). */
export async function listSiteOptions(trx: Executor = db) {
  return trx.selectFrom("site").select(["id", "code", "name", "time_zone"]).orderBy("code").execute();
}

/** Loggers deployed at a site now. */
export async function listLoggersAtSite(siteId: string, trx: Executor = db) {
  return trx
    .selectFrom("logger_deployment as d")
    .innerJoin("logger as l", "l.id", "d.logger_id")
    .select(["l.id", "l.serial", "l.model", "d.deployed_from"])
    .where("d.site_id", "=", siteId)
    .where("d.deployed_until", "is", null)
    .orderBy("l.serial")
    .execute();
}
