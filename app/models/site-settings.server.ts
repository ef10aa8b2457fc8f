import type { Transaction } from "kysely";
import type { CompensationMethodName, DB } from "#db/schema.ts";
import { THRESHOLD_PARAMETERS, type DisplayThreshold } from "#app/lib/series/parameters.ts";
import { db } from "#app/utils/db.server.ts";
import { enqueue } from "#app/utils/jobs.server.ts";
import { changedFields, recordAudit, type AuditValues } from "./audit.server.ts";
import { currentSettingsId } from "./derivation.server.ts";

type Executor = typeof db | Transaction<DB>;

/** A site by its code, with what the site and settings pages show (derivation settings included). */
export async function findSiteByCode(code: string, trx: Executor = db) {
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
    ])
    .where("code", "=", code.toUpperCase())
    .executeTakeFirst();
}

export type SiteWithSettings = NonNullable<Awaited<ReturnType<typeof findSiteByCode>>>;

/** Display thresholds of some sites, keyed by site id (parameters in their fixed order). */
export async function thresholdsBySite(siteIds: readonly string[], trx: Executor = db): Promise<Map<string, DisplayThreshold[]>> {
  const out = new Map<string, DisplayThreshold[]>();
  if (!siteIds.length) return out;
  const rows = await trx
    .selectFrom("site_threshold")
    .select(["site_id", "parameter", "bound", "value"])
    .where("site_id", "in", siteIds)
    .execute();
  const order = (t: DisplayThreshold) => THRESHOLD_PARAMETERS.indexOf(t.parameter) * 2 + (t.bound === "upper" ? 0 : 1);
  for (const r of rows) {
    const list = out.get(r.site_id) ?? [];
    list.push({ parameter: r.parameter, bound: r.bound, value: r.value });
    out.set(r.site_id, list);
  }
  for (const list of out.values()) list.sort((a, b) => order(a) - order(b));
  return out;
}

export async function thresholdsOf(siteId: string, trx: Executor = db) {
  return (await thresholdsBySite([siteId], trx)).get(siteId) ?? [];
}

export type SiteSettingsValues = {
  compensation_method: CompensationMethodName;
  alpha_per_c: number;
  reference_c: number;
  tds_factor: number;
  thresholds: DisplayThreshold[];
};

function thresholdRecord(list: readonly DisplayThreshold[]): AuditValues {
  return Object.fromEntries(list.map((t) => [`${t.parameter} ${t.bound}`, t.value]));
}

export type SettingsOutcome = { outcome: "unchanged" } | { outcome: "saved" } | { outcome: "recompute"; settingsId: number };

/**
 * Saves a site's derivation settings and display thresholds in one transaction with one audit row.
 * When a derivation setting changed, the site's settings version goes up, a settings snapshot is
 * taken and a `recompute-site` job is queued in the same transaction (one pending job per site: a
 * newer change replaces a queued one through its job key), so history is re-derived with the new
 * settings; raw values are never touched.
 */
export async function saveSiteSettings(actorId: string, siteId: string, values: SiteSettingsValues): Promise<SettingsOutcome> {
  return db.transaction().execute(async (trx) => {
    const current = await trx
      .selectFrom("site")
      .select(["compensation_method", "alpha_per_c", "reference_c", "tds_factor"])
      .where("id", "=", siteId)
      .forUpdate()
      .executeTakeFirstOrThrow();
    const currentThresholds = await thresholdsOf(siteId, trx);
    const derivationBefore = { ...current };
    const derivationAfter = {
      compensation_method: values.compensation_method,
      alpha_per_c: values.alpha_per_c,
      reference_c: values.reference_c,
      tds_factor: values.tds_factor,
    };
    const derivationDiff = changedFields(derivationBefore, derivationAfter);
    const thresholdDiff = changedFields(thresholdRecord(currentThresholds), thresholdRecord(values.thresholds));
    if (!derivationDiff && !thresholdDiff) return { outcome: "unchanged" } as const;

    if (thresholdDiff) {
      await trx.deleteFrom("site_threshold").where("site_id", "=", siteId).execute();
      if (values.thresholds.length) {
        await trx
          .insertInto("site_threshold")
          .values(values.thresholds.map((t) => ({ site_id: siteId, parameter: t.parameter, bound: t.bound, value: t.value, updated_by: actorId })))
          .execute();
      }
    }
    let settingsId: number | null = null;
    if (derivationDiff) {
      await trx
        .updateTable("site")
        .set((eb) => ({ ...derivationAfter, settings_version: eb("settings_version", "+", 1), updated_at: new Date() }))
        .where("id", "=", siteId)
        .execute();
      settingsId = await currentSettingsId(siteId, actorId, trx);
      await enqueue("recompute-site", { siteId, settingsId }, { jobKey: `recompute:${siteId}` }, trx);
    }
    await recordAudit(
      {
        actorId,
        entity: "site",
        entityId: siteId,
        action: "update",
        before: { ...(derivationDiff?.before ?? {}), ...(thresholdDiff ? { thresholds: thresholdDiff.before } : {}) },
        after: { ...(derivationDiff?.after ?? {}), ...(thresholdDiff ? { thresholds: thresholdDiff.after } : {}) },
        reason: derivationDiff ? `Derivation settings changed; history recomputed with settings snapshot ${settingsId}.` : null,
      },
      trx,
    );
    return settingsId !== null ? ({ outcome: "recompute", settingsId } as const) : ({ outcome: "saved" } as const);
  });
}
