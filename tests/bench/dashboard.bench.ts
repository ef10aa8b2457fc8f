// npm run bench:dashboard — site dashboards over years of data. A database of its own
// (rm_bench_dashboard) holds 8 invented Marrowby sites × 3 years of 15-minute readings (~840,000
// rows), loaded once with COPY and kept for later runs. Measured through the production build
// in-process (real routing, session check, loaders, JSON/CSV), median of repeated runs:
//   - the series API for one site-year at 1,500 points, and the same SQL alone (the ratio);
//   - the overview loader (single-fetch data request) and the whole overview document;
//   - the CSV export of one site-year (rows per second, the stream read to the end).
import { execFileSync } from "node:child_process";
import { randomUUID } from "node:crypto";
import { cpSync, existsSync, rmSync } from "node:fs";
import os from "node:os";
import path from "node:path";
import { performance } from "node:perf_hooks";
import pg from "pg";
import { from as copyFrom } from "pg-copy-streams";
import { migrateAll } from "#db/migrator.ts";
import { DEMO_SITES } from "#db/demo/scenario.ts";
import { Deriver } from "#app/jobs/derive.server.ts";
import { applyTestEnv, databaseUrl, PG } from "../support/env.ts";

const DB_NAME = "rm_bench_dashboard";
const YEARS = 3;
const STEP_MS = 15 * 60_000;
const RUNS = Number(process.env.BENCH_RUNS ?? 15);
const PASSWORD = "bench-dashboard-pass";
const root = path.resolve(import.meta.dirname, "../..");

function psql(database: string, command: string) {
  const bin = process.env.PGBIN ? path.join(process.env.PGBIN, "psql") : "psql";
  return execFileSync(bin, ["-h", PG.host, "-p", String(PG.port), "-U", PG.user, "-d", database, "-v", "ON_ERROR_STOP=1", "-qAtc", command], {
    env: { ...process.env, PGPASSWORD: PG.password },
    encoding: "utf8",
  }).trim();
}

function median(xs: number[]) {
  const s = [...xs].sort((a, b) => a - b);
  return s.length % 2 ? s[(s.length - 1) / 2] : (s[s.length / 2 - 1] + s[s.length / 2]) / 2;
}

/** A small deterministic generator (mulberry32), so every seeding gives the same data. */
function rng(seed: number) {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

/** Base specific conductance (µS/cm) per kind of site, and how much rain dilutes it. */
const PROFILE: Record<string, { base: number; dilution: number; tide?: number; drift?: number }> = {
  QH1: { base: 140, dilution: 0.35 },
  QF2: { base: 430, dilution: 0.45 },
  QT3: { base: 610, dilution: 0.4 },
  QS4: { base: 2_500, dilution: 0.3, tide: 14_000 },
  HR5: { base: 290, dilution: 0.08 },
  BW6: { base: 360, dilution: 0.2 },
  AB7: { base: 690, dilution: 0.02 },
  AB8: { base: 820, dilution: 0.02, drift: 120 },
};

async function seed(url: string, endMs: number) {
  const startMs = endMs - YEARS * 365 * 86_400_000;
  const client = new pg.Client({ connectionString: url });
  await client.connect();
  try {
    const { hashPassword } = await import("#app/utils/password.server.ts");
    await client.query("insert into person (email, name, role, password_hash) values ($1, 'Bench Officer', 'officer', $2)", ["bench.officer@bench.example", await hashPassword(PASSWORD)]);
    await client.query("select ensure_reading_partitions($1, $2)", [new Date(startMs), new Date(endMs)]);
    let total = 0;
    for (const [k, s] of DEMO_SITES.entries()) {
      const p = PROFILE[s.code] ?? { base: 500, dilution: 0.3 };
      const siteId = (
        await client.query<{ id: string }>(
          "insert into site (code, name, kind, latitude, longitude, time_zone, compensation_method, reference_c, tds_factor) values ($1, $2, $3, $4, $5, 'Europe/London', $6, $7, $8) returning id",
          [s.code, s.name, s.kind, s.latitude, s.longitude, s.compensationMethod, s.referenceC, s.tdsFactor],
        )
      ).rows[0].id;
      const loggerId = (await client.query<{ id: string }>("insert into logger (serial, model, logging_interval_s) values ($1, 'Bench logger', 900) returning id", [`BENCH-${s.code}`])).rows[0].id;
      await client.query("insert into logger_deployment (logger_id, site_id, deployed_from) values ($1, $2, $3)", [loggerId, siteId, new Date(startMs)]);
      await client.query("insert into site_threshold (site_id, parameter, bound, value) values ($1, 'sc25', 'upper', $2)", [siteId, Math.round(p.base * 1.6 + (p.tide ?? 0) * 0.8)]);
      const settings = (
        await client.query<{ id: number; compensation_method: "linear" | "natural-water"; alpha_per_c: number; reference_c: number; tds_factor: number }>(
          "insert into derivation_settings (site_id, compensation_method, alpha_per_c, reference_c, tds_factor) select id, compensation_method, alpha_per_c, reference_c, tds_factor from site where id = $1 returning *",
          [siteId],
        )
      ).rows[0];
      const uploadId = randomUUID();
      const n = Math.floor((endMs - startMs) / STEP_MS);
      await client.query(
        `insert into upload (id, object_key, file_name, size_bytes, content_type, sha256, site_id, logger_id, status, rows_total, rows_accepted, first_reading_at, last_reading_at)
         values ($1, $2, 'bench-synthetic.csv', 0, 'text/csv', $3, $4, $5, 'done', $6, $6, $7, $8)`,
        [uploadId, `uploads/${uploadId}/bench-synthetic.csv`, uploadId.replace(/-/g, "").padEnd(64, "0"), siteId, loggerId, n, new Date(startMs), new Date(endMs)],
      );

      // Raw values: seasonal and daily temperature, conductivity diluted by storms (a few a year,
      // sharp rise, slow recession), a tide at the tidal reach, a slow rise at one borehole, a
      // handful of one-reading spikes and a three-day gap a year.
      const rand = rng(1000 + k);
      const deriver = new Deriver(settings, n);
      const times = new Float64Array(n);
      let storm = 0;
      let kept = 0;
      for (let i = 0; i < n; i++) {
        const t = startMs + i * STEP_MS;
        const dayOfYear = ((t / 86_400_000) % 365.25) / 365.25;
        const hour = ((t / 3_600_000) % 24) / 24;
        if (i % (96 * 365) > 96 * 200 && i % (96 * 365) < 96 * 203) continue; // the yearly 3-day gap
        if (rand() < 1 / (96 * 45)) storm = 1;
        storm *= 0.995;
        const temp = 10 + 6 * Math.sin(2 * Math.PI * (dayOfYear - 0.3)) + 1.2 * Math.sin(2 * Math.PI * (hour - 0.4)) + (rand() - 0.5) * 0.2;
        let sc = p.base * (1 - p.dilution * storm) * (1 + 0.05 * Math.sin(2 * Math.PI * dayOfYear)) + (rand() - 0.5) * p.base * 0.01;
        if (p.tide) sc += p.tide * Math.max(0, Math.sin((2 * Math.PI * t) / (12.42 * 3_600_000))) ** 2;
        if (p.drift) sc += (p.drift * i) / n;
        if (rand() < 0.0003) sc *= 1.8; // a one-reading spike
        times[kept] = t;
        deriver.temp[kept] = temp;
        deriver.cond[kept] = sc * (1 + 0.0191 * (temp - 25));
        deriver.loggerSc[kept] = NaN;
        kept++;
      }
      deriver.run(kept);
      const copy = client.query(
        copyFrom(
          "copy readings (site_id, logger_id, time, upload_id, row_number, conductivity_us_cm, temperature_c, sc25_us_cm, sc25_uncorrected_us_cm, tds_mg_l, salinity_psu, settings_id) from stdin",
        ),
      );
      const done = new Promise<void>((resolve, reject) => {
        copy.on("finish", resolve);
        copy.on("error", reject);
      });
      const f = (x: number) => (x === x ? x.toFixed(4) : "\\N");
      let chunk = "";
      for (let i = 0; i < kept; i++) {
        const sc25 = f(deriver.sc25[i]);
        chunk += `${siteId}\t${loggerId}\t${new Date(times[i]).toISOString()}\t${uploadId}\t${i + 2}\t${f(deriver.cond[i])}\t${f(deriver.temp[i])}\t${sc25}\t${sc25}\t${f(deriver.tds[i])}\t${f(deriver.salinity[i])}\t${settings.id}\n`;
        if (chunk.length > 1 << 20) {
          if (!copy.write(chunk)) await new Promise((r) => copy.once("drain", r));
          chunk = "";
        }
      }
      copy.end(chunk);
      await done;
      total += kept;
      console.log(`  seeded ${s.code}: ${kept.toLocaleString("en")} readings`);
    }
    await client.query("vacuum analyze readings");
    return total;
  } finally {
    await client.end();
  }
}

// 1. The database: create and seed once; later runs reuse it (migrations still run, they are idempotent).
const exists = psql("postgres", `select 1 from pg_database where datname = '${DB_NAME}'`) === "1";
const url = databaseUrl(DB_NAME);
let rows = exists ? Number(psql(DB_NAME, "select count(*) from readings").trim() || 0) : 0;
let migrated = false;
if (exists && rows >= 800_000) {
  // Kept from an earlier run: bring it up to date; if its migration history no longer fits the
  // folder (a migration was added before one already applied), seed afresh.
  try {
    await migrateAll(url);
    migrated = true;
    console.log(`reusing ${DB_NAME}: ${rows.toLocaleString("en")} readings`);
  } catch (e) {
    console.log(`cannot migrate the kept ${DB_NAME} (${e instanceof Error ? e.message.slice(0, 120) : e}); seeding afresh`);
  }
}
if (!migrated) {
  console.log(`seeding ${DB_NAME} (8 sites × ${YEARS} years of 15-minute readings)…`);
  psql("postgres", `drop database if exists ${DB_NAME} with (force)`);
  psql("postgres", `create database ${DB_NAME}`);
  await migrateAll(url);
  const t0 = performance.now();
  rows = await seed(url, Math.floor(Date.now() / STEP_MS) * STEP_MS);
  console.log(`seeded ${rows.toLocaleString("en")} readings in ${((performance.now() - t0) / 1000).toFixed(1)} s`);
}

// 2. The production build, in-process, against that database.
applyTestEnv(DB_NAME);
process.env.NODE_ENV = "production";
// What is measured is the computation: the response caches stay off until the cached figures at
// the end (app/utils/response-cache.server.ts).
process.env.RESPONSE_CACHE = "off";
if (!process.env.BENCH_SKIP_BUILD) {
  console.log("building…");
  execFileSync("npx", ["react-router", "build"], { cwd: root, stdio: "ignore" });
  // Measure a copy, so another build of the working tree cannot swap files under the benchmark.
  const copy = path.join(root, "tests/bench/.out/dashboard-build");
  rmSync(copy, { recursive: true, force: true });
  cpSync(path.join(root, "build"), copy, { recursive: true });
  process.env.TEST_BUILD_DIR = copy;
} else if (existsSync(path.join(root, "tests/bench/.out/dashboard-build/server/index.js"))) {
  process.env.TEST_BUILD_DIR = path.join(root, "tests/bench/.out/dashboard-build");
}
const { request, signIn } = await import("../support/app.ts");
const { seriesSqlOnly, deploymentsOverlapping } = await import("#app/models/series.server.ts");
const { expectedReadings } = await import("#app/lib/series/statistics.ts");
const { db } = await import("#app/utils/db.server.ts");
const jar = await signIn("bench.officer@bench.example", PASSWORD);
const site = await db.selectFrom("site").select(["id", "code"]).where("code", "=", "QF2").executeTakeFirstOrThrow();
const last = await db.selectFrom("readings").select("time").where("site_id", "=", site.id).orderBy("time", "desc").limit(1).executeTakeFirstOrThrow();
const toMs = last.time.getTime() + 60_000;
const fromMs = toMs - 365 * 86_400_000;
const from = new Date(fromMs).toISOString();
const to = new Date(toMs).toISOString();

async function time<T>(fn: () => Promise<T>, runs = RUNS) {
  for (let i = 0; i < 3; i++) await fn(); // warm-up: plans, pools, JIT
  const ms: number[] = [];
  let result!: T;
  for (let i = 0; i < runs; i++) {
    const t0 = performance.now();
    result = await fn();
    ms.push(performance.now() - t0);
  }
  return { ms: median(ms), result };
}

console.log(`load average before measuring: ${os.loadavg().map((x) => x.toFixed(2)).join(" ")}`);

// 3. Series API, one site-year at 1,500 points; the same SQL alone.
const seriesPath = `/api/sites/${site.id}/series?parameter=sc25&from=${encodeURIComponent(from)}&to=${encodeURIComponent(to)}&points=1500`;
const series = await time(async () => {
  const res = await request(seriesPath, { jar });
  if (res.status !== 200) throw new Error(`series API answered ${res.status}`);
  return (await res.json()) as { points: unknown[]; readings: number; bucketSeconds: number };
});
// The same statements the API runs for the points (it skips the raw probe when the loggers should
// have logged far more than the budget), timed straight against the database.
const expected = expectedReadings(await deploymentsOverlapping(site.id, fromMs, toMs), fromMs, toMs);
const sqlOnly = await time(() => seriesSqlOnly(site.id, "sc25", fromMs, toMs, 1500, expected));
const ratio = series.ms / sqlOnly.ms;
console.log(
  `series API:      ${series.ms.toFixed(1)} ms median for ${series.result.readings.toLocaleString("en")} readings → ${series.result.points.length} points (${series.result.bucketSeconds} s buckets)`,
);
console.log(`series SQL only: ${sqlOnly.ms.toFixed(1)} ms median (${sqlOnly.result} buckets); API ÷ SQL = ${ratio.toFixed(2)}`);

// 4. The overview: its loader through single fetch (what a client navigation asks), and the whole document.
const overview = await time(async () => {
  const res = await request("/_root.data?_routes=routes%2Foverview", { jar });
  if (res.status !== 200) throw new Error(`overview data answered ${res.status}`);
  return (await res.text()).length;
});
const overviewDoc = await time(async () => {
  const res = await request("/", { jar });
  if (res.status !== 200) throw new Error(`overview answered ${res.status}`);
  return (await res.text()).length;
});
console.log(`overview loader: ${overview.ms.toFixed(1)} ms median (${overview.result.toLocaleString("en")} bytes); whole document ${overviewDoc.ms.toFixed(1)} ms`);

// 5. CSV export of one site-year, read to the end.
const exportRuns = Math.max(3, Math.floor(RUNS / 3));
const exported = await time(async () => {
  const res = await request(`/api/sites/${site.id}/export.csv?from=${encodeURIComponent(from)}&to=${encodeURIComponent(to)}`, { jar });
  if (res.status !== 200) throw new Error(`export answered ${res.status}`);
  const reader = res.body!.getReader();
  let lines = 0;
  let head = -1;
  for (;;) {
    const { done, value } = await reader.read();
    if (done) break;
    if (head < 0) {
      // The "#" lines and the header row come first, in the first chunk.
      const text = new TextDecoder().decode(value).replace(/^\uFEFF/, "");
      head = text.split("\r\n").filter((l) => l.startsWith("#")).length + 1;
    }
    for (let i = 0; i < value.length; i++) if (value[i] === 10) lines++;
  }
  return lines - head;
}, exportRuns);
const exportRows = exported.result;
const rowsPerS = exportRows / (exported.ms / 1000);
console.log(`CSV export:      ${exportRows.toLocaleString("en")} rows in ${exported.ms.toFixed(0)} ms median → ${Math.round(rowsPerS).toLocaleString("en")} rows/s`);

// 6. Weekly summaries (a section of its own, kept with the summaries work): these sites' weekly
// cache rebuilt from scratch, then the weekly summary page served from it. `npm run bench:summaries`
// measures the same at the size (one site logging every minute) and prints its result line.
const { rebuildAllSummaries } = await import("#app/models/weekly-summary.server.ts");
const rebuilt = await rebuildAllSummaries();
const summariesPage = await time(async () => {
  const res = await request("/summaries", { jar });
  if (res.status !== 200) throw new Error(`weekly summaries answered ${res.status}`);
  return (await res.text()).length;
});
console.log(`weekly summaries: ${rebuilt.weeks} site-weeks rebuilt in ${rebuilt.seconds.toFixed(2)} s; summary page ${summariesPage.ms.toFixed(1)} ms median`);
// 7. The same series and overview from the response caches (a second viewer of the same chart).
process.env.RESPONSE_CACHE = "on";
await request(seriesPath, { jar });
const seriesCached = await time(async () => (await request(seriesPath, { jar })).status);
const overviewCached = await time(async () => (await request("/_root.data?_routes=routes%2Foverview", { jar })).status);
console.log(`from the response caches: series ${seriesCached.ms.toFixed(1)} ms, overview loader ${overviewCached.ms.toFixed(1)} ms median`);
console.log(`load average after measuring: ${os.loadavg().map((x) => x.toFixed(2)).join(" ")}`);
console.log("targets: series ≤ 100 ms and ≤ 3 × its SQL; overview ≤ 200 ms; export ≥ 50,000 rows/s");
await db.destroy();
console.log(`dashboard series_ms=${Math.round(series.ms)} sql_ratio=${ratio.toFixed(2)} overview_ms=${Math.round(overview.ms)} export_rows_per_s=${Math.round(rowsPerS)}`);
process.exit(0);
