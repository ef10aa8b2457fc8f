import { randomUUID } from "node:crypto";
import type { Kysely, Transaction } from "kysely";
import type { DB } from "#db/schema.ts";
import { STANDARD_LABELS } from "#app/lib/quality/calibration.ts";
import { assessVisitInput, MAX_PHOTO_BYTES, PHOTO_CONTENT_TYPES, type VisitInput } from "#app/lib/visits/visit-input.ts";
import type { SortDir } from "#app/utils/table-params.ts";
import { db } from "#app/utils/db.server.ts";
import { isUniqueViolation } from "#app/utils/db-errors.server.ts";
import { headObject, presignGet, presignPut } from "#app/utils/storage.server.ts";
import { guardLockedPeriods, syncProposals } from "./correction.server.ts";
import type { SessionUser } from "./person.server.ts";
import { recordChange, type RecordValues } from "./record-audit.server.ts";
import { syncPeriods } from "./record-period.server.ts";

type Executor = Kysely<DB> | Transaction<DB>;

export class VisitRefused extends Error {
  constructor(message: string, readonly status = 400, readonly field?: string) {
    super(message);
  }
}

// ---- who sees what -------------------------------------------------------------------------------

/** Technicians see visits at their assigned sites and their own; officers and administrators all. */
async function technicianSiteIds(personId: string, trx: Executor = db) {
  const rows = await trx.selectFrom("site_assignment").select("site_id").where("person_id", "=", personId).execute();
  return rows.map((r) => r.site_id);
}

export async function canSeeVisit(user: SessionUser, visit: { site_id: string; created_by: string | null }) {
  if (user.role !== "technician") return true;
  if (visit.created_by === user.id) return true;
  return (await technicianSiteIds(user.id)).includes(visit.site_id);
}

/** Officers and administrators edit any visit; a technician the visits they recorded. */
export function canEditVisit(user: SessionUser, visit: { created_by: string | null }) {
  return user.role !== "technician" || visit.created_by === user.id;
}

// ---- the form's choices --------------------------------------------------------------------------

/**
 * Sites for the visit form (the person's assigned sites first), each with the loggers ever deployed
 * there and the one deployed now (the form pre-fills it).
 */
export async function visitFormChoices(personId: string, trx: Executor = db) {
  const sites = await trx
    .selectFrom("site")
    .leftJoin("site_assignment as sa", (j) => j.onRef("sa.site_id", "=", "site.id").on("sa.person_id", "=", personId))
    .select((eb) => ["site.id", "site.code", "site.name", "site.time_zone", eb("sa.person_id", "is not", null).as("assigned")])
    .orderBy("site.code")
    .execute();
  const deployments = await trx
    .selectFrom("logger_deployment as d")
    .innerJoin("logger as l", "l.id", "d.logger_id")
    .select(["d.site_id", "d.logger_id", "l.serial", "d.deployed_from", "d.deployed_until"])
    .orderBy("d.deployed_from", "desc")
    .execute();
  return sites
    .map((s) => {
      const here = deployments.filter((d) => d.site_id === s.id);
      const loggers = [...new Map(here.map((d) => [d.logger_id, { id: d.logger_id, serial: d.serial }])).values()];
      return {
        id: s.id,
        code: s.code,
        name: s.name,
        timeZone: s.time_zone,
        assigned: Boolean(s.assigned),
        loggers,
        currentLoggerId: here.find((d) => d.deployed_until === null)?.logger_id ?? loggers[0]?.id ?? null,
      };
    })
    .sort((a, b) => Number(b.assigned) - Number(a.assigned) || a.code.localeCompare(b.code));
}

export type VisitSiteChoice = Awaited<ReturnType<typeof visitFormChoices>>[number];

// ---- photos --------------------------------------------------------------------------------------

export function photoObjectKey(fileName: string) {
  const base = fileName.split(/[\\/]/).pop() ?? "photo";
  const safe = base.normalize("NFKC").replace(/[^\w.\- ]+/g, "_").replace(/^\.+/, "_").replace(/\s+/g, "_").slice(0, 120) || "photo";
  return `visit-photos/${randomUUID()}/${safe}`;
}

/** A presigned PUT for one visit photo (the browser sends it straight to storage). */
export async function presignPhoto(input: { fileName: string; sizeBytes: number; contentType: string }) {
  if (!(PHOTO_CONTENT_TYPES as readonly string[]).includes(input.contentType)) {
    throw new VisitRefused("Photos must be JPEG, PNG, WebP or HEIC images.", 400, "photo");
  }
  if (input.sizeBytes > MAX_PHOTO_BYTES) throw new VisitRefused(`Photos are limited to ${MAX_PHOTO_BYTES / 1048576} MB each.`, 413, "photo");
  const key = photoObjectKey(input.fileName);
  const put = await presignPut(key, input.sizeBytes, input.contentType);
  return { key, put };
}

/** After the browser's PUT: the photo is in storage, an image, within the size limit. */
export async function confirmPhoto(key: string) {
  const head = await headObject(key);
  if (!head) throw new VisitRefused("The photo has not arrived in storage. Try again.", 409, "photo");
  if (head.size > MAX_PHOTO_BYTES || !(PHOTO_CONTENT_TYPES as readonly string[]).includes(head.contentType)) {
    throw new VisitRefused("That file is not a photo Ripplemark keeps.", 400, "photo");
  }
  return { key, size: head.size };
}

async function checkPhotos(keys: readonly string[], alreadyKept: readonly string[]) {
  for (const key of keys) {
    if (alreadyKept.includes(key)) continue;
    if (!(await headObject(key))) throw new VisitRefused("A photo did not reach storage; add it again or remove it.", 400, "photoKeys");
  }
}

/** Short-lived links to a visit's photos (opened, not embedded: the page's CSP keeps images local). */
export async function photoLinks(keys: readonly string[]) {
  return Promise.all(keys.map(async (key, i) => ({ key, name: key.split("/").pop() ?? `photo-${i + 1}`, url: await presignGet(key, key.split("/").pop() ?? "photo", 600) })));
}

// ---- saving --------------------------------------------------------------------------------------

function visitColumns(input: VisitInput) {
  const a = assessVisitInput(input);
  return {
    visit: {
      visited_at: input.visitedAtInstant,
      before_sc_us_cm: input.beforeSc ?? null,
      before_temperature_c: input.beforeTemperature ?? null,
      after_sc_us_cm: input.afterSc ?? null,
      after_temperature_c: input.afterTemperature ?? null,
      meter_sc_us_cm: input.meterSc ?? null,
      meter_temperature_c: input.meterTemperature ?? null,
      fouling_error_us_cm: a.fouling?.errorUsPerCm ?? null,
      fouling_error_percent: a.fouling?.errorPercent ?? null,
      fouling_passed: a.fouling ? a.fouling.passed : null,
      temperature_error_c: a.temperature?.errorC ?? null,
      temperature_passed: a.temperature ? a.temperature.passed : null,
      recalibrated: input.recalibrated,
      notes: input.notes,
      photo_keys: input.photoKeys,
    },
    checks: input.checks.map((c, position) => {
      const r = a.checks[position];
      if (!r) throw new VisitRefused(`Calibration check ${position + 1} cannot be computed: check its numbers.`, 400, `checks[${position}].sensor`);
      return {
        position,
        standard: c.standard,
        custom_value_us_cm: c.standard === "custom" ? (c.customValue ?? null) : null,
        standard_temperature_c: c.temperature,
        sensor_us_cm: c.sensor,
        expected_us_cm: r.expectedUsPerCm,
        error_us_cm: r.errorUsPerCm,
        error_percent: r.errorPercent,
        allowance_us_cm: r.allowanceUsPerCm,
        passed: r.passed,
        cell_constant_change_percent: r.cellConstantChangePercent,
      };
    }),
  };
}

async function checkDeployment(trx: Executor, siteId: string, loggerId: string, at: Date) {
  const d = await trx
    .selectFrom("logger_deployment")
    .select("id")
    .where("site_id", "=", siteId)
    .where("logger_id", "=", loggerId)
    .where("deployed_from", "<=", at)
    .where((eb) => eb.or([eb("deployed_until", "is", null), eb("deployed_until", ">", at)]))
    .executeTakeFirst();
  if (!d) throw new VisitRefused("This logger was not deployed at the site at that time.", 400, "loggerId");
}

type AuditSource = {
  visit: Pick<
    ReturnType<typeof visitColumns>["visit"],
    | "visited_at"
    | "before_sc_us_cm"
    | "after_sc_us_cm"
    | "meter_sc_us_cm"
    | "before_temperature_c"
    | "after_temperature_c"
    | "meter_temperature_c"
    | "recalibrated"
    | "photo_keys"
    | "notes"
  >;
  checks: { standard: string; custom_value_us_cm: number | null; standard_temperature_c: number; sensor_us_cm: number }[];
};

function auditOf(v: AuditSource): RecordValues {
  return {
    visited_at: v.visit.visited_at.toISOString(),
    before_sc: v.visit.before_sc_us_cm,
    after_sc: v.visit.after_sc_us_cm,
    meter_sc: v.visit.meter_sc_us_cm,
    before_temperature: v.visit.before_temperature_c,
    after_temperature: v.visit.after_temperature_c,
    meter_temperature: v.visit.meter_temperature_c,
    recalibrated: v.visit.recalibrated,
    checks: v.checks.map((c) => `${c.standard === "custom" ? `${c.custom_value_us_cm} µS/cm` : c.standard} at ${c.standard_temperature_c} °C: ${c.sensor_us_cm}`),
    photos: v.visit.photo_keys.length,
    notes: v.visit.notes,
  };
}

/**
 * Records a visit with its calibration checks (computed again here), then refreshes the logger's
 * proposals and periods of record, all in one transaction. A visit inside an approved period of
 * record needs a reason (it splits the approved period).
 */
export async function createVisit(user: SessionUser, input: VisitInput) {
  await checkPhotos(input.photoKeys, []);
  const cols = visitColumns(input);
  try {
    return await db.transaction().execute(async (trx) => {
      await checkDeployment(trx, input.siteId, input.loggerId, input.visitedAtInstant);
      const inLocked = await guardLockedPeriods(
        trx,
        { siteId: input.siteId, loggerId: input.loggerId, from: input.visitedAtInstant, to: input.visitedAtInstant, touching: true },
        input.reason,
      );
      const row = await trx
        .insertInto("field_visit")
        .values({ ...cols.visit, site_id: input.siteId, logger_id: input.loggerId, technician_id: user.id, created_by: user.id, updated_by: user.id })
        .returning("id")
        .executeTakeFirstOrThrow();
      if (cols.checks.length) await trx.insertInto("calibration_check").values(cols.checks.map((c) => ({ ...c, visit_id: row.id }))).execute();
      await syncProposals(trx, input.siteId, input.loggerId);
      await syncPeriods(trx, input.siteId, input.loggerId, user.id);
      await recordChange(
        { actorId: user.id, siteId: input.siteId, entity: "field_visit", entityId: row.id, action: "create", after: auditOf(cols), reason: input.reason, inLockedPeriod: inLocked },
        trx,
      );
      return { id: row.id };
    });
  } catch (e) {
    if (isUniqueViolation(e, "field_visit_logger_time_key")) {
      throw new VisitRefused("There is already a visit to this logger at that time.", 409, "visitedAt");
    }
    throw e;
  }
}

/**
 * Changes a visit (site and logger stay). Inside an approved period of record — at the old or the
 * new time — it needs a reason and leaves an audit row marked as such. Proposals and periods follow.
 */
export async function updateVisit(user: SessionUser, visitId: string, input: VisitInput) {
  const cols = visitColumns(input);
  try {
    return await db.transaction().execute(async (trx) => {
      const old = await trx.selectFrom("field_visit").selectAll().where("id", "=", visitId).forUpdate().executeTakeFirst();
      if (!old) throw new VisitRefused("No such visit.", 404);
      if (!canEditVisit(user, old)) throw new VisitRefused("Only officers may change a visit someone else recorded.", 403);
      if (old.site_id !== input.siteId || old.logger_id !== input.loggerId) {
        throw new VisitRefused("The site and logger of a recorded visit cannot change.", 400, "siteId");
      }
      await checkPhotos(input.photoKeys, old.photo_keys);
      await checkDeployment(trx, input.siteId, input.loggerId, input.visitedAtInstant);
      const times = [old.visited_at.getTime(), input.visitedAtInstant.getTime()];
      const inLocked = await guardLockedPeriods(
        trx,
        { siteId: old.site_id, loggerId: old.logger_id, from: new Date(Math.min(...times)), to: new Date(Math.max(...times)), touching: true },
        input.reason,
      );
      const oldChecks = await trx.selectFrom("calibration_check").selectAll().where("visit_id", "=", visitId).orderBy("position").execute();
      const before = auditOf({ visit: old, checks: oldChecks });
      const after = auditOf(cols);
      const changedBefore: RecordValues = {};
      const changedAfter: RecordValues = {};
      for (const k of Object.keys(after)) {
        if (JSON.stringify(before[k]) !== JSON.stringify(after[k])) {
          changedBefore[k] = before[k];
          changedAfter[k] = after[k];
        }
      }
      if (Object.keys(changedAfter).length === 0) return { id: visitId, changed: false };
      await trx.updateTable("field_visit").set({ ...cols.visit, updated_by: user.id, updated_at: new Date() }).where("id", "=", visitId).execute();
      await trx.deleteFrom("calibration_check").where("visit_id", "=", visitId).execute();
      if (cols.checks.length) await trx.insertInto("calibration_check").values(cols.checks.map((c) => ({ ...c, visit_id: visitId }))).execute();
      await syncProposals(trx, old.site_id, old.logger_id);
      await syncPeriods(trx, old.site_id, old.logger_id, user.id);
      await recordChange(
        { actorId: user.id, siteId: old.site_id, entity: "field_visit", entityId: visitId, action: "update", before: changedBefore, after: changedAfter, reason: input.reason, inLockedPeriod: inLocked },
        trx,
      );
      return { id: visitId, changed: true };
    });
  } catch (e) {
    if (isUniqueViolation(e, "field_visit_logger_time_key")) {
      throw new VisitRefused("There is already a visit to this logger at that time.", 409, "visitedAt");
    }
    throw e;
  }
}

// ---- reading -------------------------------------------------------------------------------------

export async function findVisit(id: string, trx: Executor = db) {
  const v = await trx
    .selectFrom("field_visit as v")
    .innerJoin("site as s", "s.id", "v.site_id")
    .innerJoin("logger as l", "l.id", "v.logger_id")
    .leftJoin("person as t", "t.id", "v.technician_id")
    .leftJoin("person as u", "u.id", "v.updated_by")
    .selectAll("v")
    .select(["s.code as site_code", "s.name as site_name", "s.time_zone as site_time_zone", "l.serial as logger_serial", "t.name as technician_name", "u.name as updated_by_name"])
    .where("v.id", "=", id)
    .executeTakeFirst();
  if (!v) return null;
  const checks = await trx.selectFrom("calibration_check").selectAll().where("visit_id", "=", id).orderBy("position").execute();
  return { ...v, checks };
}

export type VisitRecord = NonNullable<Awaited<ReturnType<typeof findVisit>>>;

export const VISIT_SORT_KEYS = ["visitedAt", "site"] as const;
export type VisitSortKey = (typeof VISIT_SORT_KEYS)[number];

export type VisitFilter = { siteCode?: string; onlyFor?: { personId: string; siteIds: string[] } };

function filteredVisits(filter: VisitFilter, trx: Executor) {
  let q = trx.selectFrom("field_visit as v").innerJoin("site as s", "s.id", "v.site_id");
  if (filter.siteCode) q = q.where("s.code", "=", filter.siteCode);
  const only = filter.onlyFor;
  if (only) {
    q = q.where((eb) =>
      only.siteIds.length ? eb.or([eb("v.created_by", "=", only.personId), eb("v.site_id", "in", only.siteIds)]) : eb("v.created_by", "=", only.personId),
    );
  }
  return q;
}

/** The filter for what a person may see (technicians: their sites and their own visits). */
export async function visibilityFilter(user: SessionUser, siteCode?: string): Promise<VisitFilter> {
  if (user.role !== "technician") return { siteCode };
  return { siteCode, onlyFor: { personId: user.id, siteIds: await technicianSiteIds(user.id) } };
}

export async function countVisits(filter: VisitFilter, trx: Executor = db) {
  const row = await filteredVisits(filter, trx).select((eb) => eb.fn.countAll<number>().as("n")).executeTakeFirstOrThrow();
  return Number(row.n);
}

export async function listVisitsPage(filter: VisitFilter, page: { sort: VisitSortKey; dir: SortDir; limit: number; offset: number }, trx: Executor = db) {
  const q = filteredVisits(filter, trx)
    .innerJoin("logger as l", "l.id", "v.logger_id")
    .leftJoin("person as t", "t.id", "v.technician_id")
    .select((eb) => [
      "v.id",
      "v.visited_at",
      "v.fouling_passed",
      "v.fouling_error_percent",
      "v.temperature_passed",
      "v.recalibrated",
      "s.code as site_code",
      "s.name as site_name",
      "s.time_zone as site_time_zone",
      "l.serial as logger_serial",
      "t.name as technician_name",
      eb.selectFrom("calibration_check as c").select((e) => e.fn.countAll<number>().as("n")).whereRef("c.visit_id", "=", "v.id").as("checks"),
      eb.selectFrom("calibration_check as c").select((e) => e.fn.countAll<number>().as("n")).whereRef("c.visit_id", "=", "v.id").where("c.passed", "=", false).as("checks_failed"),
    ]);
  const ordered = page.sort === "site" ? q.orderBy("s.code", page.dir).orderBy("v.visited_at", "desc") : q.orderBy("v.visited_at", page.dir);
  const rows = await ordered.limit(page.limit).offset(page.offset).execute();
  return rows.map((r) => ({ ...r, checks: Number(r.checks ?? 0), checks_failed: Number(r.checks_failed ?? 0) }));
}

/** Words for a stored standard choice. */
export function standardLabel(standard: string, customValue: number | null) {
  if (standard === "custom") return `Custom standard, ${customValue ?? "?"} µS/cm`;
  return STANDARD_LABELS[standard as keyof typeof STANDARD_LABELS] ?? standard;
}

/** Visits of a site (any logger) in a time range, for the site chart's visit marks. */
export async function visitsAtSite(siteId: string, from: Date, to: Date, trx: Executor = db) {
  return trx
    .selectFrom("field_visit")
    .select(["id", "visited_at", "logger_id", "fouling_passed", "recalibrated"])
    .where("site_id", "=", siteId)
    .where("visited_at", ">=", from)
    .where("visited_at", "<=", to)
    .orderBy("visited_at")
    .execute();
}
