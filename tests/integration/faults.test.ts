import { INGEST_JOB_NODE_FLAGS } from "../support/worker-flags.ts";
import { spawn } from "node:child_process";
import path from "node:path";
import { sql } from "kysely";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { db } from "#app/utils/db.server.ts";
import { ensureBucket } from "#app/utils/storage.server.ts";
import { request, signIn, type Jar } from "../support/app.ts";
import { createPeople, TEST_PASSWORD } from "../support/people.ts";
import { processUpload, sha256, uploadFile } from "../support/uploads.ts";

// Faults: a worker killed mid-ingest, PostgreSQL dropping every connection, S3 unreachable.
const root = path.resolve(import.meta.dirname, "../..");
const PROFILE = {
  delimiter: ",", decimalMark: ".", headerRow: 0, dataStartRow: 1,
  timestamp: { kind: "single", column: 0, order: "iso" }, utcOffsetMinutes: 0, missingValues: [""],
  columns: [
    { index: 0, header: "Timestamp (UTC)", parameter: "timestamp", unit: null },
    { index: 1, header: "Cond (uS/cm)", parameter: "conductivity", unit: "µS/cm" },
    { index: 2, header: "Temp (C)", parameter: "temperature", unit: "°C" },
  ],
};

let jar: Jar;
let siteId: string;
let loggerId: string;
let profileId: string;

beforeAll(async () => {
  await ensureBucket();
  await createPeople(db);
  jar = await signIn("technician@test.example", TEST_PASSWORD);
  siteId = (await db.insertInto("site").values({ code: "FLT1", name: "Fault site", kind: "river", latitude: 54, longitude: -3 }).returning("id").executeTakeFirstOrThrow()).id;
  loggerId = (await db.insertInto("logger").values({ serial: "FLT-1" }).returning("id").executeTakeFirstOrThrow()).id;
  profileId = (await db.insertInto("import_profile").values({ name: "faults", header_signature: "x", settings: JSON.stringify(PROFILE) }).returning("id").executeTakeFirstOrThrow()).id;
});

function bigFile(rows: number) {
  const lines = ["Timestamp (UTC),Cond (uS/cm),Temp (C)"];
  const t0 = Date.UTC(2010, 0, 1);
  for (let i = 0; i < rows; i++) lines.push(`${new Date(t0 + i * 60_000).toISOString()},${400 + (i % 50)},12.5`);
  return lines.join("\n") + "\n";
}

describe("a worker killed in the middle of an ingest", () => {
  it("leaves no rows, and the retry ends correct", async () => {
    const up = await uploadFile(jar, { fileName: "killed-worker.csv", body: bigFile(400_000), siteId, loggerId, profileId });
    const child = spawn(process.execPath, [...INGEST_JOB_NODE_FLAGS, "--import", "tsx", path.join(root, "tests/bench/ingest-child.ts"), "ingest", up.uploadId!], {
      cwd: root,
      env: process.env,
      stdio: "ignore",
    });
    // Wait until the job reports progress (rows parsed and streaming into PostgreSQL), then kill it.
    const deadline = Date.now() + 60_000;
    for (;;) {
      const u = await db.selectFrom("upload").select(["status", "rows_total"]).where("id", "=", up.uploadId!).executeTakeFirstOrThrow();
      if (u.status === "processing" && u.rows_total > 0) break;
      if (u.status === "done") throw new Error("the job finished before it could be killed: use a bigger file");
      if (Date.now() > deadline) throw new Error("the job never started");
      await new Promise((r) => setTimeout(r, 25));
    }
    child.kill("SIGKILL");
    await new Promise((r) => child.once("exit", r));
    // The killed connection's transaction is rolled back by PostgreSQL: nothing of it is visible.
    await new Promise((r) => setTimeout(r, 300));
    const partial = await db.selectFrom("readings").select((eb) => eb.fn.countAll<number>().as("n")).where("upload_id", "=", up.uploadId!).executeTakeFirstOrThrow();
    expect(Number(partial.n)).toBe(0);
    // The queue would run it again; so do we.
    const done = await processUpload(up.uploadId!);
    expect(done.status).toBe("done");
    expect(done.rows_accepted).toBe(400_000);
  }, 180_000);
});

describe("PostgreSQL dropping every connection", () => {
  it("the app recovers without a restart", async () => {
    const before = await request("/", { jar });
    expect(before.status).toBe(200);
    const dbName = new URL(process.env.DATABASE_URL!).pathname.slice(1);
    // All of the app's connections cut at once (a real stop and start of PostgreSQL is in
    // pg-restart.test.ts, on a cluster of its own). Connections in the middle of a query and idle
    // ones both break; the process must not crash on either (db/connect.ts guardPool).
    await sql`select pg_terminate_backend(pid) from pg_stat_activity where datname = ${dbName} and pid <> pg_backend_pid()`.execute(db).catch(() => {});
    // The first request after the cut may still find a dead idle connection; the pool replaces it.
    let status = 0;
    for (let i = 0; i < 3 && status !== 200; i++) {
      status = (await request("/", { jar }).catch(() => ({ status: 0 }))).status;
    }
    expect(status).toBe(200);
    expect((await request("/api/health")).status).toBe(200);
  });
});

describe("S3 unavailable during an upload", () => {
  // A second instance of the production build whose S3 endpoint is a closed port.
  const port = 3290 + Math.floor(Math.random() * 50);
  const origin = `http://127.0.0.1:${port}`;
  let server: ReturnType<typeof spawn>;
  beforeAll(async () => {
    server = spawn(process.execPath, ["--import", "tsx", "app/serve.ts", process.env.TEST_BUILD_DIR ? path.resolve(process.env.TEST_BUILD_DIR, "server/index.js") : "./build/server/index.js"], {
      cwd: root,
      env: { ...process.env, NODE_ENV: "production", PORT: String(port), HOST: "127.0.0.1", WEB_CONCURRENCY: "1", APP_ORIGIN: origin, S3_ENDPOINT: "http://127.0.0.1:9" },
      stdio: "ignore",
    });
    const end = Date.now() + 30_000;
    while (Date.now() < end) {
      if (await fetch(`${origin}/api/health`).then((r) => r.ok, () => false)) return;
      await new Promise((r) => setTimeout(r, 200));
    }
    throw new Error("second app instance did not start");
  }, 60_000);
  afterAll(() => {
    server?.kill("SIGTERM");
  });

  it("the person gets a clear, retryable error and the upload waits", async () => {
    const post = (form: Record<string, string>) =>
      fetch(`${origin}/api/uploads`, {
        method: "POST",
        headers: { "Content-Type": "application/x-www-form-urlencoded", Cookie: jar.cookie!, Origin: origin },
        body: new URLSearchParams(form),
      });
    const body = bigFile(10);
    // Presigning needs no call to S3; confirming does (it checks the object arrived).
    const presign = await post({ intent: "presign", fileName: "storage-down.csv", sizeBytes: String(Buffer.byteLength(body)), contentType: "text/csv", sha256: sha256(body), siteId, loggerId, profileId });
    expect(presign.status).toBe(200);
    const { uploadId, url } = (await presign.json()) as { uploadId: string; url: string };
    // The browser's PUT cannot reach storage either.
    await expect(fetch(url, { method: "PUT", body })).rejects.toThrow();
    const confirm = await post({ intent: "confirm", uploadId });
    expect(confirm.status).toBe(503);
    const json = (await confirm.json()) as { retryable: boolean; errors: { file: string[] } };
    expect(json.retryable).toBe(true);
    expect(json.errors.file[0]).toMatch(/not answering.*try again/i);
    const upload = await db.selectFrom("upload").select("status").where("id", "=", uploadId).executeTakeFirstOrThrow();
    expect(upload.status).toBe("awaiting-file");
  }, 60_000);
});
