import { readFileSync } from "node:fs";
import path from "node:path";
import { beforeAll, describe, expect, it } from "vitest";
import { db } from "#app/utils/db.server.ts";
import { ensureBucket } from "#app/utils/storage.server.ts";
import { sniffFile } from "#app/lib/import/sniff.ts";
import type { ImportProfile } from "#app/lib/import/profile.ts";
import { request, signIn, type Jar } from "../support/app.ts";
import { createPeople, TEST_PASSWORD } from "../support/people.ts";
import { processUpload, uploadFile } from "../support/uploads.ts";

// Every bad-input fixture through the whole path (presign → PUT → confirm → ingest job): a specific
// human message, and nothing already stored is lost.
const dir = path.resolve(import.meta.dirname, "../fixtures/logger-files");
const read = (name: string) => readFileSync(path.join(dir, name));

let jar: Jar;
let siteId: string;
let loggerId: string;
const profileIds = new Map<string, string>();

/** The profile the uploads page would propose for this file (the sniffer's, when it has no questions). */
async function profileFor(fixture: string, override?: ImportProfile) {
  const text = read(fixture).toString("utf8");
  const profile = override ?? sniffFile(text, { fileName: fixture }).profile;
  if (!profile) throw new Error(`${fixture}: the sniffer left questions open`);
  const key = JSON.stringify(profile);
  if (!profileIds.has(key)) {
    const row = await db.insertInto("import_profile").values({ name: `p${profileIds.size}`, header_signature: "t", settings: key }).returning("id").executeTakeFirstOrThrow();
    profileIds.set(key, row.id);
  }
  return profileIds.get(key)!;
}

async function ingest(fixture: string, override?: ImportProfile) {
  const profileId = fixture === "binary-renamed.csv" || fixture === "header-only.csv" ? await profileFor("non-numeric-values.csv") : await profileFor(fixture, override);
  const up = await uploadFile(jar, { fileName: fixture, body: read(fixture), siteId, loggerId, profileId });
  if (!up.ok) return { refused: up };
  const upload = await processUpload(up.uploadId!);
  const errors = await db.selectFrom("upload_error").selectAll().where("upload_id", "=", up.uploadId!).orderBy("row_number").execute();
  return { upload, errors, uploadId: up.uploadId! };
}

const COMMA_3: ImportProfile = {
  delimiter: ",", decimalMark: ".", headerRow: 0, dataStartRow: 1,
  timestamp: { kind: "single", column: 0, order: "iso" }, utcOffsetMinutes: 0, missingValues: [""],
  columns: [
    { index: 0, header: "Timestamp", parameter: "timestamp", unit: null },
    { index: 1, header: "Cond (µS/cm)", parameter: "conductivity", unit: "µS/cm" },
    { index: 2, header: "Temperature (C)", parameter: "temperature", unit: "°C" },
  ],
};

let storedBefore = 0;

beforeAll(async () => {
  await ensureBucket();
  await createPeople(db);
  jar = await signIn("technician@test.example", TEST_PASSWORD);
  siteId = (await db.insertInto("site").values({ code: "BAD1", name: "Bad input site", kind: "river", latitude: 54, longitude: -3 }).returning("id").executeTakeFirstOrThrow()).id;
  loggerId = (await db.insertInto("logger").values({ serial: "BAD-1" }).returning("id").executeTakeFirstOrThrow()).id;
  // Something already stored, which no bad file may disturb.
  const good = await ingest("comma-iso-utc.csv");
  expect(good.upload?.status).toBe("done");
  storedBefore = good.upload!.rows_accepted;
});

async function storedOfGoodFile() {
  const r = await db.selectFrom("readings").innerJoin("upload", "upload.id", "readings.upload_id").select((eb) => eb.fn.countAll<number>().as("n")).where("upload.file_name", "=", "comma-iso-utc.csv").executeTakeFirstOrThrow();
  return Number(r.n);
}

describe("bad input, each with a specific message", () => {
  it("empty file: refused at upload with a clear message", async () => {
    const r = await ingest("empty.csv", COMMA_3);
    expect(r.refused?.status).toBe(400);
    expect(r.refused?.errors?.sizeBytes?.[0]).toBe("The file is empty");
  });

  it("header only", async () => {
    const { upload } = await ingest("header-only.csv");
    expect(upload?.status).toBe("failed");
    expect(upload?.message).toBe("The file has a header but no data rows.");
  });

  it("binary file renamed .csv", async () => {
    const { upload } = await ingest("binary-renamed.csv");
    expect(upload?.status).toBe("failed");
    expect(upload?.message).toMatch(/not a text file/);
  });

  it("wrong delimiter: one message naming the likely delimiter, no row errors flood", async () => {
    const { upload, errors } = await ingest("wrong-delimiter.csv", COMMA_3);
    expect(upload?.status).toBe("failed");
    expect(upload?.message).toContain(";");
    expect(errors!.length).toBeLessThanOrEqual(50);
  });

  it("non-numeric values: rejected rows say which value is not a number", async () => {
    const { upload, errors } = await ingest("non-numeric-values.csv");
    expect(upload?.status).toBe("done");
    const abc = errors!.find((e) => e.raw_value === "abc");
    expect(abc?.reason).toMatch(/not a number/);
    expect(abc?.row_number).toBe(3);
  });

  it("sentinel values become missing, not errors; a row with nothing measured is rejected", async () => {
    const { upload, errors, uploadId } = await ingest("sentinel-values.csv");
    expect(upload?.status).toBe("done");
    const rows = await db.selectFrom("readings").select(["row_number", "conductivity_us_cm"]).where("upload_id", "=", uploadId!).orderBy("row_number").execute();
    expect(rows.find((r) => r.row_number === 3)?.conductivity_us_cm).toBeNull(); // -9999
    expect(rows.find((r) => r.row_number === 4)?.conductivity_us_cm).toBeNull(); // NaN
    expect(errors!.some((e) => /no measurement/.test(e.reason))).toBe(true);
  });

  it("impossible values: negative conductivity and 150 °C", async () => {
    const { errors } = await ingest("impossible-values.csv");
    expect(errors!.find((e) => e.row_number === 3)?.reason).toMatch(/negative/);
    expect(errors!.find((e) => e.row_number === 4)?.reason).toMatch(/150 °C is outside the plausible range/);
  });

  it("too many / too few fields", async () => {
    const { errors } = await ingest("ragged-rows.csv");
    expect(errors!.find((e) => e.row_number === 3)?.reason).toMatch(/expected 3 fields, found 6/);
    expect(errors!.find((e) => e.row_number === 4)?.reason).toMatch(/expected 3 fields, found 2/);
  });

  it("duplicate timestamps inside a file: the first is kept, the others reported", async () => {
    const { upload, errors } = await ingest("duplicate-timestamps.csv");
    expect(upload?.status).toBe("done");
    expect(errors!.filter((e) => /same timestamp/.test(e.reason)).length).toBeGreaterThanOrEqual(2);
  });

  it("timestamps in the future", async () => {
    // Two rows dated 2099 between two good ones (see the fixture).
    const { upload, errors } = await ingest("future-timestamps.csv");
    expect(upload?.rows_accepted).toBe(2);
    expect(errors!.map((e) => e.row_number)).toEqual([3, 4]);
    expect(errors!.every((e) => /future/.test(e.reason))).toBe(true);
  });

  it("nothing already stored was lost", async () => {
    expect(await storedOfGoodFile()).toBe(storedBefore);
  });

  it("the error report of a bad file downloads as CSV", async () => {
    const { uploadId } = await ingest("formula-injection.csv");
    const res = await request(`/api/uploads/${uploadId}/errors.csv`, { jar });
    expect(res.status).toBe(200);
    expect(await res.text()).toContain("'=HYPERLINK");
  });
});
