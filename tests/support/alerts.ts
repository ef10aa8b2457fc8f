import { randomUUID } from "node:crypto";
import { sql, type Kysely } from "kysely";
import type { DB, RoleName } from "#db/schema.ts";

// Helpers for alert tests: rules inserted directly and readings written straight into the store
// (the upload path is exercised where it matters, in tests/integration/alerts.test.ts).

export type RuleInput = {
  name?: string;
  parameter?: DB["alert_rule"]["parameter"];
  condition?: DB["alert_rule"]["condition"];
  params: Record<string, unknown>;
  siteIds?: string[] | null;
  notifyRoles?: RoleName[];
  email?: boolean;
  emailsPerHour?: number;
};

export async function createRule(db: Kysely<DB>, r: RuleInput) {
  const row = await db
    .insertInto("alert_rule")
    .values({
      name: r.name ?? "Test rule",
      parameter: r.parameter ?? "sc25",
      condition: r.condition ?? "above",
      params: JSON.stringify(r.params),
      site_ids: r.siteIds ?? null,
      site_kinds: null,
      notify_roles: r.notifyRoles ?? ["officer"],
      email: r.email ?? false,
      emails_per_hour: r.emailsPerHour ?? 4,
    })
    .returning("id")
    .executeTakeFirstOrThrow();
  return row.id;
}

/**
 * Readings every `stepMin` minutes from `startIso`, at 25 °C so that specific conductance equals
 * conductivity (the linear factor is 1 at the reference temperature; Standard Methods 2510 B).
 */
export async function insertReadings(db: Kysely<DB>, o: { siteId: string; loggerId: string; startIso: string; stepMin?: number; sc: number[]; flag?: string | null }) {
  const start = Date.parse(o.startIso);
  const step = (o.stepMin ?? 15) * 60_000;
  const times = o.sc.map((_, i) => new Date(start + i * step));
  await sql`select ensure_reading_partitions(${times[0]}, ${times[times.length - 1]})`.execute(db);
  const uploadId = randomUUID();
  await sql`
    insert into readings (site_id, logger_id, time, upload_id, row_number, conductivity_us_cm, temperature_c, sc25_us_cm, sc25_uncorrected_us_cm, tds_mg_l, quality_flag)
    select ${o.siteId}::uuid, ${o.loggerId}::uuid, t.time, ${uploadId}::uuid, t.n::int + 1, t.sc, 25, t.sc, t.sc, 0.65 * t.sc, ${o.flag ?? null}::text
    from unnest(${times}::timestamptz[], ${o.sc}::float8[]) with ordinality as t(time, sc, n)
    on conflict do nothing`.execute(db);
  return { fromMs: start, toMs: start + (o.sc.length - 1) * step };
}

export async function createSite(db: Kysely<DB>, o: { code: string; name?: string; kind?: DB["site"]["kind"] }) {
  const site = await db
    .insertInto("site")
    .values({
      code: o.code,
      name: o.name ?? `Test site ${o.code}`,
      kind: o.kind ?? "river",
      latitude: 54.3,
      longitude: -2.9,
      compensation_method: "linear",
      alpha_per_c: 0.0191,
      reference_c: 25,
      tds_factor: 0.65,
    })
    .returning("id")
    .executeTakeFirstOrThrow();
  const logger = await db.insertInto("logger").values({ serial: `${o.code}-LOG`, logging_interval_s: 900 }).returning("id").executeTakeFirstOrThrow();
  await db.insertInto("logger_deployment").values({ logger_id: logger.id, site_id: site.id, deployed_from: new Date("2020-01-01T00:00:00Z") }).execute();
  return { siteId: site.id, loggerId: logger.id };
}
