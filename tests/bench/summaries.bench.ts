// npm run bench:summaries — the weekly summaries at the size the issue names: the eight demo sites
// with three years of readings each at their loggers' intervals (BW6 logs every minute: ~2.4 million
// readings), written straight into a database of its own (rm_bench_summaries, made once and reused;
// BENCH_FRESH=1 makes it again). Prints the full rebuild time (the `summarise-weeks` work for every
// site and week, from scratch), then the summary page served from the cache by a copy of the
// production build (median of repeated requests), and ends with one line:
// `summaries job_s=<n> page_ms=<n>`.
import { execFileSync } from "node:child_process";
import { cpSync, existsSync, readdirSync, readFileSync, rmSync } from "node:fs";
import os from "node:os";
import path from "node:path";
import { performance } from "node:perf_hooks";
import { migrateAll } from "#db/migrator.ts";
import { createDb } from "#db/connect.ts";
import { DEMO_LOGGERS, DEMO_SITES } from "#db/demo/scenario.ts";
import { applyTestEnv, databaseUrl, PG } from "../support/env.ts";

const DB_NAME = process.env.BENCH_DB ?? "rm_bench_summaries";
const YEARS = Number(process.env.BENCH_YEARS ?? 3);
const PAGE_RUNS = Number(process.env.BENCH_PAGE_RUNS ?? 25);
const root = path.resolve(import.meta.dirname, "../..");
const psqlBin = process.env.PGBIN ? path.join(process.env.PGBIN, "psql") : "psql";
const psqlEnv = { ...process.env, PGPASSWORD: PG.password };

function median(xs: number[]) {
  const s = [...xs].sort((a, b) => a - b);
  return s.length % 2 ? s[s.length >> 1] : (s[s.length / 2 - 1] + s[s.length / 2]) / 2;
}

function psql(database: string, ...args: string[]) {
  return execFileSync(psqlBin, ["-h", PG.host, "-p", String(PG.port), "-U", PG.user, "-d", database, "-qAt", "-v", "ON_ERROR_STOP=1", ...args], { env: psqlEnv, encoding: "utf8" }).trim();
}

// 1. The production build the page is served from, copied so another build cannot swap files under us.
if (!process.env.BENCH_NO_BUILD) {
  const b0 = performance.now();
  execFileSync("npx", ["react-router", "build"], { cwd: root, stdio: "ignore" });
  const copy = path.join(root, "tests/bench/.out/summaries-build");
  rmSync(copy, { recursive: true, force: true });
  cpSync(path.join(root, "build"), copy, { recursive: true });
  process.env.TEST_BUILD_DIR = copy;
  console.log(`build: ${((performance.now() - b0) / 1000).toFixed(1)} s`);
} else if (existsSync(path.join(root, "tests/bench/.out/summaries-build/server/index.js"))) {
  process.env.TEST_BUILD_DIR = path.join(root, "tests/bench/.out/summaries-build");
}

// 2. A database of its own with the demo sites, loggers, thresholds and a manager (made once).
const exists = psql("postgres", "-c", `select count(*) from pg_database where datname = '${DB_NAME}'`) === "1";
const reuse = exists && !process.env.BENCH_FRESH && psql(DB_NAME, "-c", "select count(*) from site") === String(DEMO_SITES.length);
if (!reuse) {
  psql("postgres", "-c", `drop database if exists ${DB_NAME} with (force)`);
  psql("postgres", "-c", `create database ${DB_NAME}`);
}
await migrateAll(databaseUrl(DB_NAME));
applyTestEnv(DB_NAME);
process.env.NODE_ENV = "production";
const db = createDb(databaseUrl(DB_NAME), 4);
const { createPeople, TEST_PASSWORD } = await import("../support/people.ts");
if (!reuse) await createPeople(db);

if (!reuse) {
  const endMs = (() => {
    const now = new Date();
    return Date.UTC(now.getUTCFullYear(), now.getUTCMonth(), now.getUTCDate());
  })();
  const startMs = endMs - Math.round(YEARS * 365.25) * 86_400_000;
  const siteIds = new Map<string, string>();
  for (const s of DEMO_SITES) {
    const row = await db
      .insertInto("site")
      .values({ code: s.code, name: s.name, kind: s.kind, latitude: s.latitude, longitude: s.longitude, time_zone: "Europe/London", tds_factor: s.tdsFactor })
      .returning("id")
      .executeTakeFirstOrThrow();
    siteIds.set(s.code, row.id);
    await db
      .insertInto("site_threshold")
      .values([
        { site_id: row.id, parameter: "sc25", bound: "upper", value: 900 },
        { site_id: row.id, parameter: "temperature", bound: "upper", value: 16 },
      ])
      .execute();
  }

  // 3. Readings: one logger per site (the first listed), from startMs to endMs at its interval, made in
  // SQL (a seasonal cycle, a slow rise at AB8, some noise, a few flagged readings).
  const g0 = performance.now();
  let total = 0;
  for (const l of DEMO_LOGGERS.filter((x) => x.swap !== "replacement")) {
    if (!l.site) continue;
    const siteId = siteIds.get(l.site)!;
    const logger = await db.insertInto("logger").values({ serial: l.serial, model: l.model, logging_interval_s: l.intervalS }).returning("id").executeTakeFirstOrThrow();
    await db.insertInto("logger_deployment").values({ logger_id: logger.id, site_id: siteId, deployed_from: new Date(startMs), deployed_until: null }).execute();
    const upload = await db
      .insertInto("upload")
      .values({
        object_key: `bench/${l.serial}.csv`, file_name: `${l.serial}.csv`, size_bytes: 0, content_type: "text/csv", sha256: "0".repeat(64),
        site_id: siteId, logger_id: logger.id, status: "done",
      })
      .returning("id")
      .executeTakeFirstOrThrow();
    const base = 200 + 120 * DEMO_SITES.findIndex((s) => s.code === l.site);
    const rise = l.site === "AB8" ? 40 : 0; // µS/cm a year
    const factor = DEMO_SITES.find((s) => s.code === l.site)!.tdsFactor;
    const out = execFileSync(
      psqlBin,
      [
        "-h", PG.host, "-p", String(PG.port), "-U", PG.user, "-d", DB_NAME, "-qAt", "-v", "ON_ERROR_STOP=1",
        "-c", `select ensure_reading_partitions(to_timestamp(${startMs / 1000}), to_timestamp(${endMs / 1000}))`,
        "-c",
        `insert into readings (site_id, logger_id, time, upload_id, row_number, conductivity_us_cm, temperature_c, sc25_us_cm, sc25_uncorrected_us_cm, tds_mg_l, settings_id, quality_flag)
         select '${siteId}', '${logger.id}', t, '${upload.id}', i::int, sc * (1 + 0.02 * (temp - 25)), temp, sc, sc, sc * ${factor}, null,
           case when i % 5000 = 17 then 'spike' end
         from (
           select t, i, 10 + 6 * sin(2 * pi() * extract(epoch from t) / 31557600.0) + 0.5 * sin(i) as temp,
             ${base} + 60 * cos(2 * pi() * extract(epoch from t) / 31557600.0) + ${rise} * extract(epoch from t - to_timestamp(${startMs / 1000})) / 31557600.0
               + 15 * sin(i * 0.37) as sc
           from generate_series(to_timestamp(${startMs / 1000}), to_timestamp(${endMs / 1000}) - interval '1 second', make_interval(secs => ${l.intervalS})) with ordinality as g(t, i)
         ) s`,
        "-c", "analyze readings",
        "-c", `select count(*) from readings where site_id = '${siteId}'`,
      ],
      { env: psqlEnv, encoding: "utf8" },
    );
    total += Number(out.trim().split("\n").at(-1));
  }
  console.log(`readings: ${total.toLocaleString("en")} over ${DEMO_SITES.length} sites × ${YEARS} years (made in ${((performance.now() - g0) / 1000).toFixed(1)} s)`);
} else {
  console.log(`reusing ${DB_NAME}: ${Number(psql(DB_NAME, "-c", "select count(*) from readings")).toLocaleString("en")} readings`);
}

// 4. The job: every site, every week, from scratch.
const { rebuildAllSummaries } = await import("#app/models/weekly-summary.server.ts");
await db.deleteFrom("weekly_summary").execute();
console.log(`load average before measuring: ${os.loadavg().map((x) => x.toFixed(2)).join(" ")}`);
// CPU time spent by this database's server processes (their titles name the database) and by this
// process, besides the wall time: on a machine shared with other work the CPU seconds say what the
// job costs, the wall time what it took.
function dbCpuSeconds() {
  let ticks = 0;
  for (const pid of readdirSync("/proc").filter((d) => /^\d+$/.test(d))) {
    try {
      if (!readFileSync(`/proc/${pid}/cmdline`, "latin1").includes(DB_NAME)) continue;
      const fields = readFileSync(`/proc/${pid}/stat`, "latin1").split(") ")[1].split(" ");
      ticks += Number(fields[11]) + Number(fields[12]); // utime, stime (proc(5))
    } catch {
      // the process ended meanwhile
    }
  }
  return ticks / 100; // USER_HZ is 100 on Linux
}
const cpu0 = { db: dbCpuSeconds(), node: process.cpuUsage() };
const job = await rebuildAllSummaries();
const cpuDb = dbCpuSeconds() - cpu0.db;
const nodeUsage = process.cpuUsage(cpu0.node);
const cpuNode = (nodeUsage.user + nodeUsage.system) / 1e6;
console.log(`summaries: ${job.weeks} site-weeks for ${job.sites} sites in ${job.seconds.toFixed(2)} s wall time; CPU ${cpuDb.toFixed(2)} s in PostgreSQL + ${cpuNode.toFixed(2)} s in Node (two at a time on 2 cores: ≈ ${((cpuDb + cpuNode) / 2).toFixed(1)} s on an idle machine)`);

if (process.env.BENCH_JOB_ONLY) {
  await db.destroy();
  process.exit(0);
}

// 5. The page from the cache, through the production build (sign in once, then repeated GETs).
const { request, signIn } = await import("../support/app.ts");
const jar = await signIn("manager@test.example", TEST_PASSWORD);
const times: number[] = [];
let status = 0;
for (let i = 0; i < PAGE_RUNS + 3; i++) {
  const t = performance.now();
  const res = await request("/summaries", { jar });
  status = res.status;
  await res.text();
  if (i >= 3) times.push(performance.now() - t); // the first few warm the build's modules
}
if (status !== 200) throw new Error(`/summaries answered ${status}`);
const { loadWeekTable } = await import("#app/models/summary-read.server.ts");
const dataTimes: number[] = [];
for (let i = 0; i < PAGE_RUNS; i++) {
  const t = performance.now();
  await loadWeekTable(undefined);
  dataTimes.push(performance.now() - t);
}
console.log(`summary page: median ${median(times).toFixed(1)} ms, slowest ${Math.max(...times).toFixed(1)} ms over ${times.length} requests (loader queries alone: median ${median(dataTimes).toFixed(1)} ms)`);

console.log(`load average after measuring: ${os.loadavg().map((x) => x.toFixed(2)).join(" ")}`);
console.log("targets: job ≤ 10 s for 8 sites × 3 years; page ≤ 200 ms from the cache");
await db.destroy();
console.log(`summaries job_s=${job.seconds.toFixed(2)} page_ms=${median(times).toFixed(1)}`);
process.exit(0);
