// Field visits of the demo year, matching its readings (db/demo/readings.ts): routine visits to
// every logger about every six weeks, and the two visits that found the year's sensor problems —
// QT3's sensor fouled (reading up to 12 % low) since a visit 42 days earlier, and HR5's calibration
// drifted (4.5 % high) since a visit 56 days earlier. Ripplemark proposes a correction for each;
// the demo officer has approved the fouling one (and the period it covers) and left the drift one
// for review. Values at each visit come from the stored readings, so they agree with the charts.
import { sql, type Kysely } from "kysely";
import type { DB } from "../schema.ts";
import { calibrationCheck, foulingError, temperatureCheck, type StandardChoice } from "#app/lib/quality/calibration.ts";
import type { DemoEvents } from "./readings.ts";
import { DEMO_PEOPLE, DEMO_SITES } from "./scenario.ts";

const DAY = 86_400_000;
const ROUTINE_EVERY_DAYS = 42;
const ARRIVAL_MS = 5 * 60_000;

/** Deterministic small noise in [−1, 1) from a text (no Math.random: the seed is repeatable). */
function jitter(text: string) {
  let h = 2166136261;
  for (const ch of text) h = Math.imul(h ^ ch.charCodeAt(0), 16777619) >>> 0;
  return (h / 4294967296) * 2 - 1;
}

type Planned = { siteCode: string; loggerId: string; atMs: number; kind: "routine" | "fouling" | "drift" };

const STANDARDS: Record<string, StandardChoice[]> = { QH1: ["146.9", "1413"], HR5: ["146.9", "1413"], QS4: ["12.88"] };

/**
 * Adds the demo's field visits, proposals and approvals. Skipped when the demo sites already have
 * visits (idempotent). Needs the app's environment (it uses the corrections code).
 */
export async function seedDemoVisits(db: Kysely<DB>, events: DemoEvents, options: { log?: (line: string) => void } = {}) {
  const log = options.log ?? (() => {});
  const codes = DEMO_SITES.map((s) => s.code);
  const sites = await db.selectFrom("site").select(["id", "code", "tds_factor"]).where("code", "in", codes).execute();
  if (!sites.length) return { visits: 0 };
  const existing = await db
    .selectFrom("field_visit")
    .select((eb) => eb.fn.countAll<number>().as("n"))
    .where("site_id", "in", sites.map((s) => s.id))
    .executeTakeFirstOrThrow();
  if (Number(existing.n) > 0) {
    log("demo visits already present: skipped");
    return { visits: 0 };
  }
  const { applyCorrections, syncProposals } = await import("#app/models/correction.server.ts");
  const { syncPeriods } = await import("#app/models/record-period.server.ts");

  const people = await db.selectFrom("person").select(["id", "email"]).where(sql`lower(email)`, "in", DEMO_PEOPLE.map((p) => p.email)).execute();
  const personOf = (role: string) => people.find((p) => p.email === DEMO_PEOPLE.find((d) => d.role === role)?.email)?.id ?? null;
  const technician = personOf("technician");
  const officer = personOf("officer");

  // Where each logger has readings (and so was deployed): the visits fall inside.
  const extents = await db
    .selectFrom("readings")
    .select((eb) => ["site_id", "logger_id", eb.fn.min("time").as("first"), eb.fn.max("time").as("last")])
    .where("site_id", "in", sites.map((s) => s.id))
    .groupBy(["site_id", "logger_id"])
    .execute();

  const planned: Planned[] = [];
  for (const [i, site] of sites.sort((a, b) => a.code.localeCompare(b.code)).entries()) {
    for (const e of extents.filter((x) => x.site_id === site.id)) {
      const first = new Date(e.first as Date).getTime();
      const last = new Date(e.last as Date).getTime();
      // The round: 09:30 at the first site, 40 minutes more for each next one (UTC).
      const roundOffset = 9.5 * 3_600_000 + i * 40 * 60_000;
      const special: Planned[] = [];
      // Each visit is dated when the technician arrived, five minutes before the sensor was cleaned
      // or recalibrated (the moment the demo readings change).
      if (site.code === "QT3") special.push({ siteCode: "QT3", loggerId: e.logger_id, atMs: events.foulingStart - ARRIVAL_MS, kind: "routine" }, { siteCode: "QT3", loggerId: e.logger_id, atMs: events.foulingVisit - ARRIVAL_MS, kind: "fouling" });
      if (site.code === "HR5") special.push({ siteCode: "HR5", loggerId: e.logger_id, atMs: events.driftStart - ARRIVAL_MS, kind: "routine" }, { siteCode: "HR5", loggerId: e.logger_id, atMs: events.driftVisit - ARRIVAL_MS, kind: "drift" });
      const quiet = special.length ? [special[0].atMs - 10 * DAY, special[1].atMs + 10 * DAY] : null;
      const dayStart = (t: number) => Math.floor(t / DAY) * DAY;
      for (let t = dayStart(last) - 3 * DAY + roundOffset; t > first + DAY; t -= ROUTINE_EVERY_DAYS * DAY) {
        if (quiet && t > quiet[0] && t < quiet[1]) continue;
        planned.push({ siteCode: site.code, loggerId: e.logger_id, atMs: t, kind: "routine" });
      }
      for (const s of special) if (s.atMs > first && s.atMs <= last) planned.push(s);
    }
  }

  let count = 0;
  const touched = new Set<string>();
  await db.transaction().execute(async (trx) => {
    for (const p of planned.sort((a, b) => a.atMs - b.atMs)) {
      const site = sites.find((s) => s.code === p.siteCode)!;
      // The logger's record around the visit: the last reading before it (what the sensor showed on
      // arrival) and the first at or after it (once cleaned or recalibrated).
      const around = (op: "<" | ">=") =>
        trx
          .selectFrom("readings")
          .select(["sc25_uncorrected_us_cm", "temperature_c"])
          .where("site_id", "=", site.id)
          .where("logger_id", "=", p.loggerId)
          .where("time", op, new Date(p.atMs))
          .where("time", op === "<" ? ">=" : "<=", new Date(op === "<" ? p.atMs - 30 * 60_000 : p.atMs + 30 * 60_000))
          .where("sc25_uncorrected_us_cm", "is not", null)
          .orderBy("time", op === "<" ? "desc" : "asc")
          .limit(1)
          .executeTakeFirst();
      const [prior, at] = [await around("<"), await around(">=")];
      const arrival = prior ?? at;
      const settled = at ?? prior;
      if (!arrival?.sc25_uncorrected_us_cm || !settled?.sc25_uncorrected_us_cm) continue; // no data then (the QH1 gap): no visit
      const key = `${p.siteCode}:${p.atMs}`;
      const round = (x: number, d = 1) => Math.round(x * 10 ** d) / 10 ** d;
      const temperature = settled.temperature_c ?? arrival.temperature_c ?? 12;
      // Fouling: the sensor read low on arrival and right once cleaned. Drift: cleaning changes
      // nothing, the field meter shows the truth (the record after recalibration). Routine: the
      // sensor agrees with itself and the meter within a few tenths of a per cent.
      const before = p.kind === "routine" ? settled.sc25_uncorrected_us_cm * (1 + 0.003 * jitter(`${key}:b`)) : arrival.sc25_uncorrected_us_cm;
      const after = p.kind === "drift" ? before * (1 + 0.002 * jitter(`${key}:a`)) : settled.sc25_uncorrected_us_cm * (1 + 0.002 * jitter(`${key}:a`));
      const truth = settled.sc25_uncorrected_us_cm;
      const meter = truth * (1 + 0.004 * jitter(`${key}:m`));
      const standardTemperature = round(13 + 6 * Math.abs(jitter(`${key}:t`)), 1);
      const checks = (STANDARDS[p.siteCode] ?? ["1413"]).map((standard, position) => {
        const expected = calibrationCheck({ standard, temperatureC: standardTemperature, sensorUsPerCm: 1 }).expectedUsPerCm;
        const sensor = round(expected * (p.kind === "drift" ? 1.045 : 1 + 0.012 * jitter(`${key}:c${position}`)), expected > 5000 ? 0 : 1);
        const r = calibrationCheck({ standard, temperatureC: standardTemperature, sensorUsPerCm: sensor });
        return {
          position,
          standard,
          custom_value_us_cm: null,
          standard_temperature_c: standardTemperature,
          sensor_us_cm: sensor,
          expected_us_cm: r.expectedUsPerCm,
          error_us_cm: r.errorUsPerCm,
          error_percent: r.errorPercent,
          allowance_us_cm: r.allowanceUsPerCm,
          passed: r.passed,
          cell_constant_change_percent: r.cellConstantChangePercent,
        };
      });
      const readings = {
        before_sc_us_cm: round(before),
        before_temperature_c: round(temperature, 2),
        after_sc_us_cm: round(after),
        after_temperature_c: round(temperature + 0.02 * jitter(`${key}:ta`), 2),
        meter_sc_us_cm: round(meter),
        meter_temperature_c: round(temperature + 0.1 * jitter(`${key}:tm`), 2),
      };
      const fouling = foulingError({ scUsPerCm: readings.before_sc_us_cm }, { scUsPerCm: readings.after_sc_us_cm }, { scUsPerCm: readings.meter_sc_us_cm });
      const temp = temperatureCheck({ temperatureC: readings.after_temperature_c }, { temperatureC: readings.meter_temperature_c });
      const visit = await trx
        .insertInto("field_visit")
        .values({
          site_id: site.id,
          logger_id: p.loggerId,
          visited_at: new Date(p.atMs),
          technician_id: technician,
          ...readings,
          fouling_error_us_cm: fouling?.errorUsPerCm ?? null,
          fouling_error_percent: fouling?.errorPercent ?? null,
          fouling_passed: fouling ? fouling.passed : null,
          temperature_error_c: temp?.errorC ?? null,
          temperature_passed: temp ? temp.passed : null,
          recalibrated: p.kind === "drift",
          notes:
            p.kind === "fouling"
              ? "Sensor guard thick with algae and silt; cleaned with a soft brush. Reading rose as soon as it was back in."
              : p.kind === "drift"
                ? "Readings high against the field meter; the sonde read high in both standards. Recalibrated in 1413 and checked again."
                : "Routine visit: wiped the sensor, checked against the meter and the standard.",
          created_by: technician,
          updated_by: technician,
          created_at: new Date(p.atMs + 2 * 3_600_000),
          updated_at: new Date(p.atMs + 2 * 3_600_000),
        })
        .returning("id")
        .executeTakeFirstOrThrow();
      await trx.insertInto("calibration_check").values(checks.map((c) => ({ ...c, visit_id: visit.id }))).execute();
      touched.add(`${site.id}|${p.loggerId}`);
      count++;
    }
    for (const pair of touched) {
      const [siteId, loggerId] = pair.split("|");
      await syncProposals(trx, siteId, loggerId);
      await syncPeriods(trx, siteId, loggerId);
    }

    // The officer's review: the fouling correction at QT3 approved, its period approved and locked.
    const qt3 = sites.find((s) => s.code === "QT3");
    const fouling = qt3
      ? await trx
          .selectFrom("correction")
          .selectAll()
          .where("site_id", "=", qt3.id)
          .where("kind", "=", "fouling")
          .where("period_end", "=", new Date(events.foulingVisit - ARRIVAL_MS))
          .executeTakeFirst()
      : undefined;
    if (qt3 && fouling) {
      const approvedAt = new Date(events.foulingVisit + 3 * DAY);
      await trx.updateTable("correction").set({ status: "approved", approved_by: officer, approved_at: approvedAt, updated_by: officer, updated_at: approvedAt }).where("id", "=", fouling.id).execute();
      await applyCorrections(trx, qt3.id, fouling.period_start, fouling.period_end);
      await syncPeriods(trx, qt3.id, fouling.logger_id);
      await trx
        .insertInto("record_audit")
        .values({ at: approvedAt, person_id: officer, site_id: qt3.id, entity: "correction", entity_id: fouling.id, action: "approve", before: JSON.stringify({ status: "proposed" }), after: JSON.stringify({ status: "approved" }), reason: "Matches the photos of the sensor guard and the jump at cleaning." })
        .execute();
      const period = await trx.selectFrom("record_period").select("id").where("site_id", "=", qt3.id).where("period_end", "=", new Date(events.foulingVisit - ARRIVAL_MS)).executeTakeFirst();
      if (period) {
        await trx.updateTable("record_period").set({ approved_by: officer, approved_at: approvedAt, locked: true }).where("id", "=", period.id).execute();
        await trx
          .insertInto("record_audit")
          .values({ at: approvedAt, person_id: officer, site_id: qt3.id, entity: "record_period", entity_id: period.id, action: "approve", before: JSON.stringify({ approved: false }), after: JSON.stringify({ approved: true }) })
          .execute();
      }
      // What depends on readings (exceedance detection, summaries) follows the corrected range.
      await sql`select graphile_worker.add_job('readings-changed', ${JSON.stringify({ siteId: qt3.id, fromMs: fouling.period_start.getTime(), toMs: fouling.period_end.getTime(), reason: "correction" })}::json, max_attempts => 10)`.execute(trx);
    }
  });
  log(`demo visits: ${count} field visits, proposals for the fouling at QT3 (approved) and the drift at HR5 (awaiting review)`);
  return { visits: count };
}
