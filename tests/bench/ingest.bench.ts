// npm run bench:ingest — a 1,000,000-row logger file through the real ingest job (S3 fake →
// papaparse → COPY → merge into PostgreSQL), against `psql \copy` of the same file into a table of
// the same shape and keys (the practical limit of this machine).
import { INGEST_JOB_NODE_FLAGS } from "../support/worker-flags.ts";
import { execFileSync, spawn } from "node:child_process";
import { createHash, randomUUID } from "node:crypto";
import { mkdirSync, statSync, writeFileSync, createReadStream } from "node:fs";
import path from "node:path";
import { performance } from "node:perf_hooks";
import { migrateAll } from "#db/migrator.ts";
import { createDb } from "#db/connect.ts";
import type { ImportProfile } from "#app/lib/import/profile.ts";
import { applyTestEnv, databaseUrl, PG } from "../support/env.ts";

const ROWS = Number(process.env.BENCH_ROWS ?? 1_000_000);
const DB_NAME = "rm_bench_ingest";
const root = path.resolve(import.meta.dirname, "../..");
const outDir = path.join(root, "tests/bench/.out");
mkdirSync(outDir, { recursive: true });

function psql(database: string, ...args: string[]) {
  const bin = process.env.PGBIN ? path.join(process.env.PGBIN, "psql") : "psql";
  return execFileSync(bin, ["-h", PG.host, "-p", String(PG.port), "-U", PG.user, "-d", database, "-v", "ON_ERROR_STOP=1", "-qAt", ...args], {
    env: { ...process.env, PGPASSWORD: PG.password },
    encoding: "utf8",
  });
}

// 1. The file: 15-minute readings of one logger, ISO timestamps, temperature, conductivity.
const filePath = path.join(outDir, `logger-${ROWS}.csv`);
{
  const start = Date.UTC(1995, 0, 1);
  const parts: string[] = ["Timestamp (UTC),Temp (C),Cond (uS/cm)\n"];
  let chunk = "";
  for (let i = 0; i < ROWS; i++) {
    const t = new Date(start + i * 900_000).toISOString();
    const temp = (10 + 8 * Math.sin(i / 3000) + (i % 7) * 0.013).toFixed(3);
    const cond = (450 + 120 * Math.sin(i / 900) + (i % 13) * 0.37).toFixed(2);
    chunk += `${t},${temp},${cond}\n`;
    if (chunk.length > 1 << 20) {
      parts.push(chunk);
      chunk = "";
    }
  }
  parts.push(chunk);
  writeFileSync(filePath, parts.join(""));
}
const sizeBytes = statSync(filePath).size;
const sha = await new Promise<string>((resolve) => {
  const h = createHash("sha256");
  createReadStream(filePath).on("data", (d) => h.update(d)).on("end", () => resolve(h.digest("hex")));
});
console.log(`file: ${ROWS.toLocaleString("en")} rows, ${(sizeBytes / 1048576).toFixed(1)} MB`);

// 2. A database of its own, migrated, with a site, logger, profile and upload.
execFileSync(process.env.PGBIN ? path.join(process.env.PGBIN, "psql") : "psql", ["-h", PG.host, "-p", String(PG.port), "-U", PG.user, "-d", "postgres", "-qc", `drop database if exists ${DB_NAME} with (force)`, "-c", `create database ${DB_NAME}`], {
  env: { ...process.env, PGPASSWORD: PG.password },
});
await migrateAll(databaseUrl(DB_NAME));
applyTestEnv(DB_NAME);
const db = createDb(databaseUrl(DB_NAME), 2);
const profile: ImportProfile = {
  delimiter: ",",
  decimalMark: ".",
  headerRow: 0,
  dataStartRow: 1,
  timestamp: { kind: "single", column: 0, order: "iso" },
  utcOffsetMinutes: 0,
  missingValues: [""],
  columns: [
    { index: 0, header: "Timestamp (UTC)", parameter: "timestamp", unit: null },
    { index: 1, header: "Temp (C)", parameter: "temperature", unit: "°C" },
    { index: 2, header: "Cond (uS/cm)", parameter: "conductivity", unit: "µS/cm" },
  ],
};
const site = await db.insertInto("site").values({ code: "BENCH", name: "Bench site", kind: "river", latitude: 54, longitude: -3 }).returning("id").executeTakeFirstOrThrow();
const logger = await db.insertInto("logger").values({ serial: "BENCH-1" }).returning("id").executeTakeFirstOrThrow();
const prof = await db.insertInto("import_profile").values({ name: "bench", header_signature: "bench", settings: JSON.stringify(profile) }).returning("id").executeTakeFirstOrThrow();
const uploadId = randomUUID();
const key = `uploads/${uploadId}/bench.csv`;

const { putObject, ensureBucket } = await import("#app/utils/storage.server.ts");
await ensureBucket();
await putObject(key, createReadStream(filePath), "text/csv", sizeBytes);
await db
  .insertInto("upload")
  .values({ id: uploadId, object_key: key, file_name: "bench.csv", size_bytes: sizeBytes, content_type: "text/csv", sha256: sha, site_id: site.id, logger_id: logger.id, profile_id: prof.id, status: "queued" })
  .execute();

function child(...args: string[]): Promise<{ ms: number; maxRssKb: number; rows?: number; ok?: number }> {
  return new Promise((resolve, reject) => {
    const p = spawn(process.execPath, [...INGEST_JOB_NODE_FLAGS, "--import", "tsx", path.join(root, "tests/bench/ingest-child.ts"), ...args], {
      cwd: root,
      env: process.env,
      stdio: ["ignore", "pipe", "inherit"],
    });
    let out = "";
    p.stdout.on("data", (d) => (out += d));
    p.on("exit", (code) => (code === 0 ? resolve(JSON.parse(out.trim().split("\n").pop()!)) : reject(new Error(`child exited ${code}`))));
  });
}

// 3. Parse alone (S3 → papaparse → row parser), then the real job end to end.
const parse = await child("parse", key, JSON.stringify(profile));
const parseRate = parse.rows! / (parse.ms / 1000);
console.log(`parse only:      ${Math.round(parseRate).toLocaleString("en")} rows/s (${(parse.ms / 1000).toFixed(2)} s, ${parse.ok} accepted)`);

const t0 = performance.now();
const job = await child("ingest", uploadId);
const wallMs = performance.now() - t0;
const upload = await db.selectFrom("upload").select(["status", "rows_accepted", "rows_rejected", "message"]).where("id", "=", uploadId).executeTakeFirstOrThrow();
if (upload.status !== "done" || upload.rows_accepted !== ROWS) {
  throw new Error(`ingest did not finish cleanly: ${JSON.stringify(upload)}`);
}
const rowsPerS = ROWS / (job.ms / 1000);
const peakMb = job.maxRssKb / 1024;
console.log(`ingest job:      ${Math.round(rowsPerS).toLocaleString("en")} rows/s (${(job.ms / 1000).toFixed(2)} s in the job, ${(wallMs / 1000).toFixed(2)} s with process start)`);
console.log(`worker peak RSS: ${peakMb.toFixed(0)} MB`);

// 4. psql \copy of the same file into a table of the same shape and keys.
psql(
  DB_NAME,
  "-c",
  `drop table if exists copy_target;
   create table copy_target (like readings including defaults) partition by range (time);
   alter table copy_target alter column site_id set default '${site.id}', alter column logger_id set default '${logger.id}',
     alter column upload_id set default '${uploadId}', alter column row_number set default 0;
   alter table copy_target add primary key (site_id, time, logger_id);
   create table copy_target_all partition of copy_target for values from ('1990-01-01') to ('2100-01-01');`,
);
const c0 = performance.now();
psql(DB_NAME, "-c", `\\copy copy_target (time, temperature_c, conductivity_us_cm) from '${filePath}' with (format csv, header true)`);
const copyMs = performance.now() - c0;
const copyRate = ROWS / (copyMs / 1000);
console.log(`psql \\copy:      ${Math.round(copyRate).toLocaleString("en")} rows/s (${(copyMs / 1000).toFixed(2)} s)`);
const ratio = rowsPerS / copyRate;
console.log(`targets: ≥ 150,000 rows/s end to end, ≥ 0.5 of psql \\copy, ≤ 250 MB worker peak`);
await db.destroy();
console.log(`ingest rows_per_s=${Math.round(rowsPerS)} copy_ratio=${ratio.toFixed(2)} peak_mb=${Math.round(peakMb)}`);
process.exit(0);
