import { db } from "#app/utils/db.server.ts";
import { Deriver } from "./derive.server.ts";
import { withClient } from "./pg-client.server.ts";

const BATCH = 20_000;

const num = (x: number) => (x === x ? x : null);

/**
 * The `recompute-site` job: re-derives specific conductance, TDS and salinity of a site's whole
 * history with the settings snapshot `settingsId`. Raw columns are only read. One transaction:
 * readers see the old or the new values, never a mix. Memory stays bounded: a cursor feeds
 * batches, each written back with one array-bound UPDATE.
 */
export async function runRecomputeJob(siteId: string, settingsId: number) {
  const settings = await db.selectFrom("derivation_settings").selectAll().where("id", "=", settingsId).where("site_id", "=", siteId).executeTakeFirst();
  if (!settings) return { rows: 0 };
  const deriver = new Deriver(settings, BATCH);
  return withClient(async (client) => {
    await client.query("begin");
    try {
      await client.query(
        "declare rows_cursor no scroll cursor for select time, logger_id, conductivity_us_cm, logger_sc_us_cm, temperature_c from readings where site_id = $1",
        [siteId],
      );
      let total = 0;
      for (;;) {
        const { rows } = await client.query<{ time: Date; logger_id: string; conductivity_us_cm: number | null; logger_sc_us_cm: number | null; temperature_c: number | null }>(
          `fetch ${BATCH} from rows_cursor`,
        );
        if (rows.length === 0) break;
        for (let i = 0; i < rows.length; i++) {
          deriver.cond[i] = rows[i].conductivity_us_cm ?? NaN;
          deriver.loggerSc[i] = rows[i].logger_sc_us_cm ?? NaN;
          deriver.temp[i] = rows[i].temperature_c ?? NaN;
        }
        deriver.run(rows.length);
        const batch = { times: [] as Date[], loggers: [] as string[], sc: [] as (number | null)[], tds: [] as (number | null)[], sal: [] as (number | null)[] };
        for (let i = 0; i < rows.length; i++) {
          batch.times.push(rows[i].time);
          batch.loggers.push(rows[i].logger_id);
          batch.sc.push(num(deriver.sc25[i]));
          batch.tds.push(num(deriver.tds[i]));
          batch.sal.push(num(deriver.salinity[i]));
        }
        total += rows.length;
        // Updating while the cursor is open is fine in PostgreSQL (the cursor sees its snapshot);
        // each batch is written straight away so memory holds one batch at a time.
        const b = batch;
        await client.query(
          // The correction (if any) is kept: shown SC = compensated SC + correction; TDS follows it.
          `update readings r set sc25_uncorrected_us_cm = t.sc25,
             sc25_us_cm = t.sc25 + coalesce(r.correction_us_cm, 0),
             tds_mg_l = $8 * (t.sc25 + coalesce(r.correction_us_cm, 0)),
             salinity_psu = t.salinity, settings_id = $2
           from unnest($3::timestamptz[], $4::uuid[], $5::float8[], $6::float8[], $7::float8[]) as t(time, logger_id, sc25, tds, salinity)
           where r.site_id = $1 and r.time = t.time and r.logger_id = t.logger_id`,
          [siteId, settingsId, b.times, b.loggers, b.sc, b.tds, b.sal, settings.tds_factor],
        );
      }
      await client.query("close rows_cursor");
      const range = await client.query<{ from_ms: number | null; to_ms: number | null }>(
        "select extract(epoch from min(time)) * 1000 as from_ms, extract(epoch from max(time)) * 1000 as to_ms from readings where site_id = $1",
        [siteId],
      );
      const { from_ms, to_ms } = range.rows[0];
      if (from_ms !== null && to_ms !== null) {
        const payload = { siteId, fromMs: Number(from_ms), toMs: Number(to_ms), reason: "recompute" };
        await client.query("select graphile_worker.add_job('readings-changed', $1::json, max_attempts => 10)", [JSON.stringify(payload)]);
      }
      await client.query("commit");
      return { rows: total };
    } catch (e) {
      await client.query("rollback").catch(() => {});
      throw e;
    }
  });
}
