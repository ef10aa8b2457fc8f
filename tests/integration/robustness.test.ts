import { Readable } from "node:stream";
import { beforeAll, describe, expect, it } from "vitest";
import { sql } from "kysely";
import { db } from "#app/utils/db.server.ts";
import { ensureBucket } from "#app/utils/storage.server.ts";
import { ingestObject, IngestProblem } from "#app/jobs/ingest.server.ts";
import { withClient } from "#app/jobs/pg-client.server.ts";
import type { ImportProfile } from "#app/lib/import/profile.ts";
import { currentSettingsId } from "#app/models/derivation.server.ts";
import { signIn, type Jar } from "../support/app.ts";
import { createPeople, TEST_PASSWORD } from "../support/people.ts";
import { processUpload, uploadFile } from "../support/uploads.ts";

// Robustness of the import path: random input never crashes, hangs or leaves partial rows; many
// overlapping uploads of one logger at once store each reading exactly once.
const PROFILE: ImportProfile = {
  delimiter: ",",
  decimalMark: ".",
  headerRow: 0,
  dataStartRow: 1,
  timestamp: { kind: "single", column: 0, order: "iso" },
  utcOffsetMinutes: 0,
  missingValues: ["", "NaN"],
  columns: [
    { index: 0, header: "Timestamp (UTC)", parameter: "timestamp", unit: null },
    { index: 1, header: "Cond (uS/cm)", parameter: "conductivity", unit: "µS/cm" },
    { index: 2, header: "Temp (C)", parameter: "temperature", unit: "°C" },
  ],
};

let siteId: string;
let loggerId: string;
let profileId: string;
let jar: Jar;

beforeAll(async () => {
  await ensureBucket();
  await createPeople(db);
  jar = await signIn("technician@test.example", TEST_PASSWORD);
  siteId = (await db.insertInto("site").values({ code: "FUZ1", name: "Fuzz site", kind: "river", latitude: 54, longitude: -3 }).returning("id").executeTakeFirstOrThrow()).id;
  loggerId = (await db.insertInto("logger").values({ serial: "FUZ-1" }).returning("id").executeTakeFirstOrThrow()).id;
  profileId = (await db.insertInto("import_profile").values({ name: "fuzz", header_signature: "f", settings: JSON.stringify(PROFILE) }).returning("id").executeTakeFirstOrThrow()).id;
});

/** Deterministic generator so a failure can be replayed (seed printed in the test name). */
function prng(seed: number) {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = Math.imul(a ^ (a >>> 15), a | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

function fuzzFile(seed: number): Buffer {
  const r = prng(seed);
  const pick = <T,>(xs: T[]) => xs[Math.floor(r() * xs.length)];
  const kind = seed % 6;
  if (kind === 0) return Buffer.from(Array.from({ length: 200 + Math.floor(r() * 4000) }, () => Math.floor(r() * 256))); // random bytes
  if (kind === 1) {
    // invalid UTF-8 sequences inside otherwise plausible rows
    const rows = ["Timestamp (UTC),Cond (uS/cm),Temp (C)"];
    for (let i = 0; i < 50; i++) rows.push(`2025-01-01T00:${String(i).padStart(2, "0")}:00Z,${400 + i},1${i % 9}`);
    const b = Buffer.from(rows.join("\n"));
    for (let i = 0; i < 20; i++) b[Math.floor(r() * b.length)] = pick([0xc3, 0xff, 0xfe, 0x80]);
    return b;
  }
  if (kind === 2) return Buffer.from("Timestamp (UTC),Cond (uS/cm),Temp (C)\n" + "9".repeat(300_000) + "\n"); // a very long line
  if (kind === 3) return Buffer.from(Array.from({ length: 20 }, () => Array.from({ length: 5000 }, (_, i) => String(i)).join(",")).join("\n")); // many columns
  if (kind === 4) {
    // random delimiters, quotes and line ends
    const chars = [",", ";", "\t", '"', "'", "\n", "\r\n", "a", "1", ".", "-", " ", "=", "T", "Z", ":"];
    return Buffer.from(Array.from({ length: 3000 }, () => pick(chars)).join(""));
  }
  // unbalanced quotes across many lines
  return Buffer.from('Timestamp (UTC),Cond (uS/cm),Temp (C)\n"2025-01-01T00:00:00Z,400,12\n' + Array.from({ length: 100 }, (_, i) => `2025-01-02T00:${String(i % 60).padStart(2, "0")}:00Z,${i},10`).join("\n"));
}

describe("fuzzing the import path", () => {
  for (let seed = 1; seed <= 24; seed++) {
    it(`seed ${seed}: ends with a clear result or a clear error, never partial rows`, async () => {
      const body = fuzzFile(seed);
      const uploadId = crypto.randomUUID();
      await db
        .insertInto("upload")
        .values({ id: uploadId, object_key: `fuzz/${uploadId}`, file_name: `fuzz-${seed}.csv`, size_bytes: body.length, content_type: "text/csv", sha256: "0".repeat(64), site_id: siteId, logger_id: loggerId, profile_id: profileId })
        .execute();
      const settingsId = await currentSettingsId(siteId);
      const settings = await db.selectFrom("derivation_settings").selectAll().where("id", "=", settingsId).executeTakeFirstOrThrow();
      const outcome = await Promise.race([
        withClient(async (client) => {
          await client.query("begin");
          try {
            const result = await ingestObject({
              client,
              objectKey: "unused",
              fileName: `fuzz-${seed}.csv`,
              sizeBytes: body.length,
              upload: { id: uploadId, siteId, loggerId },
              profile: PROFILE,
              settings,
              replaceOwnReadings: false,
              body: Readable.from([body]),
            });
            await client.query("commit");
            return { ok: true as const, result };
          } catch (e) {
            await client.query("rollback");
            return { ok: false as const, error: e as Error };
          }
        }),
        new Promise<"hang">((resolve) => setTimeout(() => resolve("hang"), 20_000)),
      ]);
      expect(outcome).not.toBe("hang");
      if (outcome === "hang") return;
      const stored = await db.selectFrom("readings").select((eb) => eb.fn.countAll<number>().as("n")).where("upload_id", "=", uploadId).executeTakeFirstOrThrow();
      if (outcome.ok) {
        // A clear result: every data row is accounted for, and exactly the accepted rows are stored.
        const r = outcome.result;
        expect(r.accepted + r.rejected + r.duplicates).toBe(r.rowsTotal);
        expect(Number(stored.n)).toBe(r.accepted);
      } else {
        // A clear error meant for a person, and nothing stored.
        expect(outcome.error).toBeInstanceOf(IngestProblem);
        expect(outcome.error.message.length).toBeGreaterThan(10);
        expect(Number(stored.n)).toBe(0);
      }
    });
  }
});

describe("concurrent overlapping uploads", () => {
  it("20 overlapping files of one logger at once store each reading exactly once", async () => {
    // File k covers 15-minute steps k*10 … k*10+39: each overlaps the next three.
    const start = Date.parse("2025-11-01T00:00:00Z");
    const files = Array.from({ length: 20 }, (_, k) => {
      const rows = ["Timestamp (UTC),Cond (uS/cm),Temp (C)"];
      for (let i = k * 10; i < k * 10 + 40; i++) rows.push(`${new Date(start + i * 900_000).toISOString()},${500 + i},12`);
      return rows.join("\n") + "\n";
    });
    const uploads = await Promise.all(files.map((body, k) => uploadFile(jar, { fileName: `overlap-${k}.csv`, body, siteId, loggerId, profileId })));
    expect(uploads.every((u) => u.ok)).toBe(true);
    const done = await Promise.all(uploads.map((u) => processUpload(u.uploadId!)));
    expect(done.every((u) => u.status === "done")).toBe(true);
    // Steps 0 … 229 inclusive: 230 distinct timestamps.
    const distinct = 19 * 10 + 40;
    const stored = await sql<{ n: number; distinct_times: number }>`
      select count(*)::int as n, count(distinct time)::int as distinct_times from readings
      where site_id = ${siteId} and logger_id = ${loggerId} and time >= ${new Date(start)} and time < ${new Date(start + 400 * 900_000)}`.execute(db);
    expect(stored.rows[0]).toEqual({ n: distinct, distinct_times: distinct });
    const accepted = done.reduce((s, u) => s + u.rows_accepted, 0);
    const skipped = done.reduce((s, u) => s + u.rows_duplicate, 0);
    expect(accepted).toBe(distinct);
    expect(accepted + skipped).toBe(20 * 40);
  });
});
