import { sql, type Kysely, type Transaction } from "kysely";
import type { CorrectionKindName, CorrectionStatus, DB, OffsetUnitName } from "#db/schema.ts";
import { proposeCorrections, type VisitForProposal } from "#app/lib/quality/corrections.ts";
import { db } from "#app/utils/db.server.ts";
import { isUniqueViolation } from "#app/utils/db-errors.server.ts";
import { enqueue } from "#app/utils/jobs.server.ts";
import { recordChange, type RecordValues } from "./record-audit.server.ts";
import { syncPeriods } from "./record-period.server.ts";

type Executor = Kysely<DB> | Transaction<DB>;

/** A change refused: it touches an approved period of record and came without a reason. */
export class RecordLocked extends Error {
  readonly status = 409;
  constructor(readonly periods: { start: Date; end: Date }[]) {
    super(
      `This change touches an approved period of record (${periods
        .map((p) => `${p.start.toISOString().slice(0, 10)} to ${p.end.toISOString().slice(0, 10)}`)
        .join(", ")}). Give a reason for changing the approved record.`,
    );
  }
}

export class CorrectionRefused extends Error {
  constructor(message: string, readonly status = 400, readonly field?: string) {
    super(message);
  }
}

/**
 * Approved (locked) periods of a logger's record overlapping [from, to]. `touching` counts a
 * period that only shares an end with the range (a visit at the end of a period changes it).
 */
export async function lockedPeriodsOverlapping(
  trx: Executor,
  siteId: string,
  loggerId: string,
  from: Date,
  to: Date,
  touching: boolean,
) {
  return trx
    .selectFrom("record_period")
    .select(["id", "period_start", "period_end"])
    .where("site_id", "=", siteId)
    .where("logger_id", "=", loggerId)
    .where("locked", "=", true)
    .where("period_start", touching ? "<=" : "<", to)
    .where("period_end", touching ? ">=" : ">", from)
    .orderBy("period_start")
    .execute();
}

/** Throws RecordLocked when [from, to] touches an approved period and no reason was given; tells whether it did. */
export async function guardLockedPeriods(
  trx: Executor,
  target: { siteId: string; loggerId: string; from: Date; to: Date; touching: boolean },
  reason: string | null | undefined,
) {
  const locked = await lockedPeriodsOverlapping(trx, target.siteId, target.loggerId, target.from, target.to, target.touching);
  if (locked.length && !reason?.trim()) throw new RecordLocked(locked.map((p) => ({ start: p.period_start, end: p.period_end })));
  return locked.length > 0;
}

/**
 * Brings the readings of a site in [from, to] in line with its approved corrections, in one UPDATE:
 * correction_us_cm = the sum of the approved corrections' prorated offsets at each reading (% offsets
 * of sc25_uncorrected_us_cm; null when none covers it), sc25_us_cm = uncorrected + correction, and
 * tds_mg_l = the reading's TDS factor × corrected SC. Raw columns are never written. Rows already
 * right are left alone, so running it again changes nothing (the job may repeat it).
 *
 * The TDS factor is the one of the settings snapshot the reading was derived with (the site's
 * current factor after a recompute), falling back to the site's.
 */
export async function applyCorrections(trx: Executor, siteId: string, from: Date, to: Date): Promise<number> {
  const result = await sql`
    update readings r
    set correction_us_cm = t.total,
        sc25_us_cm = r.sc25_uncorrected_us_cm + coalesce(t.total, 0),
        tds_mg_l = coalesce(
          (select ds.tds_factor from derivation_settings ds where ds.id = r.settings_id),
          (select s.tds_factor from site s where s.id = ${siteId}::uuid)
        ) * (r.sc25_uncorrected_us_cm + coalesce(t.total, 0))
    from (
      select r2.time, r2.logger_id,
        (select sum(case when c.offset_unit = 'percent' then o.offset / 100 * r2.sc25_uncorrected_us_cm else o.offset end)
           from correction c
           cross join lateral (
             select c.start_offset + (c.end_offset - c.start_offset)
               * (extract(epoch from (r2.time - c.period_start)) / extract(epoch from (c.period_end - c.period_start)))::float8 as offset
           ) o
           where c.site_id = ${siteId}::uuid and c.logger_id = r2.logger_id and c.status = 'approved'
             and r2.time >= c.period_start and r2.time <= c.period_end) as total
      from readings r2
      where r2.site_id = ${siteId}::uuid and r2.time >= ${from} and r2.time <= ${to}
    ) t
    where r.site_id = ${siteId}::uuid and r.time >= ${from} and r.time <= ${to}
      and r.time = t.time and r.logger_id = t.logger_id
      and (r.correction_us_cm is distinct from t.total
           or r.sc25_us_cm is distinct from r.sc25_uncorrected_us_cm + coalesce(t.total, 0))`.execute(trx);
  return Number(result.numAffectedRows ?? 0);
}

/** Applies the corrections over a changed range and queues what depends on readings, in `trx`. */
async function correctRange(trx: Transaction<DB>, siteId: string, from: Date, to: Date) {
  await applyCorrections(trx, siteId, from, to);
  await enqueue("readings-changed", { siteId, fromMs: from.getTime(), toMs: to.getTime(), reason: "correction" }, { maxAttempts: 10 }, trx);
}

// ---- proposals ---------------------------------------------------------------------------------

/** The visits of a logger at a site in time order, with their calibration checks. */
export async function visitsForProposals(trx: Executor, siteId: string, loggerId: string): Promise<VisitForProposal[]> {
  const visits = await trx
    .selectFrom("field_visit")
    .select(["id", "visited_at", "recalibrated", "before_sc_us_cm", "before_temperature_c", "after_sc_us_cm", "after_temperature_c", "meter_sc_us_cm", "meter_temperature_c"])
    .where("site_id", "=", siteId)
    .where("logger_id", "=", loggerId)
    .orderBy("visited_at")
    .execute();
  const checks = visits.length
    ? await trx
        .selectFrom("calibration_check")
        .select(["visit_id", "standard", "custom_value_us_cm", "standard_temperature_c", "sensor_us_cm"])
        .where("visit_id", "in", visits.map((v) => v.id))
        .orderBy("visit_id")
        .orderBy("position")
        .execute()
    : [];
  return visits.map((v) => ({
    id: v.id,
    visitedAtMs: v.visited_at.getTime(),
    recalibrated: v.recalibrated,
    before: { scUsPerCm: v.before_sc_us_cm, temperatureC: v.before_temperature_c },
    after: { scUsPerCm: v.after_sc_us_cm, temperatureC: v.after_temperature_c },
    meter: { scUsPerCm: v.meter_sc_us_cm, temperatureC: v.meter_temperature_c },
    checks: checks
      .filter((c) => c.visit_id === v.id)
      .map((c) => ({ standard: c.standard, customValueUsPerCm: c.custom_value_us_cm, temperatureC: c.standard_temperature_c, sensorUsPerCm: c.sensor_us_cm })),
  }));
}

/**
 * Keeps Ripplemark's proposals for a logger in step with its visits: for each pair of consecutive
 * visits, a fouling and/or drift proposal where the later visit found an error outside the
 * criterion. A proposal nobody has touched is refreshed; one a person adjusted, approved or
 * rejected is left as it is; untouched proposals for pairs that are no longer consecutive go.
 * Proposals do not change readings (only approved corrections do).
 */
export async function syncProposals(trx: Transaction<DB>, siteId: string, loggerId: string) {
  const visits = await visitsForProposals(trx, siteId, loggerId);
  const desired = visits.slice(1).flatMap((v, i) => proposeCorrections(visits[i], v));
  const existing = await trx
    .selectFrom("correction")
    .select(["id", "kind", "from_visit_id", "to_visit_id", "status", "author_id", "updated_by", "period_start", "period_end", "start_offset", "end_offset", "offset_unit", "reason"])
    .where("site_id", "=", siteId)
    .where("logger_id", "=", loggerId)
    .where("from_visit_id", "is not", null)
    .execute();
  const untouched = (e: (typeof existing)[number]) => e.author_id === null && e.updated_by === null && e.status === "proposed";
  const kept = new Set<string>();
  for (const d of desired) {
    const e = existing.find((x) => x.from_visit_id === d.fromVisitId && x.to_visit_id === d.toVisitId && x.kind === d.kind);
    const values = {
      period_start: new Date(d.startMs),
      period_end: new Date(d.endMs),
      start_offset: d.startOffset,
      end_offset: d.endOffset,
      offset_unit: d.unit,
      reason: d.reason,
    };
    if (!e) {
      await trx
        .insertInto("correction")
        .values({ ...values, site_id: siteId, logger_id: loggerId, kind: d.kind, from_visit_id: d.fromVisitId, to_visit_id: d.toVisitId, status: "proposed", author_id: null })
        .execute();
      continue;
    }
    kept.add(e.id);
    if (untouched(e) && (e.end_offset !== d.endOffset || e.period_start.getTime() !== d.startMs || e.period_end.getTime() !== d.endMs || e.reason !== d.reason)) {
      await trx.updateTable("correction").set({ ...values, updated_at: new Date() }).where("id", "=", e.id).execute();
    }
  }
  const stale = existing.filter((e) => untouched(e) && !kept.has(e.id)).map((e) => e.id);
  if (stale.length) await trx.deleteFrom("correction").where("id", "in", stale).execute();
}

// ---- review ------------------------------------------------------------------------------------

const CORRECTION_COLUMNS = [
  "c.id",
  "c.site_id",
  "c.logger_id",
  "c.kind",
  "c.from_visit_id",
  "c.to_visit_id",
  "c.period_start",
  "c.period_end",
  "c.offset_unit",
  "c.start_offset",
  "c.end_offset",
  "c.status",
  "c.author_id",
  "c.reason",
  "c.approved_by",
  "c.approved_at",
  "c.updated_by",
  "c.created_at",
  "c.updated_at",
] as const;

export type CorrectionFilter = { siteId?: string; status?: CorrectionStatus; loggerId?: string };

/** Corrections with the names of the site, logger and people, newest period first. */
export async function listCorrections(filter: CorrectionFilter, limit = 200, trx: Executor = db) {
  let q = trx
    .selectFrom("correction as c")
    .innerJoin("site as s", "s.id", "c.site_id")
    .innerJoin("logger as l", "l.id", "c.logger_id")
    .leftJoin("person as author", "author.id", "c.author_id")
    .leftJoin("person as approver", "approver.id", "c.approved_by")
    .leftJoin("person as editor", "editor.id", "c.updated_by")
    .select([
      ...CORRECTION_COLUMNS,
      "s.code as site_code",
      "s.name as site_name",
      "s.time_zone as site_time_zone",
      "l.serial as logger_serial",
      "author.name as author_name",
      "approver.name as approver_name",
      "editor.name as editor_name",
    ]);
  if (filter.siteId) q = q.where("c.site_id", "=", filter.siteId);
  if (filter.loggerId) q = q.where("c.logger_id", "=", filter.loggerId);
  if (filter.status) q = q.where("c.status", "=", filter.status);
  return q.orderBy("c.period_end", "desc").orderBy("c.kind").limit(limit).execute();
}

export type CorrectionRow = Awaited<ReturnType<typeof listCorrections>>[number];

/** Counts of corrections by site and status, for the corrections overview. */
export async function correctionCountsBySite(trx: Executor = db) {
  return trx
    .selectFrom("correction")
    .select((eb) => ["site_id", "status", eb.fn.countAll<number>().as("n")])
    .groupBy(["site_id", "status"])
    .execute();
}

function auditValues(c: { kind: string; offset_unit: string; start_offset: number; end_offset: number; status: string; reason: string }): RecordValues {
  return { kind: c.kind, unit: c.offset_unit, start_offset: c.start_offset, end_offset: c.end_offset, status: c.status, reason: c.reason };
}

export type CorrectionReview =
  | { action: "approve"; note?: string | null }
  | { action: "reject"; note?: string | null }
  | {
      action: "adjust";
      kind: CorrectionKindName;
      unit: OffsetUnitName;
      startOffset: number;
      endOffset: number;
      reason: string;
      note?: string | null;
    };

function checkOffsets(unit: OffsetUnitName, startOffset: number, endOffset: number) {
  if (unit === "percent" && (Math.abs(startOffset) >= 100 || Math.abs(endOffset) >= 100)) {
    throw new CorrectionRefused("A correction in % must stay between −100 % and +100 %.", 400, "endOffset");
  }
}

/**
 * An officer approves, rejects or adjusts a correction. Inside an approved period of record it
 * needs a note (the reason for changing the approved record). When what is applied changes, the
 * readings over the correction's period are corrected again in the same transaction and a
 * `readings-changed` job (reason "correction") is queued for exactly that range; the periods'
 * grades follow; every change leaves a record_audit row.
 */
export async function reviewCorrection(actorId: string, siteId: string, correctionId: string, review: CorrectionReview) {
  return db.transaction().execute(async (trx) => {
    const c = await trx.selectFrom("correction").selectAll().where("id", "=", correctionId).where("site_id", "=", siteId).forUpdate().executeTakeFirst();
    if (!c) throw new CorrectionRefused("No such correction.", 404);
    const inLocked = await guardLockedPeriods(
      trx,
      { siteId: c.site_id, loggerId: c.logger_id, from: c.period_start, to: c.period_end, touching: false },
      review.note,
    );
    const now = new Date();
    let next = { ...c };
    switch (review.action) {
      case "approve":
        if (c.status === "approved") return { changed: false };
        next = { ...c, status: "approved", approved_by: actorId, approved_at: now };
        break;
      case "reject":
        if (c.status === "rejected") return { changed: false };
        next = { ...c, status: "rejected", approved_by: null, approved_at: null };
        break;
      case "adjust":
        checkOffsets(review.unit, review.startOffset, review.endOffset);
        next = { ...c, kind: review.kind, offset_unit: review.unit, start_offset: review.startOffset, end_offset: review.endOffset, reason: review.reason };
        break;
    }
    const before = auditValues(c);
    const after = auditValues(next);
    if (JSON.stringify(before) === JSON.stringify(after)) return { changed: false };
    try {
      await trx
        .updateTable("correction")
        .set({
          kind: next.kind,
          offset_unit: next.offset_unit,
          start_offset: next.start_offset,
          end_offset: next.end_offset,
          reason: next.reason,
          status: next.status,
          approved_by: next.approved_by,
          approved_at: next.approved_at,
          updated_by: actorId,
          updated_at: now,
        })
        .where("id", "=", c.id)
        .execute();
    } catch (e) {
      if (isUniqueViolation(e)) throw new CorrectionRefused(`There is already a ${review.action === "adjust" ? review.kind : c.kind} correction for these two visits.`, 409, "kind");
      throw e;
    }
    // Readings change when the correction is, or was, applied.
    if (c.status === "approved" || next.status === "approved") await correctRange(trx, c.site_id, c.period_start, c.period_end);
    await syncPeriods(trx, c.site_id, c.logger_id);
    await recordChange(
      { actorId, siteId: c.site_id, entity: "correction", entityId: c.id, action: review.action, before, after, reason: review.note, inLockedPeriod: inLocked },
      trx,
    );
    return { changed: true };
  });
}

export type NewCorrection = {
  siteId: string;
  periodId: string;
  kind: CorrectionKindName;
  unit: OffsetUnitName;
  startOffset: number;
  endOffset: number;
  reason: string;
  note?: string | null;
  /** Approve it at once (an officer's own correction). */
  approve: boolean;
};

/** An officer's own correction over one period of record (between two visits). */
export async function addCorrection(actorId: string, input: NewCorrection) {
  checkOffsets(input.unit, input.startOffset, input.endOffset);
  return db.transaction().execute(async (trx) => {
    const period = await trx
      .selectFrom("record_period")
      .select(["id", "site_id", "logger_id", "period_start", "period_end", "from_visit_id", "to_visit_id"])
      .where("id", "=", input.periodId)
      .where("site_id", "=", input.siteId)
      .executeTakeFirst();
    if (!period) throw new CorrectionRefused("Choose a period of record from the list.", 400, "periodId");
    const inLocked = await guardLockedPeriods(
      trx,
      { siteId: period.site_id, loggerId: period.logger_id, from: period.period_start, to: period.period_end, touching: false },
      input.note,
    );
    const now = new Date();
    const row = await trx
      .insertInto("correction")
      .values({
        site_id: period.site_id,
        logger_id: period.logger_id,
        kind: input.kind,
        from_visit_id: period.from_visit_id,
        to_visit_id: period.to_visit_id,
        period_start: period.period_start,
        period_end: period.period_end,
        offset_unit: input.unit,
        start_offset: input.startOffset,
        end_offset: input.endOffset,
        status: input.approve ? "approved" : "proposed",
        author_id: actorId,
        reason: input.reason,
        approved_by: input.approve ? actorId : null,
        approved_at: input.approve ? now : null,
        updated_by: actorId,
      })
      .returning("id")
      .executeTakeFirstOrThrow();
    if (input.approve) await correctRange(trx, period.site_id, period.period_start, period.period_end);
    await syncPeriods(trx, period.site_id, period.logger_id);
    await recordChange(
      {
        actorId,
        siteId: period.site_id,
        entity: "correction",
        entityId: row.id,
        action: "add",
        after: auditValues({ kind: input.kind, offset_unit: input.unit, start_offset: input.startOffset, end_offset: input.endOffset, status: input.approve ? "approved" : "proposed", reason: input.reason }),
        reason: input.note,
        inLockedPeriod: inLocked,
      },
      trx,
    );
    return { id: row.id };
  });
}

/** Approved corrections of a site overlapping [from, to] (for the readings-changed step). */
export async function approvedCorrectionsOverlapping(siteId: string, from: Date, to: Date, trx: Executor = db) {
  return trx
    .selectFrom("correction")
    .select(["id", "period_start", "period_end"])
    .where("site_id", "=", siteId)
    .where("status", "=", "approved")
    .where("period_start", "<=", to)
    .where("period_end", ">=", from)
    .orderBy("period_start")
    .execute();
}
