// npm run bench:load — the overview, the series API and sign-in under 50 concurrent connections for
// 30 s on loopback, while an ingest runs. Prints throughput and latency percentiles per endpoint.
// Target: series API p95 ≤ 300 ms, no errors. Bounded: fixed duration, 127.0.0.1 only.
import { WORKER_NODE_FLAGS } from "../support/worker-flags.ts";
import { spawn, type ChildProcess } from "node:child_process";
import { createHash } from "node:crypto";
import { mkdirSync, openSync } from "node:fs";
import path from "node:path";
import autocannon from "autocannon";
import { createDb } from "#db/connect.ts";
import { migrateAll } from "#db/migrator.ts";
import { seedDemo } from "#db/seed.ts";
import { DEMO_PEOPLE } from "#db/demo/scenario.ts";
import { applyTestEnv, databaseUrl } from "../support/env.ts";
import pg from "pg";
import { sql } from "kysely";

const DB_NAME = "rm_bench_load";
const PORT = Number(process.env.LOAD_PORT ?? 3213);
const ORIGIN = `http://127.0.0.1:${PORT}`;
const DURATION_S = Number(process.env.LOAD_SECONDS ?? 30);
// Each sign-in spends tens of milliseconds of CPU on scrypt on purpose; 10 connections signing in
// back to back would be a password-guessing flood (which the throttle and the low-priority hashing
// thread are for), not people starting their day. 2 a second is 7,200 sign-ins an hour.
// LOAD_SIGN_IN_RATE=0 takes the brake off.
// The overview as a whole document (server-rendered page: the default, and the heavier), or as the
// data a client-side navigation fetches (LOAD_OVERVIEW=data).
const OVERVIEW_PATH = process.env.LOAD_OVERVIEW === "data" ? "/_root.data?_routes=routes%2Foverview" : "/";
const SIGN_IN_RATE = Number(process.env.LOAD_SIGN_IN_RATE ?? 2) || undefined;
const root = path.resolve(import.meta.dirname, "../..");
const children: ChildProcess[] = [];

async function waitFor(url: string, ms: number) {
  const end = Date.now() + ms;
  while (Date.now() < end) {
    try {
      if ((await fetch(url)).ok) return;
    } catch {}
    await new Promise((r) => setTimeout(r, 200));
  }
  throw new Error(`${url} did not answer within ${ms} ms`);
}

function percentile(sorted: number[], p: number) {
  if (sorted.length === 0) return NaN;
  const i = Math.min(sorted.length - 1, Math.max(0, Math.ceil((p / 100) * sorted.length) - 1));
  return sorted[i];
}

async function signInCookie(email: string, password: string) {
  const res = await fetch(`${ORIGIN}/sign-in`, {
    method: "POST",
    redirect: "manual",
    headers: { "Content-Type": "application/x-www-form-urlencoded", Origin: ORIGIN },
    body: new URLSearchParams({ email, password, redirectTo: "/" }),
  });
  const cookie = res.headers.get("set-cookie")?.split(";")[0];
  if (!cookie) throw new Error(`sign-in failed: ${res.status}`);
  return cookie;
}

// 1. A database of its own with 90 days of the demo.
const admin = new pg.Client({ connectionString: databaseUrl("postgres") });
await admin.connect();
await admin.query(`drop database if exists ${DB_NAME} with (force)`);
await admin.query(`create database ${DB_NAME}`);
await admin.end();
await migrateAll(databaseUrl(DB_NAME));
process.env.APP_ORIGIN = ORIGIN;
applyTestEnv(DB_NAME);
process.env.NODE_ENV = "production";
const db = createDb(databaseUrl(DB_NAME), 2);
console.log("seeding 90 days of the demo…");
await seedDemo(db, { readingsDays: 90 });

// 2. The production build and a worker.
mkdirSync(path.join(root, ".data"), { recursive: true });
const env = { ...process.env, PORT: String(PORT), HOST: "127.0.0.1" };
children.push(
  spawn(process.execPath, [...(process.env.LOAD_APP_NODE_FLAGS?.split(" ").filter(Boolean) ?? []), "--import", "tsx", "app/serve.ts", "./build/server/index.js"], {
    cwd: root,
    env,
    stdio: ["ignore", openSync(path.join(root, ".data/load-app.log"), "w"), "inherit"],
  }),
);
children.push(spawn(process.execPath, [...WORKER_NODE_FLAGS, "--import", "tsx", "app/worker.ts"], { cwd: root, env, stdio: ["ignore", openSync(path.join(root, ".data/load-worker.log"), "w"), "inherit"] }));
let stopped = false;
const stop = () => {
  if (stopped) return;
  stopped = true;
  children.forEach((c) => c.kill("SIGTERM"));
};
process.on("exit", stop);
await waitFor(`${ORIGIN}/api/health`, 30_000);

// The seed leaves the worker a backlog (detection and weekly summaries over 90 days for every site).
// The load starts once it is done, so the one background job running during the load is the ingest.
const drainStart = Date.now();
for (;;) {
  const { rows } = await sql<{ n: number }>`
    select count(*)::int as n from graphile_worker.jobs where run_at <= now() and attempts < max_attempts`.execute(db);
  if (rows[0].n === 0) break;
  if (Date.now() - drainStart > 180_000) throw new Error(`the worker still has ${rows[0].n} jobs after 3 minutes`);
  await new Promise((r) => setTimeout(r, 500));
}
console.log(`worker backlog after seeding done in ${((Date.now() - drainStart) / 1000).toFixed(1)} s`);

const manager = DEMO_PEOPLE.find((p) => p.role === "manager")!;
const technician = DEMO_PEOPLE.find((p) => p.role === "technician")!;
const cookie = await signInCookie(manager.email, manager.password);
const site = await db.selectFrom("site").select("id").where("code", "=", "QF2").executeTakeFirstOrThrow();
const to = new Date();
const from = new Date(to.getTime() - 90 * 86_400_000);
const seriesPath = `/api/sites/${site.id}/series?parameter=sc25&from=${from.toISOString()}&to=${to.toISOString()}&points=1500`;

// 3. An ingest running during the load: a 300,000-row file through the real upload API and worker.
async function startIngest() {
  const techCookie = await signInCookie(technician.email, technician.password);
  const profile = await db.selectFrom("import_profile").select("id").where("name", "like", "Four-electrode%").executeTakeFirstOrThrow();
  const logger = await db.selectFrom("logger").select("id").where("serial", "=", "RQ-4102").executeTakeFirstOrThrow();
  const lines = ["Timestamp (UTC),Temp (C),Cond (uS/cm),Batt (V)"];
  const t0 = Date.UTC(2015, 0, 1);
  for (let i = 0; i < 300_000; i++) lines.push(`${new Date(t0 + i * 900_000).toISOString().slice(0, 19)}Z,${(10 + (i % 50) / 10).toFixed(2)},${(400 + (i % 97)).toFixed(1)},12.40`);
  const body = Buffer.from(lines.join("\n") + "\n");
  const form = (o: Record<string, string>) => ({ method: "POST", headers: { "Content-Type": "application/x-www-form-urlencoded", Cookie: techCookie, Origin: ORIGIN }, body: new URLSearchParams(o) });
  const presign = (await (await fetch(`${ORIGIN}/api/uploads`, form({ intent: "presign", fileName: "RQ-4102_load.csv", sizeBytes: String(body.length), contentType: "text/csv", sha256: createHash("sha256").update(body).digest("hex"), siteId: site.id, loggerId: logger.id, profileId: profile.id }))).json()) as { uploadId: string; url: string; headers: Record<string, string> };
  await fetch(presign.url, { method: "PUT", body, headers: presign.headers });
  await fetch(`${ORIGIN}/api/uploads`, form({ intent: "confirm", uploadId: presign.uploadId }));
  return presign.uploadId;
}

type Stat = { name: string; latencies: number[]; at: number[]; errors: number; non2xx: number; requests: number; statuses: Map<number, number> };

function drive(name: string, connections: number, { path: urlPath, ...opts }: { path: string } & Partial<autocannon.Options>): Promise<Stat> {
  const stat: Stat = { name, latencies: [], at: [], errors: 0, non2xx: 0, requests: 0, statuses: new Map() };
  return new Promise((resolve, reject) => {
    const instance = autocannon({ url: ORIGIN + urlPath, connections, duration: DURATION_S, ...opts } as autocannon.Options, (err, result) => {
      if (err) return reject(err);
      stat.errors = result.errors + result.timeouts;
      // autocannon's non2xx counts redirects too; a sign-in answers 302 when it works.
      stat.non2xx = result.non2xx - (result["3xx"] ?? 0);
      stat.requests = result.requests.total;
      resolve(stat);
    });
    // Every response time, so the 95th percentile is exact (autocannon's summary has no p95).
    instance.on("response", (_client: unknown, _statusCode: number, _bytes: number, responseTime: number) => {
      stat.latencies.push(responseTime);
      stat.at.push(Date.now());
      stat.statuses.set(_statusCode, (stat.statuses.get(_statusCode) ?? 0) + 1);
    });
  });
}

console.log(`load: 50 connections for ${DURATION_S} s on ${ORIGIN} (20 series API, 20 overview, 10 sign-in), with an ingest running`);
// Warm-up, not measured (common practice for benchmarks): 5 s of the same requests at low
// concurrency, so the app processes have compiled their hot code and the measured run does not
// start on a cold JIT.
await Promise.all([
  autocannon({ url: ORIGIN + seriesPath, connections: 4, duration: 5, headers: { Cookie: cookie } }),
  autocannon({ url: `${ORIGIN}/`, connections: 4, duration: 5, headers: { Cookie: cookie } }),
]);
const uploadId = process.env.LOAD_NO_INGEST ? null : await startIngest();
const stats = await Promise.all([
  drive("series API", 20, { path: seriesPath, headers: { Cookie: cookie } }),
  drive("overview", process.env.LOAD_NO_OVERVIEW ? 1 : 20, { path: OVERVIEW_PATH, headers: { Cookie: cookie } }),
  drive("sign-in", process.env.LOAD_NO_SIGNIN ? 1 : 10, {
    // Paced: SIGN_IN_RATE sign-ins a second over the 10 connections (see the note at the top).
    overallRate: SIGN_IN_RATE,
    path: "/sign-in",
    method: "POST",
    headers: { "Content-Type": "application/x-www-form-urlencoded", Origin: ORIGIN },
    body: new URLSearchParams({ email: manager.email, password: manager.password, redirectTo: "/" }).toString(),
  }),
]);
const ingest = uploadId ? await db.selectFrom("upload").select(["status", "rows_accepted"]).where("id", "=", uploadId).executeTakeFirstOrThrow() : { status: "not run", rows_accepted: 0 };

let failed = 0;
for (const s of stats) {
  const sorted = [...s.latencies].sort((a, b) => a - b);
  failed += s.errors;
  console.log(
    `${s.name.padEnd(11)} ${(s.requests / DURATION_S).toFixed(1).padStart(7)} req/s  p50 ${percentile(sorted, 50).toFixed(0)} ms  p95 ${percentile(sorted, 95).toFixed(0)} ms  p99 ${percentile(sorted, 99).toFixed(0)} ms  errors ${s.errors}  outside 2xx/3xx ${s.non2xx}  statuses ${[...s.statuses].sort((a, b) => a[0] - b[0]).map(([c, n]) => `${c}×${n}`).join(" ")}`,
  );
}
console.log(`ingest during the load: ${ingest.status}, ${ingest.rows_accepted} rows`);
// The series API's 95th percentile in 5-second windows: where in the run the slow answers were.
{
  const s0 = stats[0];
  const t0 = Math.min(...s0.at);
  const windows: number[][] = [];
  s0.at.forEach((t, i) => (windows[Math.floor((t - t0) / 5000)] ??= []).push(s0.latencies[i]));
  console.log(`series API p95 by 5 s window: ${windows.map((w) => percentile([...w].sort((a, b) => a - b), 95).toFixed(0)).join(" ")} ms`);
}
const series = [...stats[0].latencies].sort((a, b) => a - b);
const p95 = percentile(series, 95);
console.log(`target: series API p95 ≤ 300 ms, no errors`);
console.log(`load series_p95_ms=${p95.toFixed(0)} errors=${failed + stats.reduce((a, s) => a + s.non2xx, 0)} series_rps=${(stats[0].requests / DURATION_S).toFixed(1)}`);
await db.destroy();
stop();
process.exit(0);
