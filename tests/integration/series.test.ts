import { randomUUID } from "node:crypto";
import { sql } from "kysely";
import { beforeAll, describe, expect, it } from "vitest";
import { runRecomputeJob } from "#app/jobs/recompute.server.ts";
import { summarize, shareOfTime } from "#app/lib/series/statistics.ts";
import { loadOverview } from "#app/models/overview.server.ts";
import { exportPages, rangeStatistics } from "#app/models/series.server.ts";
import { db } from "#app/utils/db.server.ts";
import { request, signIn, type Jar } from "../support/app.ts";
import { createPeople, TEST_PASSWORD } from "../support/people.ts";

// The series API, the site page's statistics, the CSV export and the settings page against the
// real PostgreSQL, with readings inserted directly (one synthetic upload row). The data: 60 days of
// 15-minute readings from 1 June 2025 00:00 UTC (British Summer Time at the site, UTC+1), with
//   - specific conductance 500 + 3 × (slot mod 7) µS/cm, one spike of 4,000 at slot 1234;
//   - no readings on days 20 and 21 (slots 1920–2111): a two-day gap;
//   - a formula-looking quality flag on slot 10;
//   - pH on even slots only.

const MIN = 60_000;
const SLOT = 15 * MIN;
const T0 = Date.UTC(2025, 5, 1);
const DAYS = 60;
const GAP = [1920, 2111] as const;
const SPIKE = 1234;
const FLAG = '=HYPERLINK("http://evil.example","click")';

const slotTime = (i: number) => T0 + i * SLOT;
const sc25Of = (i: number) => (i === SPIKE ? 4000 : 500 + 3 * (i % 7));
const tempOf = (i: number) => 12 + (i % 24) / 10;
const inGap = (i: number) => i >= GAP[0] && i <= GAP[1];
const SLOTS = Array.from({ length: DAYS * 96 }, (_, i) => i).filter((i) => !inGap(i));

let jars: Record<"officer" | "technician" | "manager", Jar>;
let siteId: string;
let otherSiteId: string;
let technicianId: string;

async function insertReadings(site: string, logger: string, upload: string, settingsId: number, slots: number[]) {
  const lin = (i: number) => sc25Of(i) * (1 + 0.0191 * (tempOf(i) - 25));
  await sql`
    insert into readings (site_id, logger_id, time, upload_id, row_number, conductivity_us_cm, temperature_c, ph, sc25_us_cm, sc25_uncorrected_us_cm, tds_mg_l, salinity_psu, settings_id, quality_flag)
    select ${site}::uuid, ${logger}::uuid, t.time, ${upload}::uuid, t.row_number, t.cond, t.temp, t.ph, t.sc25, t.sc25, t.tds, 0.25, ${settingsId}, t.flag
    from unnest(${slots.map((i) => new Date(slotTime(i)))}::timestamptz[], ${slots.map((i) => i + 2)}::int[], ${slots.map(lin)}::float8[],
      ${slots.map(tempOf)}::float8[], ${slots.map((i) => (i % 2 === 0 ? 7.5 + (i % 5) / 10 : null))}::float8[], ${slots.map(sc25Of)}::float8[],
      ${slots.map((i) => 0.65 * sc25Of(i))}::float8[], ${slots.map((i) => (i === 10 ? FLAG : null))}::text[])
      as t(time, row_number, cond, temp, ph, sc25, tds, flag)`.execute(db);
}

async function makeSite(code: string, name: string) {
  const site = await db
    .insertInto("site")
    .values({ code, name, kind: "river", latitude: 54.35, longitude: -2.9, time_zone: "Europe/London", compensation_method: "linear", alpha_per_c: 0.0191, reference_c: 25, tds_factor: 0.65 })
    .returning("id")
    .executeTakeFirstOrThrow();
  const logger = await db.insertInto("logger").values({ serial: `${code}-L1`, logging_interval_s: 900 }).returning("id").executeTakeFirstOrThrow();
  await db.insertInto("logger_deployment").values({ logger_id: logger.id, site_id: site.id, deployed_from: new Date(T0 - 86_400_000) }).execute();
  const settings = await db
    .insertInto("derivation_settings")
    .values({ site_id: site.id, compensation_method: "linear", alpha_per_c: 0.0191, reference_c: 25, tds_factor: 0.65 })
    .returning("id")
    .executeTakeFirstOrThrow();
  const uploadId = randomUUID();
  await db
    .insertInto("upload")
    .values({ id: uploadId, object_key: `uploads/${uploadId}/synthetic.csv`, file_name: "synthetic.csv", size_bytes: 0, content_type: "text/csv", sha256: "0".repeat(64), site_id: site.id, logger_id: logger.id, status: "done" })
    .execute();
  return { siteId: site.id, loggerId: logger.id, uploadId, settingsId: settings.id };
}

beforeAll(async () => {
  const people = await createPeople(db);
  technicianId = people.technician.id;
  await sql`select ensure_reading_partitions(${new Date(T0)}::timestamptz, ${new Date(slotTime(DAYS * 96))}::timestamptz)`.execute(db);
  const a = await makeSite("SR1", "Series Reach");
  siteId = a.siteId;
  await insertReadings(a.siteId, a.loggerId, a.uploadId, a.settingsId, SLOTS);
  const b = await makeSite("SR2", "Second Reach");
  otherSiteId = b.siteId;
  await insertReadings(b.siteId, b.loggerId, b.uploadId, b.settingsId, SLOTS.slice(0, 96));
  await db.insertInto("site_assignment").values({ person_id: technicianId, site_id: otherSiteId }).execute();
  // A field-visit correction of −12.5 µS/cm on slot 3 (a negative number must stay a plain number in the export).
  await db.updateTable("readings").set({ correction_us_cm: -12.5 }).where("site_id", "=", siteId).where("time", "=", new Date(slotTime(3))).execute();
  jars = {
    officer: await signIn("officer@test.example", TEST_PASSWORD),
    technician: await signIn("technician@test.example", TEST_PASSWORD),
    manager: await signIn("manager@test.example", TEST_PASSWORD),
  };
});

type Payload = { parameter: string; unit: string; from: string; to: string; bucketSeconds: number; readings: number; points: [number, number | null, number?, number?][] };

async function series(q: Record<string, string>, jar: Jar | null = jars.manager, id = siteId) {
  const res = await request(`/api/sites/${id}/series?${new URLSearchParams(q)}`, { jar: jar ?? undefined });
  return { status: res.status, body: (await res.json()) as Payload & { error?: string } };
}

const iso = (ms: number) => new Date(ms).toISOString();

describe("series API", () => {
  it("answers 401 JSON signed out, 400 for an unknown parameter or a backwards range, 404 for an unknown site", async () => {
    const q = { parameter: "sc25", from: iso(T0), to: iso(T0 + 86_400_000) };
    const out = await series(q, null);
    expect(out.status).toBe(401);
    expect(out.body.error).toMatch(/sign in/i);
    expect((await series({ ...q, parameter: "sc25_us_cm; drop table readings" })).status).toBe(400);
    expect((await series({ ...q, from: q.to, to: q.from })).status).toBe(400);
    expect((await series({ ...q, from: "yesterday" })).status).toBe(400);
    expect((await series(q, jars.manager, randomUUID())).status).toBe(404);
    expect((await series(q, jars.manager, "not-a-uuid")).status).toBe(404);
  });

  it("returns the readings themselves for a short range, in UTC epoch milliseconds", async () => {
    // Day 3 (slots 288–383): 96 readings, none missing.
    const from = slotTime(288);
    const { status, body } = await series({ parameter: "sc25", from: iso(from), to: iso(from + 86_400_000) });
    expect(status).toBe(200);
    expect(body.unit).toBe("µS/cm");
    expect(body.bucketSeconds).toBe(0);
    expect(body.points).toHaveLength(96);
    expect(body.points[0]).toEqual([slotTime(288), sc25Of(288)]);
    expect(body.points[95]).toEqual([slotTime(383), sc25Of(383)]);
    expect(body.from).toBe(iso(from));
  });

  it("reads a zoned `from` as the same instant as its UTC spelling", async () => {
    // 02:00 at UTC+02:00 is 00:00 UTC: both ask for the same day.
    const from = slotTime(288);
    const local = new Date(from + 2 * 3600_000).toISOString().replace("Z", "+02:00").replace(".000", "");
    const a = await series({ parameter: "temperature", from: iso(from), to: iso(from + 86_400_000) });
    const b = await series({ parameter: "temperature", from: local, to: iso(from + 86_400_000) });
    expect(b.status).toBe(200);
    expect(b.body.from).toBe(iso(from));
    expect(b.body.points).toEqual(a.body.points);
  });

  it("returns the gap as a null between the readings on either side", async () => {
    // Days 19–22: readings on day 19 and day 22 only; the step over the gap is 2 days + 15 min,
    // far beyond 2 × the 15-minute interval.
    const { body } = await series({ parameter: "sc25", from: iso(slotTime(19 * 96)), to: iso(slotTime(23 * 96)) });
    expect(body.bucketSeconds).toBe(0);
    const nulls = body.points.filter((p) => p[1] === null);
    expect(nulls).toHaveLength(1);
    const i = body.points.findIndex((p) => p[1] === null);
    expect(body.points[i - 1][0]).toBe(slotTime(GAP[0] - 1));
    expect(body.points[i + 1][0]).toBe(slotTime(GAP[1] + 1));
    // pH exists on even slots only (30-minute steps): within 2 × 15 min, so no extra gaps there.
    const ph = await series({ parameter: "ph", from: iso(slotTime(0)), to: iso(slotTime(96)) });
    expect(ph.body.points).toHaveLength(48);
    expect(ph.body.points.every((p) => p[1] !== null)).toBe(true);
  });

  it("keeps a long range within the point budget, keeps the spike and shows the gap", async () => {
    const q = { parameter: "sc25", from: iso(T0), to: iso(slotTime(DAYS * 96)) };
    const { body } = await series({ ...q, points: "200" });
    expect(body.bucketSeconds).toBeGreaterThan(0);
    expect(body.points.length).toBeLessThanOrEqual(200);
    expect(body.readings).toBe(SLOTS.length);
    const values = body.points.map((p) => p[1]).filter((v): v is number => v !== null);
    // The one-reading spike survives at its height and time; the lowest value (500) too.
    expect(Math.max(...values)).toBe(4000);
    expect(body.points.find((p) => p[1] === 4000)?.[0]).toBe(slotTime(SPIKE));
    expect(Math.min(...values)).toBe(500);
    // 100 buckets over 60 days: 1-day buckets (12 h would need 120), aligned to UTC midnight, so the
    // two empty days are two empty buckets → exactly one null, at the start of day 20.
    expect(body.bucketSeconds).toBe(86_400);
    expect(body.points.filter((p) => p[1] === null)).toEqual([[slotTime(GAP[0]), null]]);
    // Asking for more than the limit gets at most 2,000 points.
    const big = await series({ ...q, points: "100000" });
    expect(big.status).toBe(200);
    expect(big.body.points.length).toBeLessThanOrEqual(2000);
    expect(big.body.bucketSeconds).toBeGreaterThan(0);
  });

  it("serves every role", async () => {
    const q = { parameter: "temperature", from: iso(T0), to: iso(T0 + 3600_000) };
    for (const jar of Object.values(jars)) expect((await series(q, jar)).status).toBe(200);
  });
});

describe("statistics of a range", () => {
  it("agree with the pure helpers over the same readings (percentiles, time beyond a threshold, completeness)", async () => {
    // Days 18–23 span the gap. Expected values: the readings fetched here and summarised by
    // summarize()/shareOfTime() in memory, independent of the SQL aggregate.
    const fromMs = slotTime(18 * 96);
    const toMs = slotTime(24 * 96);
    const rows = await db
      .selectFrom("readings")
      .select(["time", "sc25_us_cm"])
      .where("site_id", "=", siteId)
      .where("time", ">=", new Date(fromMs))
      .where("time", "<", new Date(toMs))
      .orderBy("time")
      .execute();
    const samples = rows.map((r) => ({ t: r.time.getTime(), v: r.sc25_us_cm! }));
    const expected = summarize(samples.map((s) => s.v));
    const share = shareOfTime(samples, (v) => v > 510, 2 * 900_000, 900_000);
    const stats = await rangeStatistics({
      siteId,
      fromMs,
      toMs,
      thresholds: [{ parameter: "sc25", bound: "upper", value: 510 }],
      deployments: [{ fromMs: T0 - 86_400_000, untilMs: null, intervalS: 900, serial: "SR1-L1" }],
    });
    const sc = stats.parameters.find((p) => p.parameter === "sc25")!;
    expect(sc.count).toBe(expected.count);
    expect(sc.min).toBe(expected.min);
    expect(sc.max).toBe(expected.max);
    expect(sc.mean).toBeCloseTo(expected.mean!, 9);
    expect(sc.median).toBeCloseTo(expected.median!, 9);
    expect(sc.p05).toBeCloseTo(expected.p05!, 9);
    expect(sc.p95).toBeCloseTo(expected.p95!, 9);
    expect(sc.beyond[0].share).toBeCloseTo(share!, 9);
    // 6 days expected at 96 a day = 576; days 20 and 21 missing → 384 received = 2/3.
    expect(stats.readings).toBe(384);
    expect(stats.expected).toBe(576);
    expect(stats.completeness).toBeCloseTo(2 / 3, 12);
  });
});

describe("site page", () => {
  it("reads a custom range at the site's clock and says which compensation produced the values", async () => {
    // 10 June 00:00 to 11 June 00:00 in London (BST) = 9 June 23:00 to 10 June 23:00 UTC: 96 readings.
    const res = await request("/sites/SR1?range=custom&from=2025-06-10T00:00&to=2025-06-11T00:00", { jar: jars.technician });
    expect(res.status).toBe(200);
    const html = await res.text();
    expect(html).toContain("96 readings");
    expect(html).toContain(`from=${encodeURIComponent("2025-06-09T23:00:00.000Z")}`);
    expect(html).toContain("linear compensation, α = 0.0191/°C, to 25 °C");
    expect(html).toContain("screening estimates");
    expect(html).toContain("BST");
  });

  it("answers 404 for an unknown site code", async () => {
    expect((await request("/sites/NOPE9", { jar: jars.manager })).status).toBe(404);
  });
});

describe("CSV export", () => {
  it("names units and the compensation method, streams every reading, neutralises a formula", async () => {
    // Days 0–1: 192 readings, slot 10 carries the formula-looking flag.
    const res = await request(`/api/sites/${siteId}/export.csv?from=${iso(T0)}&to=${iso(slotTime(192))}`, { jar: jars.manager });
    expect(res.status).toBe(200);
    expect(res.headers.get("Content-Type")).toMatch(/^text\/csv/);
    expect(res.headers.get("Content-Disposition")).toMatch(/attachment; filename="SR1-2025-06-01-to-2025-06-03\.csv"/);
    const text = (await res.text()).replace(/^\uFEFF/, "");
    const lines = text.split("\r\n").filter(Boolean);
    const preamble = lines.filter((l) => l.startsWith("#"));
    expect(preamble.join("\n")).toContain("µS/cm");
    expect(preamble.join("\n")).toContain("linear compensation, α = 0.0191/°C, to 25 °C");
    const header = lines[preamble.length].split(",");
    expect(header.slice(0, 4)).toEqual(["time_utc", "time_local", "logger", "conductivity_at_temperature_us_cm"]);
    expect(header).toContain("quality_flag");
    const data = lines.slice(preamble.length + 1);
    expect(data).toHaveLength(192);
    // Slot 10 = 02:30 UTC = 03:30 BST; the flag starts with "=", so it gets a leading apostrophe and,
    // holding quotes and a comma, is quoted with inner quotes doubled (RFC 4180).
    const flagged = data.find((l) => l.startsWith("2025-06-01T02:30:00Z"))!;
    expect(flagged).toContain("2025-06-01T03:30:00");
    expect(flagged.endsWith(`"'=HYPERLINK(""http://evil.example"",""click"")"`)).toBe(true);
    // A plain row: specific conductance of slot 0 is 500.
    const first = data[0].split(",");
    expect(first[header.indexOf("specific_conductance_us_cm")]).toBe("500");
    expect(first[header.indexOf("logger")]).toBe("SR1-L1");
    expect(first[header.indexOf("time_local")]).toBe("2025-06-01T01:00:00");
    expect(first[header.indexOf("correction_us_cm")]).toBe("");
    expect(first).toHaveLength(header.length);
    expect(data[3].split(",")[header.indexOf("correction_us_cm")]).toBe("-12.5");
  });

  it("pages through the time windows without losing or repeating a reading", async () => {
    // Pages of about 1,000 readings at 15 minutes: windows of 1,000 × 15 min ≈ 10.4 days.
    const seen: string[] = [];
    let pages = 0;
    for await (const page of exportPages(siteId, T0, slotTime(DAYS * 96), "Europe/London", { loggingIntervalS: 900, rowsPerPage: 1000 })) {
      pages++;
      expect(page.length).toBeLessThanOrEqual(1000);
      seen.push(...page.map((r) => r.times.split(",")[0]));
    }
    expect(pages).toBe(6);
    expect(seen).toHaveLength(SLOTS.length);
    expect(new Set(seen).size).toBe(SLOTS.length);
    expect([...seen].sort()).toEqual(seen);
    expect(seen[0]).toBe("2025-06-01T00:00:00Z");
  });

  it("is refused signed out (401) and for a missing range (400)", async () => {
    expect((await request(`/api/sites/${siteId}/export.csv?from=${iso(T0)}&to=${iso(T0 + 1)}`)).status).toBe(401);
    expect((await request(`/api/sites/${siteId}/export.csv`, { jar: jars.manager })).status).toBe(400);
  });
});

describe("site settings", () => {
  const form = (over: Record<string, string> = {}) => ({
    intent: "save",
    compensationMethod: "linear",
    alphaPercentPerC: "1.91",
    referenceC: "25",
    tdsFactor: "0.65",
    sc25Upper: "",
    ...over,
  });

  async function recomputeJobs() {
    const { rows } = await sql<{ payload: { siteId: string; settingsId: number }; key: string | null }>`
      select j.payload, j.key from graphile_worker._private_jobs j join graphile_worker._private_tasks t on t.id = j.task_id
      where t.identifier = 'recompute-site'`.execute(db);
    return rows;
  }

  it("saves thresholds alone without a recompute, and refuses a bad TDS factor", async () => {
    const res = await request("/sites/SR1/settings", { jar: jars.officer, form: form({ sc25Upper: "1000", sc25Lower: "450" }) });
    expect(res.status).toBe(302);
    expect(res.headers.get("Location")).toBe("/sites/SR1/settings?saved=saved");
    const th = await db.selectFrom("site_threshold").select(["parameter", "bound", "value"]).where("site_id", "=", siteId).orderBy("bound").execute();
    expect(th).toEqual([
      { parameter: "sc25", bound: "lower", value: 450 },
      { parameter: "sc25", bound: "upper", value: 1000 },
    ]);
    expect(await recomputeJobs()).toEqual([]);
    const bad = await request("/sites/SR1/settings", { jar: jars.officer, form: form({ tdsFactor: "1.2" }) });
    expect(bad.status).toBe(400);
    expect((await db.selectFrom("site").select("tds_factor").where("id", "=", siteId).executeTakeFirstOrThrow()).tds_factor).toBe(0.65);
  });

  it("a derivation change snapshots the settings, enqueues one recompute in the same transaction and is audited", async () => {
    const before = await db.selectFrom("site").select("settings_version").where("id", "=", siteId).executeTakeFirstOrThrow();
    const res = await request("/sites/SR1/settings", { jar: jars.officer, form: form({ tdsFactor: "0.7", sc25Upper: "1000", sc25Lower: "450" }) });
    expect(res.status).toBe(302);
    expect(res.headers.get("Location")).toBe("/sites/SR1/settings?saved=recompute");
    const site = await db.selectFrom("site").select(["tds_factor", "settings_version"]).where("id", "=", siteId).executeTakeFirstOrThrow();
    expect(site).toEqual({ tds_factor: 0.7, settings_version: before.settings_version + 1 });
    const snapshot = await db.selectFrom("derivation_settings").selectAll().where("site_id", "=", siteId).orderBy("id", "desc").executeTakeFirstOrThrow();
    expect(snapshot.tds_factor).toBe(0.7);
    const jobs = await recomputeJobs();
    expect(jobs).toEqual([{ payload: { siteId, settingsId: snapshot.id }, key: `recompute:${siteId}` }]);
    const audit = await db.selectFrom("audit_event").selectAll().where("entity", "=", "site").where("entity_id", "=", siteId).orderBy("at", "desc").executeTakeFirstOrThrow();
    expect(audit.after).toMatchObject({ tds_factor: 0.7 });
    expect(audit.before).toMatchObject({ tds_factor: 0.65 });

    // The job (run here as the worker would) re-derives TDS with the new factor; raw values stay.
    const raw = await db.selectFrom("readings").select(["conductivity_us_cm", "temperature_c"]).where("site_id", "=", siteId).where("time", "=", new Date(slotTime(5))).executeTakeFirstOrThrow();
    await runRecomputeJob(siteId, snapshot.id);
    const after = await db.selectFrom("readings").select(["conductivity_us_cm", "temperature_c", "sc25_us_cm", "tds_mg_l", "settings_id"]).where("site_id", "=", siteId).where("time", "=", new Date(slotTime(5))).executeTakeFirstOrThrow();
    expect(after.conductivity_us_cm).toBe(raw.conductivity_us_cm);
    expect(after.temperature_c).toBe(raw.temperature_c);
    expect(after.settings_id).toBe(snapshot.id);
    expect(after.tds_mg_l!).toBeCloseTo(0.7 * after.sc25_us_cm!, 9);
    // The stored raw value was made with the same linear law, so specific conductance comes back as 500 + 3 × (5 mod 7) = 515.
    expect(after.sc25_us_cm!).toBeCloseTo(515, 6);
  });

  it("is closed to technicians and managers", async () => {
    for (const jar of [jars.technician, jars.manager]) {
      expect((await request("/sites/SR1/settings", { jar })).status).toBe(403);
      expect((await request("/sites/SR1/settings", { jar, form: form() })).status).toBe(403);
    }
  });
});

describe("overview", () => {
  it("lists a technician's assigned site first and compares the latest reading with the thresholds", async () => {
    // "Now" is just after the last slot: the 7 days before it are slots 5088–5759.
    const sites = await loadOverview({ id: technicianId, role: "technician" }, slotTime(DAYS * 96));
    const { filterAndSortSites } = await import("#app/models/overview.server.ts");
    const ordered = filterAndSortSites(sites, { sort: "name" }, true);
    expect(ordered.map((s) => s.code)).toEqual(["SR2", "SR1"]);
    const sr1 = sites.find((s) => s.code === "SR1")!;
    // Latest reading: slot 5759 → 500 + 3 × (5759 mod 7 = 5) = 515, within 450–1000 (set above).
    expect(sr1.latest?.sc25).toBeCloseTo(515, 6);
    expect(sr1.status).toBe("in-range");
    // Last 7 days of data: 672 readings expected at 15 minutes, all present.
    expect(sr1.window.expected).toBe(672);
    expect(sr1.window.received).toBe(672);
    // No alert rule covers SR1 here, so it has no open events (counted from the exceedance table).
    expect(sr1.openExceedances).toBe(0);
    // SR2's readings ended on day 1: weeks before "now" here.
    expect(sites.find((s) => s.code === "SR2")!.status).toBe("no-recent-data");
  });

  it("filters by status and kind from the URL and ignores unknown values", async () => {
    // Today both sites' readings (2025) are months old: both have no recent data, none is in range.
    const cards = async (q: string) => {
      const res = await request(`/?${q}`, { jar: jars.manager });
      expect(res.status).toBe(200);
      return ((await res.text()).match(/data-testid="site-card"/g) ?? []).length;
    };
    expect(await cards("status=no-recent-data&kind=river&sort=bogus")).toBe(2);
    expect(await cards("status=in-range")).toBe(0);
    expect(await cards("kind=borehole")).toBe(0);
    expect(await cards("q=second")).toBe(1);
    expect(await cards("status=nonsense")).toBe(2);
  });
});
