// `npm run db:seed` — loads the invented demo scenario. Idempotent: running it again updates the
// same rows (matched by e-mail, site code and logger serial) and adds nothing twice.
import { sql, type Kysely } from "kysely";
import { fileURLToPath } from "node:url";
import { createDb } from "./connect.ts";
import type { DB } from "./schema.ts";
import { DEMO_ASSIGNMENTS, DEMO_LOGGERS, DEMO_PEOPLE, DEMO_SITES } from "./demo/scenario.ts";
import { demoEvents } from "./demo/readings.ts";
import { seedDemoReadings } from "./demo/seed-readings.ts";
import { seedDemoLabSamples } from "./demo/lab-samples.ts";
import { hashPassword } from "#app/utils/password.server.ts";
import { seedDefaultRules } from "#app/models/default-rules.server.ts";

export type SeedOptions = {
  /** Days of demo readings before `endMs` (default a year); 0 loads none. */
  readingsDays?: number;
  endMs?: number;
  log?: (line: string) => void;
};

function todayUtcMs() {
  const now = new Date();
  return Date.UTC(now.getUTCFullYear(), now.getUTCMonth(), now.getUTCDate());
}

export async function seedDemo(db: Kysely<DB>, options: SeedOptions = {}) {
  const endMs = options.endMs ?? todayUtcMs();
  const swapMs = demoEvents(endMs).swap;
  const hashes = await Promise.all(DEMO_PEOPLE.map((p) => hashPassword(p.password)));
  await db.transaction().execute(async (trx) => {
    for (const [i, p] of DEMO_PEOPLE.entries()) {
      const existing = await trx.selectFrom("person").select("id").where(sql`lower(email)`, "=", p.email).executeTakeFirst();
      if (existing) {
        // Keep a password the person may have changed; only restore the role and name.
        await trx.updateTable("person").set({ name: p.name, role: p.role, disabled_at: null }).where("id", "=", existing.id).execute();
      } else {
        await trx
          .insertInto("person")
          .values({ email: p.email, name: p.name, role: p.role, password_hash: hashes[i], weekly_digest: p.weeklyDigest })
          .execute();
      }
    }
    for (const s of DEMO_SITES) {
      await trx
        .insertInto("site")
        .values({
          code: s.code,
          name: s.name,
          kind: s.kind,
          latitude: s.latitude,
          longitude: s.longitude,
          time_zone: "Europe/London",
          notes: s.notes,
          compensation_method: s.compensationMethod,
          reference_c: s.referenceC,
          tds_factor: s.tdsFactor,
        })
        .onConflict((oc) => oc.column("code").doUpdateSet({ name: s.name, kind: s.kind, latitude: s.latitude, longitude: s.longitude, notes: s.notes }))
        .execute();
    }
    const siteIds = new Map((await trx.selectFrom("site").select(["id", "code"]).execute()).map((r) => [r.code, r.id]));
    for (const l of DEMO_LOGGERS) {
      const logger = await trx
        .insertInto("logger")
        .values({ serial: l.serial, model: l.model, logging_interval_s: l.intervalS })
        .onConflict((oc) => oc.column("serial").doUpdateSet({ model: l.model, logging_interval_s: l.intervalS }))
        .returning("id")
        .executeTakeFirstOrThrow();
      const siteId = l.site ? siteIds.get(l.site) : undefined;
      if (!siteId) continue;
      // The AB8 swap is dated by the demo year: the old logger leaves, the new one arrives.
      const from = l.swap === "replacement" ? new Date(swapMs) : new Date(l.from);
      const until = l.swap === "replaced" ? new Date(swapMs - 5 * 60_000) : null;
      const have = await trx
        .selectFrom("logger_deployment")
        .select("id")
        .where("logger_id", "=", logger.id)
        .where("site_id", "=", siteId)
        .executeTakeFirst();
      if (!have) {
        await trx
          .insertInto("logger_deployment")
          .values({ logger_id: logger.id, site_id: siteId, deployed_from: from, deployed_until: until })
          .execute();
      }
    }
    for (const a of DEMO_ASSIGNMENTS) {
      const person = await trx.selectFrom("person").select("id").where(sql`lower(email)`, "=", a.email).executeTakeFirstOrThrow();
      for (const code of a.sites) {
        await trx
          .insertInto("site_assignment")
          .values({ person_id: person.id, site_id: siteIds.get(code)! })
          .onConflict((oc) => oc.doNothing())
          .execute();
      }
    }
  });
  // The alert rules Ripplemark starts with (matched by key: an officer's changes are kept).
  await seedDefaultRules(db);
  if ((options.readingsDays ?? 365) > 0) {
    await seedDemoReadings(db, { days: options.readingsDays ?? 365, endMs, log: options.log });
    const lab = await seedDemoLabSamples(db, endMs, options.readingsDays ?? 365);
    if (lab > 0) options.log?.(`demo lab samples: ${lab}`);
  }
}

if (process.argv[1] === fileURLToPath(import.meta.url)) {
  const url = process.env.DATABASE_URL;
  if (!url) throw new Error("DATABASE_URL is not set");
  const db = createDb(url, 2);
  try {
    await seedDemo(db, { readingsDays: Number(process.env.DEMO_DAYS ?? 365), log: (l) => console.log(l) });
    console.log(`demo seeded: ${DEMO_SITES.length} sites, ${DEMO_LOGGERS.length} loggers, ${DEMO_PEOPLE.length} people`);
  } finally {
    await db.destroy();
  }
  // The ingest code keeps its own pools open; the seed is done.
  process.exit(0);
}
