import { randomUUID } from "node:crypto";
import { sql } from "kysely";
import { beforeAll, describe, expect, it, vi } from "vitest";
import { runOnce } from "graphile-worker";

// A unique organisation name per run, so this file's digest mails are told apart in the shared SMTP
// fake (set before the app's environment is first read).
const ORG = vi.hoisted(() => {
  const name = `Marrowby Test Cooperative ${Math.random().toString(36).slice(2, 8)}`;
  process.env.ORG_NAME = name;
  return name;
});

import { db } from "#app/utils/db.server.ts";
import { getEnv } from "#app/utils/env.server.ts";
import { READINGS_CHANGED_STEPS } from "#app/jobs/readings-changed.server.ts";
import { runSummariseWeeksJob, WEEKLY_SUMMARIES_STEP } from "#app/jobs/weekly-summaries.server.ts";
import { rebuildAllSummaries, summariseWeeks } from "#app/models/weekly-summary.server.ts";
import { loadWeekTable } from "#app/models/summary-read.server.ts";
import { sendWeeklyDigest } from "#app/models/weekly-digest.server.ts";
import { approvePeriod } from "#app/models/record-period.server.ts";
import { reviewExceedance } from "#app/models/exceedance.server.ts";
import { listMessages, waitForMessage } from "#fakes/smtp/client.ts";
import { weekStartAt } from "#app/lib/series/weeks.ts";
import { request, signIn, type Jar } from "../support/app.ts";
import { createPeople, TEST_PASSWORD } from "../support/people.ts";

// Two weeks of readings written straight into `readings` (with a synthetic upload row), at a site in
// Europe/London; every expected figure is worked out by hand in the comments beside it.
//
// Week A, Mon 3 – Sun 9 March 2025 (GMT, so local = UTC): a reading every 15 minutes, i = 0…671,
// specific conductance 400 + (i mod 100) µS/cm. 672 = 6·100 + 72, so 400…471 occur 7 times each
// (sorted positions 0…503) and 472…499 six times each (504…671).
// Week B, Mon 10 – Fri 14 March: i = 0…479 (Monday to Friday only), 500 + 10·(i mod 5): 500, 510,
// 520, 530, 540 ninety-six times each; plus one reading flagged "spike" (9999 µS/cm) on Sunday noon.
// TDS = 0.65 × SC in both weeks; temperature 10 °C in week A, 12 °C in week B.
// The logger logs every 900 s and is deployed from 1 January 2025: 168 h × 4 = 672 readings expected a week.

const SITE = "0d4c6f7e-3b1a-4e59-9a1c-5e2f0000a001";
const DST_SITE = "0d4c6f7e-3b1a-4e59-9a1c-5e2f0000a002";
const LOGGER = "0d4c6f7e-3b1a-4e59-9a1c-5e2f0000a003";
const DST_LOGGER = "0d4c6f7e-3b1a-4e59-9a1c-5e2f0000a004";
const SITE_NAME = `Tollmere <Weir> & "Gauge"`;
const Q = 900_000;
const WEEK_A = Date.UTC(2025, 2, 3);
const WEEK_B = Date.UTC(2025, 2, 10);

async function insertReadings(siteId: string, loggerId: string, rows: { t: number; sc: number; temp: number; flag?: string | null }[]) {
  const upload = await db
    .insertInto("upload")
    .values({
      object_key: `uploads/${randomUUID()}/synthetic.csv`,
      file_name: "synthetic.csv",
      size_bytes: 0,
      content_type: "text/csv",
      sha256: "0".repeat(64),
      site_id: siteId,
      logger_id: loggerId,
      status: "done",
    })
    .returning("id")
    .executeTakeFirstOrThrow();
  const min = Math.min(...rows.map((r) => r.t));
  const max = Math.max(...rows.map((r) => r.t));
  await sql`select ensure_reading_partitions(${new Date(min)}, ${new Date(max)})`.execute(db);
  await sql`
    insert into readings (site_id, logger_id, time, upload_id, row_number, conductivity_us_cm, temperature_c, sc25_us_cm, sc25_uncorrected_us_cm, tds_mg_l, quality_flag)
    select ${siteId}::uuid, ${loggerId}::uuid, t.time, ${upload.id}::uuid, t.n::int, t.sc, t.temp, t.sc, t.sc, t.sc * 0.65, t.flag
    from unnest(${rows.map((r) => new Date(r.t).toISOString())}::timestamptz[], ${rows.map((r) => r.sc)}::float8[], ${rows.map((r) => r.temp)}::float8[], ${rows.map((r) => r.flag ?? null)}::text[])
      with ordinality as t(time, sc, temp, flag, n)`.execute(db);
}

async function row(siteId: string, week: string) {
  return db
    .selectFrom("weekly_summary")
    .selectAll()
    .select(sql<string>`week_start::text`.as("week"))
    .where("site_id", "=", siteId)
    .where("week_start", "=", week)
    .executeTakeFirst();
}

let people: Awaited<ReturnType<typeof createPeople>>;
let hasExceedanceTable = false;

beforeAll(async () => {
  people = await createPeople(db);
  await db.updateTable("person").set({ weekly_digest: true }).where("email", "=", "officer@test.example").execute();
  await db
    .insertInto("site")
    .values([
      { id: SITE, code: "TW1", name: SITE_NAME, kind: "river", latitude: 54.3, longitude: -2.9, time_zone: "Europe/London" },
      { id: DST_SITE, code: "DS2", name: "=SUM(A1) Saltings", kind: "tidal", latitude: 54.3, longitude: -2.8, time_zone: "Europe/London" },
    ])
    .execute();
  await db
    .insertInto("logger")
    .values([
      { id: LOGGER, serial: "TW-900", logging_interval_s: 900 },
      { id: DST_LOGGER, serial: "DS-900", logging_interval_s: 900 },
    ])
    .execute();
  await db
    .insertInto("logger_deployment")
    .values([
      { logger_id: LOGGER, site_id: SITE, deployed_from: new Date("2025-01-01T00:00:00Z"), deployed_until: null },
      { logger_id: DST_LOGGER, site_id: DST_SITE, deployed_from: new Date("2025-01-01T00:00:00Z"), deployed_until: null },
    ])
    .execute();
  await db.insertInto("site_threshold").values({ site_id: SITE, parameter: "sc25", bound: "upper", value: 520 }).execute();

  const a = Array.from({ length: 672 }, (_, i) => ({ t: WEEK_A + i * Q, sc: 400 + (i % 100), temp: 10 }));
  const b: { t: number; sc: number; temp: number; flag?: string | null }[] = Array.from({ length: 480 }, (_, i) => ({ t: WEEK_B + i * Q, sc: 500 + 10 * (i % 5), temp: 12 }));
  b.push({ t: Date.UTC(2025, 2, 16, 12), sc: 9999, temp: 12, flag: "spike" });
  await insertReadings(SITE, LOGGER, [...a, ...b]);

  // Periods of record (0007): week A poor and not approved, week B fair and approved.
  await db
    .insertInto("record_period")
    .values([
      { site_id: SITE, logger_id: LOGGER, period_start: new Date("2025-02-20T00:00:00Z"), period_end: new Date("2025-03-08T10:00:00Z"), grade: "poor" },
      {
        site_id: SITE,
        logger_id: LOGGER,
        period_start: new Date("2025-03-08T10:00:00Z"),
        period_end: new Date("2025-03-20T00:00:00Z"),
        grade: "fair",
        approved_at: new Date("2025-03-21T09:00:00Z"),
      },
    ])
    .execute();

  // Exceedance events (0006), when that table is in this build of the schema: one in week B.
  const t = await sql<{ t: string | null }>`select to_regclass('exceedance')::text as t`.execute(db);
  hasExceedanceTable = t.rows[0].t !== null;
  if (hasExceedanceTable) {
    const rule = await sql<{ id: string }>`
      insert into alert_rule (name, parameter, condition, params) values ('Test upper SC', 'sc25', 'above', '{"level": 520}'::jsonb) returning id`.execute(db);
    await sql`
      insert into exceedance (rule_id, site_id, parameter, condition, started_at, last_reading_at, peak_value, peak_at, outcome)
      values (${rule.rows[0].id}, ${SITE}, 'sc25', 'above', '2025-03-11T08:00:00Z', '2025-03-11T09:00:00Z', 540, '2025-03-11T08:30:00Z', 'water-quality'),
             (${rule.rows[0].id}, ${SITE}, 'sc25', 'above', '2025-03-12T08:00:00Z', '2025-03-12T09:00:00Z', 540, '2025-03-12T08:30:00Z', null)`.execute(db);
  }
  await summariseWeeks(SITE, "2025-03-03", "2025-03-10");
});

describe("weekly summaries from two weeks of readings", () => {
  it("week A: statistics, completeness and daily medians as worked by hand", async () => {
    const r = await row(SITE, "2025-03-03");
    expect(r).toBeDefined();
    expect(r!.iso_year).toBe(2025);
    expect(r!.iso_week).toBe(10); // 3 March 2025 is the Monday of ISO week 10 (calendar)
    expect(r!.readings).toBe(672);
    expect(r!.readings_expected).toBeCloseTo(672, 9); // 168 h × 4 an hour
    expect(r!.completeness).toBeCloseTo(1, 9);
    expect(r!.sc25_count).toBe(672);
    expect(r!.sc25_min).toBe(400);
    expect(r!.sc25_max).toBe(499);
    // Mean: (7·Σ400…471 + 6·Σ472…499)/672 = (7·31,356 + 6·13,594)/672 = 301,056/672 = 448.
    expect(r!.sc25_mean).toBeCloseTo(448, 9);
    // Median (Hyndman & Fan 7): h = 671·0.5 = 335.5 → sorted[335] = 400 + ⌊335/7⌋ = 447, sorted[336] = 448 → 447.5.
    expect(r!.sc25_median).toBeCloseTo(447.5, 9);
    // 95th percentile: h = 671·0.95 = 637.45 → positions 637, 638 are in the six-each run from 504:
    // 472 + ⌊133/6⌋ = 494 and 472 + ⌊134/6⌋ = 494 → 494.
    expect(r!.sc25_p95).toBeCloseTo(494, 9);
    expect(r!.tds_median).toBeCloseTo(447.5 * 0.65, 9);
    expect(r!.temperature_mean).toBeCloseTo(10, 9);
    // Every day holds 96 readings whose sorted 48th and 49th values are 447 and 448 (worked per day).
    expect(r!.daily_sc25_medians).toEqual([447.5, 447.5, 447.5, 447.5, 447.5, 447.5, 447.5]);
    // No value above 520: no time above the threshold.
    expect(r!.sc25_above_share).toBe(0);
    expect(r!.grade).toBe("poor");
    expect(r!.approved).toBe(false);
  });

  it("week B: a short week, a flagged reading left out, time above the threshold", async () => {
    const r = await row(SITE, "2025-03-10");
    expect(r).toBeDefined();
    // 480 readings Monday to Friday and the flagged one: 481 received of 672 expected.
    expect(r!.readings).toBe(481);
    expect(r!.readings_excluded).toBe(1);
    expect(r!.completeness).toBeCloseTo(481 / 672, 9);
    expect(r!.sc25_count).toBe(480);
    expect(r!.sc25_min).toBe(500);
    expect(r!.sc25_max).toBe(540); // the flagged 9999 is not a statistic
    expect(r!.sc25_mean).toBeCloseTo(520, 9);
    // h = 479·0.5 = 239.5 → positions 239, 240 lie in the 520 run (192…287) → 520.
    expect(r!.sc25_median).toBeCloseTo(520, 9);
    // h = 479·0.95 = 455.05 → positions 455, 456 lie in the 540 run (384…479) → 540.
    expect(r!.sc25_p95).toBeCloseTo(540, 9);
    expect(r!.temperature_mean).toBeCloseTo(12, 9);
    // 530 and 540 are above 520: 192 of 480 readings, each standing for 900 s (the last one, before
    // the weekend gap, for one logging interval) → 192/480 = 0.4 of the time.
    expect(r!.sc25_above_share).toBeCloseTo(0.4, 9);
    expect(r!.thresholds).toEqual([{ parameter: "sc25", bound: "upper", value: 520, share: expect.closeTo(0.4, 9) }]);
    // Daily medians: each weekday's 96 readings sort to 520 at positions 47 and 48; Saturday has no
    // reading and Sunday only the flagged one.
    expect(r!.daily_sc25_medians).toEqual([520, 520, 520, 520, 520, null, null]);
    expect(r!.grade).toBe("fair");
    expect(r!.approved).toBe(true);
    if (hasExceedanceTable) {
      expect(r!.events_total).toBe(2);
      expect(r!.events).toEqual({ "water-quality": 1, unclassified: 1 });
    }
  });

  it("the week table gives changes from the previous week and a status", async () => {
    const t = await loadWeekTable("2025-W11");
    expect(t.week).toBe("2025-03-10");
    const tw = t.rows.find((x) => x.code === "TW1")!;
    expect(tw.figures?.sc25.median).toBeCloseTo(520, 9);
    // 520 − 447.5 = +72.5 µS/cm; 72.5/447.5 = 16.20 %.
    expect(tw.changeFromPrevious.sc25Median?.absolute).toBeCloseTo(72.5, 9);
    expect(tw.changeFromPrevious.sc25Median?.percent).toBeCloseTo(16.2011, 3);
    expect(tw.changeFromLastYear.sc25Median).toBeNull(); // no data in 2024
    expect(tw.status).toBe("act"); // 40 % of the time above the threshold
    expect(tw.reasons.join(" ")).toMatch(/above its threshold 40 % of the time/);
    expect(tw.reasons.join(" ")).toMatch(/Only 72 % of expected readings/);
    const ds = t.rows.find((x) => x.code === "DS2")!;
    expect(ds.figures).toBeNull();
  });
});

describe("clock-change weeks (Europe/London)", () => {
  it("the spring week lasts 167 hours and the autumn week 169", async () => {
    // Spring: clocks go forward at 01:00 UTC on Sunday 30 March 2025, so the local week of Monday 24
    // March runs from 2025-03-24T00:00Z to 2025-03-30T23:00Z: 167 h, 668 quarter-hours.
    // Autumn: clocks go back at 01:00 UTC on Sunday 26 October 2025, so the week of Monday 20 October
    // runs from 2025-10-19T23:00Z to 2025-10-27T00:00Z: 169 h, 676 quarter-hours.
    const spring = Array.from({ length: 668 + 4 }, (_, i) => ({ t: Date.UTC(2025, 2, 24) + i * Q, sc: 300, temp: 8 }));
    const autumn = Array.from({ length: 676 + 4 }, (_, i) => ({ t: Date.UTC(2025, 9, 19, 23) + i * Q, sc: 310, temp: 11 }));
    await insertReadings(DST_SITE, DST_LOGGER, [...spring, ...autumn]);
    await summariseWeeks(DST_SITE, "2025-03-24", "2025-10-27");
    const s = await row(DST_SITE, "2025-03-24");
    expect(s!.starts_at.toISOString()).toBe("2025-03-24T00:00:00.000Z");
    expect(s!.ends_at.toISOString()).toBe("2025-03-30T23:00:00.000Z");
    expect(s!.readings).toBe(668);
    expect(s!.readings_expected).toBeCloseTo(668, 9);
    expect(s!.completeness).toBeCloseTo(1, 9);
    // The four readings after 23:00Z on the Sunday belong to the next local week (Monday 00:00 BST on).
    expect((await row(DST_SITE, "2025-03-31"))!.readings).toBe(4);
    const a = await row(DST_SITE, "2025-10-20");
    expect(a!.starts_at.toISOString()).toBe("2025-10-19T23:00:00.000Z");
    expect(a!.ends_at.toISOString()).toBe("2025-10-27T00:00:00.000Z");
    expect(a!.readings).toBe(676);
    expect(a!.readings_expected).toBeCloseTo(676, 9);
    expect((await row(DST_SITE, "2025-10-27"))!.readings).toBe(4);
    // The deployment makes every week between expect data: those without readings say 0 %.
    const empty = await row(DST_SITE, "2025-06-02");
    expect(empty!.readings).toBe(0);
    expect(empty!.completeness).toBe(0);
    expect(empty!.sc25_median).toBeNull();
  });
});

describe("the cache follows the readings", () => {
  it("runs last among the readings-changed steps", () => {
    expect(READINGS_CHANGED_STEPS.at(-1)).toBe(WEEKLY_SUMMARIES_STEP);
  });

  it("a readings-changed step queues summarise-weeks for the touched weeks, and the job refreshes them", async () => {
    // Tuesday of week B: every 530 and 540 becomes 560 → values 500, 510, 520 ×96 and 560 ×192.
    await sql`update readings set sc25_us_cm = 560, tds_mg_l = 560 * 0.65 where site_id = ${SITE} and time >= ${new Date(WEEK_B)} and time < ${new Date(WEEK_B + 7 * 86_400_000)} and sc25_us_cm in (530, 540)`.execute(db);
    await WEEKLY_SUMMARIES_STEP.run({ siteId: SITE, fromMs: WEEK_B + 86_400_000, toMs: WEEK_B + 2 * 86_400_000, reason: "manual" });
    const jobs = await sql<{ payload: { siteId: string; fromWeek: string; toWeek: string }; queue_name: string | null }>`
      select j.payload, q.queue_name from graphile_worker._private_jobs j
      join graphile_worker._private_tasks t on t.id = j.task_id
      left join graphile_worker._private_job_queues q on q.id = j.job_queue_id
      where t.identifier = 'summarise-weeks'`.execute(db);
    expect(jobs.rows.map((j) => j.payload)).toEqual([{ siteId: SITE, fromWeek: "2025-03-10", toWeek: "2025-03-10" }]);
    expect(jobs.rows[0].queue_name).toBe("weekly-summaries");
    expect((await row(SITE, "2025-03-10"))!.sc25_max).toBe(540); // not yet recomputed

    await runOnce({ connectionString: getEnv().DATABASE_URL }, { "summarise-weeks": async (payload) => void (await runSummariseWeeksJob(payload)) });
    const r = await row(SITE, "2025-03-10");
    expect(r!.sc25_max).toBe(560);
    // Mean (96·(500 + 510 + 520) + 192·560)/480 = (146,880 + 107,520)/480 = 530.
    expect(r!.sc25_mean).toBeCloseTo(530, 9);
    // Positions 455, 456 now in the 560 run (288…479); the median positions 239, 240 still 520.
    expect(r!.sc25_p95).toBeCloseTo(560, 9);
    expect(r!.sc25_median).toBeCloseTo(520, 9);
    const left = await sql<{ n: number }>`select count(*)::int as n from graphile_worker.jobs where task_identifier = 'summarise-weeks'`.execute(db);
    expect(left.rows[0].n).toBe(0);
    // Put week B back for the tests below.
    await sql`update readings set sc25_us_cm = case when (extract(epoch from time - ${new Date(WEEK_B)}::timestamptz) / 900)::int % 5 = 3 then 530 else 540 end,
      tds_mg_l = 0.65 * case when (extract(epoch from time - ${new Date(WEEK_B)}::timestamptz) / 900)::int % 5 = 3 then 530 else 540 end
      where site_id = ${SITE} and sc25_us_cm = 560`.execute(db);
    await summariseWeeks(SITE, "2025-03-10", "2025-03-10");
    expect((await row(SITE, "2025-03-10"))!.sc25_mean).toBeCloseTo(520, 9);
  });

  it("approving a period of record queues its weeks, and the job marks them approved", async () => {
    const period = await db.selectFrom("record_period").select("id").where("site_id", "=", SITE).where("grade", "=", "poor").executeTakeFirstOrThrow();
    expect((await row(SITE, "2025-03-03"))!.approved).toBe(false);
    await approvePeriod(people.officer.id, period.id, SITE);
    const jobs = await sql<{ payload: { siteId: string; fromWeek: string; toWeek: string } }>`
      select j.payload from graphile_worker._private_jobs j join graphile_worker._private_tasks t on t.id = j.task_id
      where t.identifier = 'summarise-weeks'`.execute(db);
    // The period runs from Thursday 20 February to Saturday 8 March 2025: the weeks of Monday 17 February to Monday 3 March.
    expect(jobs.rows.map((j) => j.payload)).toEqual([{ siteId: SITE, fromWeek: "2025-02-17", toWeek: "2025-03-03" }]);
    await runOnce({ connectionString: getEnv().DATABASE_URL }, { "summarise-weeks": async (payload) => void (await runSummariseWeeksJob(payload)) });
    // Week A overlaps this period and the approved "fair" one: approved now, graded by the worse of the two.
    expect((await row(SITE, "2025-03-03"))!.approved).toBe(true);
    expect((await row(SITE, "2025-03-03"))!.grade).toBe("poor");
  });

  it("classifying an exceedance queues the week it began in, and the job counts it under its outcome", async () => {
    if (!hasExceedanceTable) return;
    const ev = await sql<{ id: string }>`select id from exceedance where site_id = ${SITE} and outcome is null`.execute(db);
    await reviewExceedance(people.officer.id, ev.rows[0].id, { outcome: "calibration", comment: "", then: "save", flagReadings: false });
    const jobs = await sql<{ payload: { siteId: string; fromWeek: string; toWeek: string } }>`
      select j.payload from graphile_worker._private_jobs j join graphile_worker._private_tasks t on t.id = j.task_id
      where t.identifier = 'summarise-weeks'`.execute(db);
    expect(jobs.rows.map((j) => j.payload)).toEqual([{ siteId: SITE, fromWeek: "2025-03-10", toWeek: "2025-03-10" }]); // it began on Wednesday 12 March
    await runOnce({ connectionString: getEnv().DATABASE_URL }, { "summarise-weeks": async (payload) => void (await runSummariseWeeksJob(payload)) });
    expect((await row(SITE, "2025-03-10"))!.events).toEqual({ "water-quality": 1, calibration: 1 });
  });

  it("a full rebuild writes every week with data or a deployed logger, and is repeatable", async () => {
    const first = await rebuildAllSummaries();
    const n1 = await db.selectFrom("weekly_summary").select((eb) => eb.fn.countAll<number>().as("n")).executeTakeFirstOrThrow();
    const again = await rebuildAllSummaries();
    const n2 = await db.selectFrom("weekly_summary").select((eb) => eb.fn.countAll<number>().as("n")).executeTakeFirstOrThrow();
    expect(first.weeks).toBe(again.weeks);
    expect(Number(n1.n)).toBe(Number(n2.n));
    expect((await row(SITE, "2025-03-03"))!.sc25_median).toBeCloseTo(447.5, 9);
    // The loggers are still deployed: the rebuild runs to this week, whose expected readings are those
    // due so far (900 s apart since Monday 00:00 at the site), none of them received.
    const thisWeek = weekStartAt(new Date(), "Europe/London");
    const now = await row(DST_SITE, thisWeek);
    expect(now!.readings).toBe(0);
    const due = (Date.now() - now!.starts_at.getTime()) / 900_000;
    expect(now!.readings_expected).toBeGreaterThan(due - 10);
    expect(now!.readings_expected).toBeLessThanOrEqual(due + 1e-6);
  });
});

describe("pages, export and digest", () => {
  let manager: Jar;
  beforeAll(async () => {
    manager = await signIn("manager@test.example", TEST_PASSWORD);
  });

  it("the summary page shows the week's table to a manager", async () => {
    const res = await request("/summaries?week=2025-W11", { jar: manager });
    expect(res.status).toBe(200);
    const html = (await res.text()).replaceAll("<!-- -->", "");
    expect(html).toContain("Week 11 of 2025");
    expect(html).toContain("Tollmere &lt;Weir&gt; &amp; &quot;Gauge&quot;");
    expect(html).toMatch(/data-cell="sc25-median">520</);
    expect(html).toMatch(/data-cell="sc25-p95">540</);
    expect(html).toMatch(/data-cell="completeness">72 %/);
    expect(html).toContain("screening estimates");
  });

  it("the CSV export has a header row with units and neutralises formula-like cells", async () => {
    const res = await request("/api/summaries/2025-W11/table.csv", { jar: manager });
    expect(res.status).toBe(200);
    expect(res.headers.get("Content-Type")).toMatch(/text\/csv/);
    const lines = (await res.text()).replace(/^\uFEFF/, "").split("\r\n");
    const header = lines.find((l) => l.startsWith("Site code"))!.split(",");
    expect(header).toContain("Median SC (µS/cm)");
    expect(header).toContain("Median TDS estimate (mg/L)");
    expect(header).toContain("Completeness (%)");
    const tw = lines.find((l) => l.startsWith("TW1,"))!;
    expect(tw).toContain(`"Tollmere <Weir> & ""Gauge"""`);
    const cells = tw.split(/,(?=(?:[^"]*"[^"]*")*[^"]*$)/);
    expect(Number(cells[header.indexOf("Median SC (µS/cm)")])).toBe(520);
    expect(Number(cells[header.indexOf("95th percentile SC (µS/cm)")])).toBe(540);
    expect(Number(cells[header.indexOf("Completeness (%)")])).toBeCloseTo((481 / 672) * 100, 9);
    // The other site's name starts with "=": written with a leading apostrophe (csvSafeCell).
    expect(lines.find((l) => l.startsWith("DS2,"))).toContain(",'=SUM(A1) Saltings,");
  });

  it("the digest reaches managers and those who opted in once per week, with the week's figures", async () => {
    const mailbox = getEnv().MAILBOX_URL!;
    // An officer classifies the open event after the week was cached: the digest refreshes the week first.
    if (hasExceedanceTable) await sql`update exceedance set outcome = 'sensor-fault' where site_id = ${SITE} and outcome is distinct from 'water-quality'`.execute(db);
    const result = await sendWeeklyDigest({ week: "2025-03-10" });
    expect(result.sent).toBe(2); // the manager, and the officer who opted in; not the technician or admin
    const subject = `Weekly site digest: Week 11 of 2025 · 10–16 Mar 2025 · ${ORG}`; // weekLabel (weeks.ts)
    const mail = await waitForMessage(mailbox, (m) => m.subject === subject && m.to.includes("manager@test.example"), 10_000);
    await waitForMessage(mailbox, (m) => m.subject === subject && m.to.includes("officer@test.example"), 10_000);
    expect(mail.text).toContain("TW1 Tollmere <Weir> & \"Gauge\" — Look at this week");
    expect(mail.text).toContain("Median SC (µS/cm): 520");
    expect(mail.text).toContain("95th percentile SC (µS/cm): 540");
    expect(mail.text).toContain("Change from last week: +73 µS/cm (+16.2 %)"); // 72.5 shown to the unit
    expect(mail.text).toContain("Completeness: 72 %");
    expect(mail.text).toContain("Grade: Fair");
    if (hasExceedanceTable) expect(mail.text).toContain("Exceedance events: 2 (sensor fault 1, water quality 1)");
    expect(mail.text).toContain(`${getEnv().APP_ORIGIN}/summaries?week=2025-W11`);
    expect(mail.text).toMatch(/screening estimates/);
    expect(mail.html).toContain("Tollmere &lt;Weir&gt; &amp; &quot;Gauge&quot;");
    expect(mail.html).not.toContain("<Weir>");
    // "Look at this week" sites are listed before the table.
    const text = mail.text ?? "";
    expect(text.indexOf("Sites that need a look first")).toBeLessThan(text.indexOf("The week at every site"));

    const again = await sendWeeklyDigest({ week: "2025-03-10" });
    expect(again).toMatchObject({ sent: 0, skipped: 2 });
    await new Promise((r) => setTimeout(r, 300));
    const copies = (await listMessages(mailbox, { to: "manager@test.example" })).filter((m) => m.subject === subject);
    expect(copies).toHaveLength(1);
    const rows = await db.selectFrom("weekly_digest_delivery").select(["person_id", "sent_at", "message_id"]).execute();
    expect(rows.map((r) => r.person_id).sort()).toEqual([people.manager.id, people.officer.id].sort());
    expect(rows.every((r) => r.sent_at && r.message_id)).toBe(true);
  });

  it("only administrators may send the digest now; the request queues one job for the week", async () => {
    expect((await request("/summaries", { jar: manager, form: { intent: "send-digest", week: "2025-W11" } })).status).toBe(403);
    const admin = await signIn("admin@test.example", TEST_PASSWORD);
    const res = await request("/summaries", { jar: admin, form: { intent: "send-digest", week: "2025-W11" } });
    expect(res.status).toBe(302);
    expect(res.headers.get("Location")).toBe("/summaries?week=2025-W11&digest=queued");
    await request("/summaries", { jar: admin, form: { intent: "send-digest", week: "2025-W11" } });
    const jobs = await sql<{ payload: { week: string } }>`
      select j.payload from graphile_worker._private_jobs j join graphile_worker._private_tasks t on t.id = j.task_id
      where t.identifier = 'weekly-digest'`.execute(db);
    expect(jobs.rows.map((j) => j.payload)).toEqual([{ week: "2025-03-10" }]);
  });

  it("the printable report and the site pages answer with the week's figures", async () => {
    const print = await request("/summaries/2025-W11/print", { jar: manager });
    expect(print.status).toBe(200);
    const html = await print.text();
    expect(html).toContain(ORG);
    expect(html).toContain("Week 11 of 2025");
    expect(html).toContain('data-testid="print-sc-table"');
    expect((await request("/summaries/not-a-week/print", { jar: manager })).status).toBe(404);
    const site = await request("/summaries/sites/TW1?week=2025-W11", { jar: manager });
    expect(site.status).toBe(200);
    expect(await site.text()).toContain("Too few weeks to test");
    expect((await request("/summaries/sites/NOPE", { jar: manager })).status).toBe(404);
    const report = await request("/reports/site?site=TW1&from=2025-03-03&to=2025-03-16", { jar: manager });
    expect(report.status).toBe(200);
    const rhtml = (await report.text()).replaceAll("<!-- -->", "");
    // Both weeks: 672 + 481 readings, 1 excluded; SC over 1,152 usable readings from 400 to 540.
    expect(rhtml).toContain("1,153 readings received of 1,344 expected");
    expect(rhtml).toMatch(/data-testid="report-stats"/);
  });
});
