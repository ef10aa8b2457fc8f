import { data } from "react-router";
import { formatInZone } from "#app/lib/zoned-time.ts";
import { GRADE_LABELS } from "#app/lib/quality/grades.ts";
import { listCorrections } from "#app/models/correction.server.ts";
import { describeRecordAudit, listRecordAudit } from "#app/models/record-audit.server.ts";
import { listPeriods } from "#app/models/record-period.server.ts";
import { db } from "#app/utils/db.server.ts";

/** The site named in the URL (codes are short capitals and digits); 404 for anything else. */
export async function siteByCode(code: string | undefined) {
  if (!code || !/^[A-Za-z0-9-]{1,12}$/.test(code)) throw data("No such site.", { status: 404 });
  const site = await db.selectFrom("site").select(["id", "code", "name", "time_zone"]).where("code", "=", code).executeTakeFirst();
  if (!site) throw data("No such site.", { status: 404 });
  return site;
}

/** Everything the review page of one site shows, as plain values for the browser. */
export async function loadReview(site: { id: string; time_zone: string }) {
  const zone = site.time_zone;
  const [corrections, periods, audit, visits] = await Promise.all([
    listCorrections({ siteId: site.id }),
    listPeriods(site.id),
    listRecordAudit({ siteId: site.id }, 40),
    db.selectFrom("field_visit").select(["id", "visited_at"]).where("site_id", "=", site.id).execute(),
  ]);
  const visitTime = new Map(visits.map((v) => [v.id, formatInZone(v.visited_at, zone)]));
  const lockedOf = (loggerId: string, start: Date, end: Date) =>
    periods.some((p) => p.locked && p.logger_id === loggerId && p.period_start < end && p.period_end > start);
  const pendingIn = (loggerId: string, start: Date, end: Date) =>
    corrections.filter((c) => c.status === "proposed" && c.logger_id === loggerId && c.period_start < end && c.period_end > start).length;
  return {
    corrections: corrections.map((c) => ({
      id: c.id,
      kind: c.kind,
      status: c.status,
      logger: c.logger_serial,
      from: formatInZone(c.period_start, zone),
      to: formatInZone(c.period_end, zone),
      fromVisitId: c.from_visit_id,
      toVisitId: c.to_visit_id,
      toVisitAt: c.to_visit_id ? (visitTime.get(c.to_visit_id) ?? null) : null,
      unit: c.offset_unit,
      startOffset: c.start_offset,
      endOffset: c.end_offset,
      reason: c.reason,
      author: c.author_name ?? (c.author_id ? "someone no longer listed" : null),
      approvedBy: c.approver_name,
      approvedAt: c.approved_at ? formatInZone(c.approved_at, zone) : null,
      editedBy: c.editor_name,
      locked: lockedOf(c.logger_id, c.period_start, c.period_end),
    })),
    periods: periods.map((p) => ({
      id: p.id,
      logger: p.logger_serial,
      from: formatInZone(p.period_start, zone),
      to: formatInZone(p.period_end, zone),
      grade: p.grade,
      gradeLabel: p.grade ? GRADE_LABELS[p.grade] : "Not graded",
      totalPercent: p.total_correction_percent,
      locked: p.locked,
      approvedBy: p.approver_name,
      approvedAt: p.approved_at ? formatInZone(p.approved_at, zone) : null,
      pending: pendingIn(p.logger_id, p.period_start, p.period_end),
    })),
    history: describeRecordAudit(audit, (at) => formatInZone(at, zone)),
  };
}

export type ReviewData = Awaited<ReturnType<typeof loadReview>>;
