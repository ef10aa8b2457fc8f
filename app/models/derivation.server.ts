import type { Transaction } from "kysely";
import type { DB } from "#db/schema.ts";
import { db } from "#app/utils/db.server.ts";

/**
 * The id of the derivation-settings snapshot matching the site's current settings, creating one
 * when the settings changed since the last snapshot. Every derived value records this id. Pass `trx`
 * to take the snapshot inside the transaction that changed the settings.
 */
export async function currentSettingsId(siteId: string, personId: string | null = null, trx: typeof db | Transaction<DB> = db): Promise<number> {
  const site = await trx
    .selectFrom("site")
    .select(["compensation_method", "alpha_per_c", "reference_c", "tds_factor"])
    .where("id", "=", siteId)
    .executeTakeFirstOrThrow();
  const last = await trx
    .selectFrom("derivation_settings")
    .selectAll()
    .where("site_id", "=", siteId)
    .orderBy("id", "desc")
    .limit(1)
    .executeTakeFirst();
  if (
    last &&
    last.compensation_method === site.compensation_method &&
    last.alpha_per_c === site.alpha_per_c &&
    last.reference_c === site.reference_c &&
    last.tds_factor === site.tds_factor
  ) {
    return last.id;
  }
  const row = await trx
    .insertInto("derivation_settings")
    .values({ site_id: siteId, ...site, created_by: personId })
    .returning("id")
    .executeTakeFirstOrThrow();
  return row.id;
}
