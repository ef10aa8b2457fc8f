import { INGEST_JOB_NODE_FLAGS } from "../support/worker-flags.ts";
import { spawn } from "node:child_process";
import { createHash } from "node:crypto";
import { createReadStream, createWriteStream, mkdirSync, statSync } from "node:fs";
import path from "node:path";
import { beforeAll, describe, expect, it } from "vitest";
import { db } from "#app/utils/db.server.ts";
import { ensureBucket } from "#app/utils/storage.server.ts";
import { request, signIn, type Jar } from "../support/app.ts";
import { createPeople, TEST_PASSWORD } from "../support/people.ts";

// A 100 MB logger file goes up by presigned PUT and is ingested by a worker process whose memory
// stays bounded (the file is streamed, never held whole).
const root = path.resolve(import.meta.dirname, "../..");
const TARGET_BYTES = 100 * 1024 * 1024;
const PEAK_LIMIT_MB = 250;

let jar: Jar;
let siteId: string;
let loggerId: string;
let profileId: string;
let filePath: string;
let rows = 0;

beforeAll(async () => {
  await ensureBucket();
  await createPeople(db);
  jar = await signIn("technician@test.example", TEST_PASSWORD);
  siteId = (await db.insertInto("site").values({ code: "BIG1", name: "Large file site", kind: "river", latitude: 54, longitude: -3 }).returning("id").executeTakeFirstOrThrow()).id;
  loggerId = (await db.insertInto("logger").values({ serial: "BIG-1", logging_interval_s: 60 }).returning("id").executeTakeFirstOrThrow()).id;
  const profile = {
    delimiter: ",", decimalMark: ".", headerRow: 0, dataStartRow: 1,
    timestamp: { kind: "single", column: 0, order: "iso" }, utcOffsetMinutes: 0, missingValues: [""],
    columns: [
      { index: 0, header: "Timestamp (UTC)", parameter: "timestamp", unit: null },
      { index: 1, header: "Cond (uS/cm)", parameter: "conductivity", unit: "µS/cm" },
      { index: 2, header: "Temp (C)", parameter: "temperature", unit: "°C" },
      { index: 3, header: "pH", parameter: "ph", unit: null },
      { index: 4, header: "Batt (V)", parameter: "battery", unit: "V" },
    ],
  };
  profileId = (await db.insertInto("import_profile").values({ name: "large", header_signature: "l", settings: JSON.stringify(profile) }).returning("id").executeTakeFirstOrThrow()).id;

  // One reading a minute from 2000-01-01: about 1.9 million rows in 100 MB.
  const dir = path.join(root, "tests/bench/.out");
  mkdirSync(dir, { recursive: true });
  filePath = path.join(dir, "large-100mb.csv");
  const out = createWriteStream(filePath);
  let bytes = 0;
  let chunk = "Timestamp (UTC),Cond (uS/cm),Temp (C),pH,Batt (V)\n";
  const t0 = Date.UTC(2000, 0, 1);
  while (bytes + chunk.length < TARGET_BYTES) {
    chunk += `${new Date(t0 + rows * 60_000).toISOString()},${(350 + (rows % 400) / 4).toFixed(2)},${(4 + (rows % 160) / 10).toFixed(1)},7.${rows % 10},12.${rows % 10}\n`;
    rows++;
    if (chunk.length > 1 << 20) {
      bytes += chunk.length;
      if (!out.write(chunk)) await new Promise<void>((r) => out.once("drain", () => r()));
      chunk = "";
    }
  }
  out.end(chunk);
  await new Promise<void>((r) => out.once("finish", () => r()));
}, 120_000);

describe("a 100 MB file", () => {
  it("uploads by presigned PUT and ingests whole with bounded memory", async () => {
    const size = statSync(filePath).size;
    expect(size).toBeGreaterThan(TARGET_BYTES - (2 << 20));
    const sha = await new Promise<string>((resolve) => {
      const h = createHash("sha256");
      createReadStream(filePath).on("data", (d) => h.update(d)).on("end", () => resolve(h.digest("hex")));
    });
    const presign = await request("/api/uploads", {
      jar,
      form: { intent: "presign", fileName: "large-100mb.csv", sizeBytes: String(size), contentType: "text/csv", sha256: sha, siteId, loggerId, profileId },
    });
    const p = (await presign.json()) as { uploadId: string; url: string; headers: Record<string, string> };
    const put = await fetch(p.url, {
      method: "PUT",
      headers: { ...p.headers, "Content-Length": String(size) },
      body: createReadStream(filePath) as unknown as BodyInit,
      duplex: "half",
    } as RequestInit);
    expect(put.status).toBe(200);
    const confirm = await request("/api/uploads", { jar, form: { intent: "confirm", uploadId: p.uploadId } });
    expect(((await confirm.json()) as { status: string }).status).toBe("queued");

    // The worker's job, in its own process, so its peak memory is its own.
    const child = spawn(process.execPath, [...INGEST_JOB_NODE_FLAGS, "--import", "tsx", path.join(root, "tests/bench/ingest-child.ts"), "ingest", p.uploadId], { cwd: root, env: process.env, stdio: ["ignore", "pipe", "inherit"] });
    let out = "";
    child.stdout.on("data", (d) => (out += d));
    const code = await new Promise((r) => child.once("exit", r));
    expect(code).toBe(0);
    const { maxRssKb } = JSON.parse(out.trim().split("\n").pop()!) as { maxRssKb: number };
    expect(maxRssKb / 1024).toBeLessThan(PEAK_LIMIT_MB);

    const upload = await db.selectFrom("upload").selectAll().where("id", "=", p.uploadId).executeTakeFirstOrThrow();
    expect(upload.status).toBe("done");
    expect(upload.rows_accepted).toBe(rows);
    expect(upload.rows_rejected).toBe(0);
    expect(Number(upload.bytes_processed)).toBe(size);
  }, 300_000);
});
