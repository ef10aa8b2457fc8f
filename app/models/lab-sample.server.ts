import { sql, type Transaction } from "kysely";
import type { DB, LabVerdict } from "#db/schema.ts";
import type { LabSampleColumns } from "#app/lib/lab/analysis-input.ts";
import type { SortDir } from "#app/utils/table-params.ts";
import { db } from "#app/utils/db.server.ts";
import { changedFields, recordAudit, type AuditValues } from "./audit.server.ts";

// Laboratory analyses of grab samples. Rows are written with the columns labSampleColumns() builds
// (the server always recomputes the checks); every create, change and delete leaves an audit row.

type Executor = typeof db | Transaction<DB>;

export type NewLabSample = LabSampleColumns & { site_id: string; sampled_at: Date; results: unknown };

function insertValues(sample: NewLabSample, actorId: string) {
  return {
    ...sample,
    ions_mg_l: JSON.stringify(sample.ions_mg_l),
    results: JSON.stringify(sample.results),
    entered_by: actorId,
  };
}

/** The inputs as the audit trail records them (the results follow from these). */
function auditValues(s: {
  site_id: string;
  sampled_at: Date;
  lab_reference: string | null;
  ions_mg_l: Record<string, number>;
  measured_ec_us_cm: number | null;
  measured_tds_mg_l: number | null;
  ph: number | null;
  silica_mg_l: number | null;
  notes: string;
  verdict: LabVerdict;
}): AuditValues {
  return {
    site_id: s.site_id,
    sampled_at: s.sampled_at.toISOString(),
    lab_reference: s.lab_reference,
    // Sorted: jsonb keeps its own key order, and changedFields compares as JSON text.
    ions_mg_l: Object.fromEntries(Object.entries(s.ions_mg_l).sort(([a], [b]) => a.localeCompare(b))),
    measured_ec_us_cm: s.measured_ec_us_cm,
    measured_tds_mg_l: s.measured_tds_mg_l,
    ph: s.ph,
    silica_mg_l: s.silica_mg_l,
    notes: s.notes,
    verdict: s.verdict,
  };
}

/**
 * Saves analyses in one transaction (one multi-row INSERT, bound parameters) with an audit row for
 * each: either all of them are stored or none. Returns the new ids in input order.
 */
export async function createLabSamples(actorId: string, samples: NewLabSample[], source: "form" | "csv"): Promise<string[]> {
  if (samples.length === 0) return [];
  return db.transaction().execute(async (trx) => {
    const rows = await trx
      .insertInto("lab_sample")
      .values(samples.map((s) => insertValues(s, actorId)))
      .returning("id")
      .execute();
    await trx
      .insertInto("audit_event")
      .values(
        rows.map((r, i) => ({
          person_id: actorId,
          entity: "lab_sample",
          entity_id: r.id,
          action: "create",
          before: null,
          after: JSON.stringify(auditValues(samples[i])),
          reason: source === "csv" ? "CSV import" : null,
        })),
      )
      .execute();
    return rows.map((r) => r.id);
  });
}

/**
 * Replaces a sample's inputs and recomputed results; audits the changed inputs. Returns "missing"
 * when the sample is gone, "unchanged" when nothing differs.
 */
export async function updateLabSample(actorId: string, id: string, sample: NewLabSample): Promise<"saved" | "unchanged" | "missing"> {
  return db.transaction().execute(async (trx) => {
    const current = await trx
      .selectFrom("lab_sample")
      .select([
        "site_id",
        "sampled_at",
        "lab_reference",
        "ions_mg_l",
        "measured_ec_us_cm",
        "measured_tds_mg_l",
        "ph",
        "silica_mg_l",
        "notes",
        "verdict",
      ])
      .where("id", "=", id)
      .forUpdate()
      .executeTakeFirst();
    if (!current) return "missing";
    const diff = changedFields(auditValues(current), auditValues(sample));
    if (!diff) return "unchanged";
    const { entered_by: _keepOriginalAuthor, ...values } = insertValues(sample, actorId);
    await trx.updateTable("lab_sample").set({ ...values, updated_at: new Date() }).where("id", "=", id).execute();
    await recordAudit({ actorId, entity: "lab_sample", entityId: id, action: "update", ...diff }, trx);
    return "saved";
  });
}

/** Deletes a sample; its audit row keeps the inputs. False when it was already gone. */
export async function deleteLabSample(actorId: string, id: string, reason: string | null): Promise<boolean> {
  return db.transaction().execute(async (trx) => {
    const gone = await trx
      .deleteFrom("lab_sample")
      .where("id", "=", id)
      .returning([
        "site_id",
        "sampled_at",
        "lab_reference",
        "ions_mg_l",
        "measured_ec_us_cm",
        "measured_tds_mg_l",
        "ph",
        "silica_mg_l",
        "notes",
        "verdict",
      ])
      .executeTakeFirst();
    if (!gone) return false;
    await recordAudit({ actorId, entity: "lab_sample", entityId: id, action: "delete", before: auditValues(gone), reason }, trx);
    return true;
  });
}

/** One sample with its site and who entered it (the result and edit pages). */
export async function findLabSample(id: string, trx: Executor = db) {
  return trx
    .selectFrom("lab_sample as l")
    .innerJoin("site as s", "s.id", "l.site_id")
    .leftJoin("person as p", "p.id", "l.entered_by")
    .select([
      "l.id",
      "l.site_id",
      "s.code as site_code",
      "s.name as site_name",
      "s.time_zone as site_time_zone",
      "l.sampled_at",
      "l.lab_reference",
      "l.ions_mg_l",
      "l.measured_ec_us_cm",
      "l.measured_tds_mg_l",
      "l.ph",
      "l.silica_mg_l",
      "l.notes",
      "l.calculated_ec_us_cm",
      "l.calculated_tds_mg_l",
      "l.ec_ratio",
      "l.ion_balance_percent",
      "l.results",
      "l.verdict",
      "p.name as entered_by_name",
      "l.created_at",
      "l.updated_at",
    ])
    .where("l.id", "=", id)
    .executeTakeFirst();
}

export type LabSampleRecord = NonNullable<Awaited<ReturnType<typeof findLabSample>>>;

// ---- the list -------------------------------------------------------------------------------

export const LAB_SAMPLE_SORT_KEYS = ["sampledAt", "site", "verdict", "ecRatio", "balance"] as const;
export type LabSampleSortKey = (typeof LAB_SAMPLE_SORT_KEYS)[number];

export type LabSampleFilter = { siteCode?: string; verdict?: LabVerdict };

function filteredSamples(filter: LabSampleFilter, trx: Executor) {
  let q = trx.selectFrom("lab_sample as l").innerJoin("site as s", "s.id", "l.site_id");
  if (filter.siteCode) q = q.where("s.code", "=", filter.siteCode.toUpperCase());
  if (filter.verdict) q = q.where("l.verdict", "=", filter.verdict);
  return q;
}

export async function countLabSamples(filter: LabSampleFilter, trx: Executor = db) {
  const row = await filteredSamples(filter, trx).select((eb) => eb.fn.countAll<number>().as("n")).executeTakeFirstOrThrow();
  return Number(row.n);
}

export async function listLabSamplesPage(
  filter: LabSampleFilter,
  page: { sort: LabSampleSortKey; dir: SortDir; limit: number; offset: number },
  trx: Executor = db,
) {
  const q = filteredSamples(filter, trx).select([
    "l.id",
    "s.code as site_code",
    "s.name as site_name",
    "s.time_zone as site_time_zone",
    "l.sampled_at",
    "l.lab_reference",
    "l.verdict",
    "l.measured_ec_us_cm",
    "l.calculated_ec_us_cm",
    "l.ec_ratio",
    "l.ion_balance_percent",
  ]);
  // Verdicts sort by severity; a missing EC ratio (no measured EC) sorts last either way.
  const ordered =
    page.sort === "site"
      ? q.orderBy("s.code", page.dir)
      : page.sort === "verdict"
        ? q.orderBy(sql`case l.verdict when 'fail' then 2 when 'warn' then 1 else 0 end`, page.dir)
        : page.sort === "ecRatio"
          ? q.orderBy("l.ec_ratio", (ob) => (page.dir === "asc" ? ob.asc() : ob.desc()).nullsLast())
          : page.sort === "balance"
            ? q.orderBy(sql`abs(l.ion_balance_percent)`, page.dir)
            : q.orderBy("l.sampled_at", page.dir);
  return ordered.orderBy("l.sampled_at", "desc").orderBy("l.id").limit(page.limit).offset(page.offset).execute();
}

/**
 * Lab samples of one site between two instants, oldest first: what a site chart draws beside the
 * logger's specific conductance (measured and calculated EC at 25 °C, µS/cm).
 */
export async function listLabSamplesForSite(siteId: string, range: { from: Date; to: Date }, trx: Executor = db) {
  return trx
    .selectFrom("lab_sample")
    .select(["id", "sampled_at", "lab_reference", "measured_ec_us_cm", "calculated_ec_us_cm", "ec_ratio", "verdict"])
    .where("site_id", "=", siteId)
    .where("sampled_at", ">=", range.from)
    .where("sampled_at", "<", range.to)
    .orderBy("sampled_at")
    .execute();
}
