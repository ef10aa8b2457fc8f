import { sql, type Kysely, type Transaction } from "kysely";
import type { DB, GradeName } from "#db/schema.ts";
import { scGrade, totalCorrectionPercent } from "#app/lib/quality/grades.ts";
import { db } from "#app/utils/db.server.ts";
import { recordChange } from "./record-audit.server.ts";
import { enqueueSummariseWeeks } from "./weekly-summary.server.ts";

type Executor = Kysely<DB> | Transaction<DB>;

/**
 * Keeps a logger's periods of record in step with its visits and corrections: one period between
 * each pair of consecutive visits, graded from the total absolute correction over it (approved and
 * still proposed corrections: what the visits found, until an officer rejects it). µS/cm corrections
 * are put in % of the period's mean uncorrected specific conductance (or, without readings, of the
 * later visit's values). A period whose pair of visits no longer exists goes; callers have already
 * asked for a reason when that period was approved, and the removal is audited.
 */
export async function syncPeriods(trx: Transaction<DB>, siteId: string, loggerId: string, actorId: string | null = null) {
  const visits = await trx
    .selectFrom("field_visit")
    .select(["id", "visited_at", "meter_sc_us_cm", "after_sc_us_cm", "before_sc_us_cm"])
    .where("site_id", "=", siteId)
    .where("logger_id", "=", loggerId)
    .orderBy("visited_at")
    .execute();
  const periods = await trx
    .selectFrom("record_period")
    .select(["id", "period_start", "period_end", "from_visit_id", "to_visit_id", "grade", "total_correction_percent", "locked", "approved_at"])
    .where("site_id", "=", siteId)
    .where("logger_id", "=", loggerId)
    .execute();
  const corrections = await trx
    .selectFrom("correction")
    .select(["period_start", "period_end", "start_offset", "end_offset", "offset_unit"])
    .where("site_id", "=", siteId)
    .where("logger_id", "=", loggerId)
    .where("status", "in", ["approved", "proposed"])
    .execute();
  const kept = new Set<string>();
  for (let i = 1; i < visits.length; i++) {
    const a = visits[i - 1];
    const b = visits[i];
    const start = a.visited_at;
    const end = b.visited_at;
    const over = corrections
      .filter((c) => c.period_start < end && c.period_end > start)
      .map((c) => ({ startOffset: c.start_offset, endOffset: c.end_offset, unit: c.offset_unit }));
    let reference: number | null = null;
    if (over.some((c) => c.unit === "us_cm")) {
      reference = await meanUncorrected(trx, siteId, loggerId, start, end);
      reference ??= b.meter_sc_us_cm ?? b.after_sc_us_cm ?? b.before_sc_us_cm;
    }
    const total = totalCorrectionPercent(over, reference);
    const grade: GradeName | null = total === null ? null : scGrade(total);
    const existing = periods.find((p) => p.period_start.getTime() === start.getTime());
    if (!existing) {
      await trx
        .insertInto("record_period")
        .values({ site_id: siteId, logger_id: loggerId, from_visit_id: a.id, to_visit_id: b.id, period_start: start, period_end: end, grade, total_correction_percent: total })
        .execute();
      continue;
    }
    kept.add(existing.id);
    if (
      existing.period_end.getTime() !== end.getTime() ||
      existing.to_visit_id !== b.id ||
      existing.from_visit_id !== a.id ||
      existing.grade !== grade ||
      existing.total_correction_percent !== total
    ) {
      await trx
        .updateTable("record_period")
        .set({ period_end: end, from_visit_id: a.id, to_visit_id: b.id, grade, total_correction_percent: total, updated_at: new Date() })
        .where("id", "=", existing.id)
        .execute();
    }
  }
  for (const p of periods.filter((x) => !kept.has(x.id))) {
    await trx.deleteFrom("record_period").where("id", "=", p.id).execute();
    if (p.locked) {
      await recordChange(
        {
          actorId,
          siteId,
          entity: "record_period",
          entityId: p.id,
          action: "remove",
          before: { start: p.period_start.toISOString(), end: p.period_end.toISOString(), grade: p.grade, approved: true },
          after: null,
          reason: "The visits that bounded this approved period changed.",
          inLockedPeriod: true,
        },
        trx,
      );
    }
  }
}

async function meanUncorrected(trx: Executor, siteId: string, loggerId: string, from: Date, to: Date): Promise<number | null> {
  const row = await trx
    .selectFrom("readings")
    .select(sql<number | null>`avg(sc25_uncorrected_us_cm)`.as("mean"))
    .where("site_id", "=", siteId)
    .where("logger_id", "=", loggerId)
    .where("time", ">=", from)
    .where("time", "<=", to)
    .executeTakeFirst();
  return row?.mean === null || row?.mean === undefined ? null : Number(row.mean);
}

export class PeriodRefused extends Error {
  constructor(message: string, readonly status = 400) {
    super(message);
  }
}

/** An officer approves a reviewed period of record: it is locked against silent change. */
export async function approvePeriod(actorId: string, periodId: string, siteId: string) {
  return db.transaction().execute(async (trx) => {
    const p = await trx.selectFrom("record_period").selectAll().where("id", "=", periodId).where("site_id", "=", siteId).forUpdate().executeTakeFirst();
    if (!p) throw new PeriodRefused("No such period of record.", 404);
    if (p.locked) return { changed: false };
    const pending = await trx
      .selectFrom("correction")
      .select((eb) => eb.fn.countAll<number>().as("n"))
      .where("site_id", "=", p.site_id)
      .where("logger_id", "=", p.logger_id)
      .where("status", "=", "proposed")
      .where("period_start", "<", p.period_end)
      .where("period_end", ">", p.period_start)
      .executeTakeFirstOrThrow();
    if (Number(pending.n) > 0) throw new PeriodRefused("Approve or reject the proposed corrections in this period first.", 409);
    const now = new Date();
    await trx.updateTable("record_period").set({ approved_by: actorId, approved_at: now, locked: true, updated_at: now }).where("id", "=", p.id).execute();
    // The weekly summaries of the period's weeks show approval: recompute them.
    await enqueueSummariseWeeks(p.site_id, p.period_start.getTime(), p.period_end.getTime(), trx);
    await recordChange(
      { actorId, siteId: p.site_id, entity: "record_period", entityId: p.id, action: "approve", before: { approved: false }, after: { approved: true, grade: p.grade } },
      trx,
    );
    return { changed: true };
  });
}

/** Reopens an approved period for changes; always needs a reason. */
export async function reopenPeriod(actorId: string, periodId: string, siteId: string, reason: string) {
  if (!reason.trim()) throw new PeriodRefused("Give a reason for reopening an approved period.");
  return db.transaction().execute(async (trx) => {
    const p = await trx.selectFrom("record_period").selectAll().where("id", "=", periodId).where("site_id", "=", siteId).forUpdate().executeTakeFirst();
    if (!p) throw new PeriodRefused("No such period of record.", 404);
    if (!p.locked) return { changed: false };
    await trx.updateTable("record_period").set({ approved_by: null, approved_at: null, locked: false, updated_at: new Date() }).where("id", "=", p.id).execute();
    await enqueueSummariseWeeks(p.site_id, p.period_start.getTime(), p.period_end.getTime(), trx);
    await recordChange(
      { actorId, siteId: p.site_id, entity: "record_period", entityId: p.id, action: "reopen", before: { approved: true }, after: { approved: false }, reason, inLockedPeriod: true },
      trx,
    );
    return { changed: true };
  });
}

/**
 * Periods of record of a site overlapping [from, to], oldest first, with their grade and approval.
 * For the site chart's grade band, the summaries and the export.
 */
export async function listPeriods(siteId: string, range: { from?: Date; to?: Date } = {}, trx: Executor = db) {
  let q = trx
    .selectFrom("record_period as p")
    .innerJoin("logger as l", "l.id", "p.logger_id")
    .leftJoin("person as a", "a.id", "p.approved_by")
    .select([
      "p.id",
      "p.logger_id",
      "l.serial as logger_serial",
      "p.from_visit_id",
      "p.to_visit_id",
      "p.period_start",
      "p.period_end",
      "p.grade",
      "p.total_correction_percent",
      "p.approved_at",
      "p.locked",
      "a.name as approver_name",
    ])
    .where("p.site_id", "=", siteId);
  if (range.to) q = q.where("p.period_start", "<", range.to);
  if (range.from) q = q.where("p.period_end", ">", range.from);
  return q.orderBy("p.period_start").orderBy("l.serial").execute();
}

export type PeriodRow = Awaited<ReturnType<typeof listPeriods>>[number];

/** Periods for a chart's band: plain numbers and words, ready for the browser. */
export async function gradeBand(siteId: string, fromMs: number, toMs: number) {
  const rows = await listPeriods(siteId, { from: new Date(fromMs), to: new Date(toMs) });
  return rows.map((p) => ({ fromMs: p.period_start.getTime(), toMs: p.period_end.getTime(), grade: p.grade, approved: p.locked }));
}
