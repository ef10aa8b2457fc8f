import { sql, type Transaction } from "kysely";
import type { DB } from "#db/schema.ts";
import { db } from "#app/utils/db.server.ts";
import { likeContains, type SortDir } from "#app/utils/table-params.ts";
import { isUniqueViolation } from "#app/utils/db-errors.server.ts";
import { changedFields, recordAudit } from "./audit.server.ts";

type Executor = typeof db | Transaction<DB>;

export const LOGGER_SORT_KEYS = ["serial", "model", "interval", "site", "since"] as const;
export type LoggerSortKey = (typeof LOGGER_SORT_KEYS)[number];

export type LoggerFilter = { search?: string; deployed?: "yes" | "no" };

function filteredLoggers(filter: LoggerFilter, trx: Executor) {
  // A logger has at most one open deployment (deployLogger closes the previous one under a lock).
  let q = trx
    .selectFrom("logger")
    .leftJoin("logger_deployment as d", (j) => j.onRef("d.logger_id", "=", "logger.id").on("d.deployed_until", "is", null))
    .leftJoin("site", "site.id", "d.site_id");
  if (filter.search) {
    const pattern = likeContains(filter.search);
    q = q.where((eb) => eb.or([eb("logger.serial", "ilike", pattern), eb("logger.model", "ilike", pattern)]));
  }
  if (filter.deployed === "yes") q = q.where("d.id", "is not", null);
  if (filter.deployed === "no") q = q.where("d.id", "is", null);
  return q;
}

export async function countLoggers(filter: LoggerFilter, trx: Executor = db) {
  const row = await filteredLoggers(filter, trx).select((eb) => eb.fn.countAll<number>().as("n")).executeTakeFirstOrThrow();
  return Number(row.n);
}

export async function listLoggersPage(
  filter: LoggerFilter,
  page: { sort: LoggerSortKey; dir: SortDir; limit: number; offset: number },
  trx: Executor = db,
) {
  const q = filteredLoggers(filter, trx).select([
    "logger.id",
    "logger.serial",
    "logger.model",
    "logger.logging_interval_s",
    "site.id as siteId",
    "site.code as siteCode",
    "site.name as siteName",
    "site.time_zone as siteTimeZone",
    "d.deployed_from as since",
  ]);
  const nulls = (dir: SortDir) => (ob: any) => (dir === "asc" ? ob.asc().nullsLast() : ob.desc().nullsLast());
  const ordered =
    page.sort === "model"
      ? q.orderBy(sql`lower(logger.model)`, page.dir)
      : page.sort === "interval"
        ? q.orderBy("logger.logging_interval_s", page.dir)
        : page.sort === "site"
          ? q.orderBy("site.code", nulls(page.dir))
          : page.sort === "since"
            ? q.orderBy("d.deployed_from", nulls(page.dir))
            : q.orderBy("logger.serial", page.dir);
  return ordered.orderBy("logger.serial").limit(page.limit).offset(page.offset).execute();
}

export async function findLogger(id: string, trx: Executor = db) {
  return trx
    .selectFrom("logger")
    .select(["id", "serial", "model", "logging_interval_s", "notes", "created_at"])
    .where("id", "=", id)
    .executeTakeFirst();
}

export type LoggerRecord = NonNullable<Awaited<ReturnType<typeof findLogger>>>;

/** Serials are compared without regard to case: "MW-0042" and "mw-0042" are the same instrument. */
export async function loggerSerialTaken(serial: string, exceptId?: string, trx: Executor = db) {
  let q = trx.selectFrom("logger").select("id").where(sql`lower(serial)`, "=", serial.trim().toLowerCase());
  if (exceptId) q = q.where("id", "<>", exceptId);
  return !!(await q.executeTakeFirst());
}

export type LoggerFields = { serial: string; model: string; logging_interval_s: number; notes: string };

/** Creates a logger and its audit row; null when the serial was taken meanwhile. */
export async function createLogger(actorId: string, values: LoggerFields) {
  try {
    return await db.transaction().execute(async (trx) => {
      const row = await trx.insertInto("logger").values(values).returning(["id", "serial"]).executeTakeFirstOrThrow();
      await recordAudit({ actorId, entity: "logger", entityId: row.id, action: "create", after: { ...values } }, trx);
      return row;
    });
  } catch (error) {
    if (isUniqueViolation(error)) return null;
    throw error;
  }
}

/** Saves changed fields and audits only those. */
export async function saveLogger(actorId: string, id: string, values: LoggerFields): Promise<"saved" | "unchanged" | "taken"> {
  try {
    return await db.transaction().execute(async (trx) => {
      const current = await trx
        .selectFrom("logger")
        .select(["serial", "model", "logging_interval_s", "notes"])
        .where("id", "=", id)
        .forUpdate()
        .executeTakeFirstOrThrow();
      const diff = changedFields({ ...current }, { ...values });
      if (!diff) return "unchanged";
      await trx.updateTable("logger").set(values).where("id", "=", id).execute();
      await recordAudit({ actorId, entity: "logger", entityId: id, action: "update", ...diff }, trx);
      return "saved";
    });
  } catch (error) {
    if (isUniqueViolation(error)) return "taken";
    throw error;
  }
}

/** Every deployment of a logger, newest first, with the site's code, name and time zone. */
export async function listDeployments(loggerId: string, trx: Executor = db) {
  return trx
    .selectFrom("logger_deployment as d")
    .innerJoin("site", "site.id", "d.site_id")
    .select([
      "d.id",
      "d.deployed_from",
      "d.deployed_until",
      "site.id as siteId",
      "site.code as siteCode",
      "site.name as siteName",
      "site.time_zone as siteTimeZone",
    ])
    .where("d.logger_id", "=", loggerId)
    .orderBy("d.deployed_from", "desc")
    .execute();
}

export type DeploymentProblem = { field: "deployedFrom" | "deployedUntil" | "siteId"; message: string };

/**
 * Deploys a logger at a site from `from`. Any open deployment of the logger ends at `from`. The start
 * must come after the previous deployment's start, and not before the previous one ended. The logger
 * row is locked for the check and the writes, so two admins deploying at once cannot interleave.
 */
export async function deployLogger(
  actorId: string,
  input: { loggerId: string; siteId: string; from: Date },
): Promise<{ ok: true; deploymentId: string; closedId: string | null } | { ok: false; problem: DeploymentProblem }> {
  return db.transaction().execute(async (trx) => {
    await trx.selectFrom("logger").select("id").where("id", "=", input.loggerId).forUpdate().executeTakeFirstOrThrow();
    const site = await trx.selectFrom("site").select(["id", "code"]).where("id", "=", input.siteId).executeTakeFirst();
    if (!site) return { ok: false as const, problem: { field: "siteId" as const, message: "Choose a site from the list" } };
    const previous = await trx
      .selectFrom("logger_deployment as d")
      .innerJoin("site", "site.id", "d.site_id")
      .select(["d.id", "d.site_id", "d.deployed_from", "d.deployed_until", "site.code as siteCode"])
      .where("d.logger_id", "=", input.loggerId)
      .orderBy("d.deployed_from", "desc")
      .limit(1)
      .executeTakeFirst();
    if (previous && input.from <= previous.deployed_from) {
      return {
        ok: false as const,
        problem: { field: "deployedFrom" as const, message: `Must be after the start of the previous deployment (at ${previous.siteCode})` },
      };
    }
    if (previous?.deployed_until && input.from < previous.deployed_until) {
      return {
        ok: false as const,
        problem: { field: "deployedFrom" as const, message: `Must not be before the previous deployment ended (at ${previous.siteCode})` },
      };
    }
    let closedId: string | null = null;
    if (previous && previous.deployed_until === null) {
      await trx.updateTable("logger_deployment").set({ deployed_until: input.from }).where("id", "=", previous.id).execute();
      closedId = previous.id;
    }
    const created = await trx
      .insertInto("logger_deployment")
      .values({ logger_id: input.loggerId, site_id: input.siteId, deployed_from: input.from })
      .returning("id")
      .executeTakeFirstOrThrow();
    await recordAudit(
      {
        actorId,
        entity: "logger",
        entityId: input.loggerId,
        action: "deploy",
        before: previous
          ? {
              site: previous.siteCode,
              site_id: previous.site_id,
              deployed_from: previous.deployed_from.toISOString(),
              deployed_until: previous.deployed_until?.toISOString() ?? null,
            }
          : null,
        after: {
          site: site.code,
          site_id: input.siteId,
          deployed_from: input.from.toISOString(),
          ...(closedId ? { previous_deployment_closed_at: input.from.toISOString() } : {}),
        },
      },
      trx,
    );
    return { ok: true as const, deploymentId: created.id, closedId };
  });
}

/** Ends the logger's open deployment at `until` (the logger came out of the water). */
export async function endDeployment(
  actorId: string,
  input: { loggerId: string; until: Date },
): Promise<{ ok: true } | { ok: false; problem: DeploymentProblem }> {
  return db.transaction().execute(async (trx) => {
    await trx.selectFrom("logger").select("id").where("id", "=", input.loggerId).forUpdate().executeTakeFirstOrThrow();
    const open = await trx
      .selectFrom("logger_deployment as d")
      .innerJoin("site", "site.id", "d.site_id")
      .select(["d.id", "d.site_id", "d.deployed_from", "site.code as siteCode"])
      .where("d.logger_id", "=", input.loggerId)
      .where("d.deployed_until", "is", null)
      .executeTakeFirst();
    if (!open) return { ok: false as const, problem: { field: "deployedUntil" as const, message: "This logger is not deployed anywhere" } };
    if (input.until <= open.deployed_from) {
      return { ok: false as const, problem: { field: "deployedUntil" as const, message: "Must be after the deployment started" } };
    }
    await trx.updateTable("logger_deployment").set({ deployed_until: input.until }).where("id", "=", open.id).execute();
    await recordAudit(
      {
        actorId,
        entity: "logger",
        entityId: input.loggerId,
        action: "end-deployment",
        before: { site: open.siteCode, site_id: open.site_id, deployed_until: null },
        after: { site: open.siteCode, site_id: open.site_id, deployed_until: input.until.toISOString() },
      },
      trx,
    );
    return { ok: true as const };
  });
}
