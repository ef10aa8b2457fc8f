// Loads the demo year through the real import path: each monthly logger file is stored in S3 as a
// technician's upload would be, then ingested by the same code as the worker runs.
import { createHash, randomUUID } from "node:crypto";
import { sql, type Kysely } from "kysely";
import type { DB } from "../schema.ts";
import { DEMO_PEOPLE } from "./scenario.ts";
import { DEMO_PROFILES, demoEvents, demoFiles, demoLoggerFile, layoutOf, type DemoLayout } from "./readings.ts";
import { seedDemoVisits } from "./visits.ts";

export type DemoReadingsOptions = { days: number; endMs?: number; log?: (line: string) => void };

/** Creates the demo import profiles (idempotent, matched by name) and returns their ids by layout. */
export async function seedDemoProfiles(db: Kysely<DB>) {
  const { headerSignature } = await import("#app/lib/import/sniff.ts");
  const ids = {} as Record<DemoLayout, string>;
  for (const [layout, { name, profile }] of Object.entries(DEMO_PROFILES) as [DemoLayout, (typeof DEMO_PROFILES)[DemoLayout]][]) {
    const signature = headerSignature(profile.columns.map((c) => c.header));
    const row = await db
      .insertInto("import_profile")
      .values({ name, header_signature: signature, settings: JSON.stringify(profile) })
      .onConflict((oc) => oc.column("name").doUpdateSet({ header_signature: signature, settings: JSON.stringify(profile) }))
      .returning("id")
      .executeTakeFirstOrThrow();
    ids[layout] = row.id;
  }
  return ids;
}

/**
 * The demo year's readings. Skipped when the demo sites already hold uploads (the seed is
 * idempotent). Needs the app's environment (DATABASE_URL, S3) because it runs the ingest code.
 */
export async function seedDemoReadings(db: Kysely<DB>, options: DemoReadingsOptions) {
  const log = options.log ?? (() => {});
  const endMs = options.endMs ?? Date.UTC(new Date().getUTCFullYear(), new Date().getUTCMonth(), new Date().getUTCDate());
  const profiles = await seedDemoProfiles(db);
  const existing = await db.selectFrom("upload").select((eb) => eb.fn.countAll<number>().as("n")).executeTakeFirstOrThrow();
  if (Number(existing.n) > 0) {
    log("demo readings already present: skipped");
    await seedDemoVisits(db, demoEvents(endMs), { log });
    // A database seeded before the weekly summaries existed gets them now (once).
    const cached = await db.selectFrom("weekly_summary").select("site_id").limit(1).executeTakeFirst();
    if (!cached) await rebuildDemoSummaries(log);
    return { files: 0, rows: 0 };
  }
  // Loaded lazily: these read the app's environment, which callers set before seeding.
  const { putObject, ensureBucket } = await import("#app/utils/storage.server.ts");
  const { runIngestJob } = await import("#app/jobs/ingest.server.ts");
  await ensureBucket();

  const { files, events } = demoFiles(endMs, options.days);
  const sites = new Map((await db.selectFrom("site").select(["id", "code"]).execute()).map((s) => [s.code, s.id]));
  const loggers = new Map((await db.selectFrom("logger").select(["id", "serial"]).execute()).map((l) => [l.serial, l.id]));
  const technician = await db
    .selectFrom("person")
    .select("id")
    .where(sql`lower(email)`, "=", DEMO_PEOPLE.find((p) => p.role === "technician")!.email)
    .executeTakeFirst();

  let rows = 0;
  for (const f of files) {
    const { text, rows: n } = demoLoggerFile(f.siteCode, f.serial, f.fromMs, f.toMs, events);
    if (n === 0) continue;
    const body = Buffer.from(text, "utf8");
    const id = randomUUID();
    const key = `uploads/${id}/${f.fileName}`;
    await putObject(key, body, "text/csv", body.length);
    await db
      .insertInto("upload")
      .values({
        id,
        object_key: key,
        file_name: f.fileName,
        size_bytes: body.length,
        content_type: "text/csv",
        sha256: createHash("sha256").update(body).digest("hex"),
        site_id: sites.get(f.siteCode)!,
        logger_id: loggers.get(f.serial)!,
        profile_id: profiles[layoutOf(f.serial)],
        uploaded_by: technician?.id ?? null,
        status: "queued",
        created_at: new Date(Math.min(f.toMs + 2 * 3_600_000, Date.now())),
        confirmed_at: new Date(Math.min(f.toMs + 2 * 3_600_000, Date.now())),
      })
      .execute();
    await runIngestJob(id);
    rows += n;
  }
  log(`demo readings: ${files.length} logger files, ${rows.toLocaleString("en")} readings`);
  // The field visits that go with these readings, their proposed corrections and the approvals.
  await seedDemoVisits(db, events, { log });
  // The alert rules over each site's whole record, as the worker would after each file: events and
  // in-app notifications (no e-mail for this back-fill).
  const { detectOverSiteHistory } = await import("#app/jobs/detect-exceedances.server.ts");
  let found = 0;
  for (const siteId of sites.values()) found += (await detectOverSiteHistory(siteId, { sendEmail: false })).inserted;
  log(`demo exceedances: ${found} events found by the alert rules`);
  // The weekly summaries of the whole demo record (after detection, so they count its events).
  await rebuildDemoSummaries(log);
  return { files: files.length, rows, events };
}

async function rebuildDemoSummaries(log: (line: string) => void) {
  const { rebuildAllSummaries } = await import("#app/models/weekly-summary.server.ts");
  const r = await rebuildAllSummaries();
  log(`demo weekly summaries: ${r.weeks} site-weeks in ${r.seconds.toFixed(1)} s`);
}
