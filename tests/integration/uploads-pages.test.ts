import { beforeAll, describe, expect, it } from "vitest";
import type { ImportProfile } from "#app/lib/import/profile.ts";
import { db } from "#app/utils/db.server.ts";
import { ensureBucket } from "#app/utils/storage.server.ts";
import { request, signIn, type Jar } from "../support/app.ts";
import { createPeople, TEST_PASSWORD } from "../support/people.ts";
import { processUpload, uploadFile } from "../support/uploads.ts";

// The upload and import-profile pages against the real PostgreSQL and the S3 fake: who may see
// an upload, the profile editor's save (ambiguous dates, taken names, audit), and "Process again".

const WRONG_UNIT: ImportProfile = {
  delimiter: ",",
  decimalMark: ".",
  headerRow: 0,
  dataStartRow: 1,
  timestamp: { kind: "single", column: 0, order: "iso" },
  utcOffsetMinutes: 0,
  missingValues: [""],
  columns: [
    { index: 0, header: "Timestamp (UTC)", parameter: "timestamp", unit: null },
    // The file's conductivity is in µS/cm; this profile reads it as mS/m (1 mS/m = 10 µS/cm).
    { index: 1, header: "Cond (uS/cm)", parameter: "conductivity", unit: "mS/m" },
    { index: 2, header: "Temp", parameter: "temperature", unit: "°C" },
  ],
};

function csv(startIso: string, count: number, extra: string[] = []) {
  const start = Date.parse(startIso);
  const rows = Array.from({ length: count }, (_, i) => `${new Date(start + i * 15 * 60_000).toISOString()},${500 + i},12`);
  return ["Timestamp (UTC),Cond (uS/cm),Temp", ...rows, ...extra].join("\n") + "\n";
}

/** The editor's fields for a two-column layout whose dates read either way (03/04/2025). */
function editorForm(overrides: Record<string, string> = {}) {
  return {
    intent: "save",
    name: "Quell bridge export",
    delimiter: "comma",
    decimalMark: "point",
    headerLine: "1",
    dataStartLine: "2",
    utcOffset: "0",
    timeFormat: "",
    ambiguousDates: "on",
    "missingValues[0]": "-9999",
    "columns[0].index": "0",
    "columns[0].header": "Date/Time",
    "columns[0].parameter": "timestamp",
    "columns[1].index": "1",
    "columns[1].header": "Cond (uS/cm)",
    "columns[1].parameter": "conductivity",
    "columns[1].unit": "µS/cm",
    ...overrides,
  };
}

let technician: Jar;
let officer: Jar;
let siteId: string;
let loggerId: string;
let wrongProfileId: string;
let officersUpload: string;
let ownUpload: string;

beforeAll(async () => {
  await ensureBucket();
  await createPeople(db);
  technician = await signIn("technician@test.example", TEST_PASSWORD);
  officer = await signIn("officer@test.example", TEST_PASSWORD);
  siteId = (
    await db
      .insertInto("site")
      .values({ code: "UPG1", name: "Upload page weir", kind: "river", latitude: 54.1, longitude: -2.8 })
      .returning("id")
      .executeTakeFirstOrThrow()
  ).id;
  loggerId = (await db.insertInto("logger").values({ serial: "UPG-0001" }).returning("id").executeTakeFirstOrThrow()).id;
  wrongProfileId = (
    await db
      .insertInto("import_profile")
      .values({ name: "Conductivity in mS/m", header_signature: "timestamp (utc)|cond (us/cm)|temp", settings: JSON.stringify(WRONG_UNIT) })
      .returning("id")
      .executeTakeFirstOrThrow()
  ).id;
  const a = await uploadFile(officer, { fileName: "officer-round.csv", body: csv("2025-02-01T00:00:00Z", 4), siteId, loggerId, profileId: wrongProfileId });
  officersUpload = a.uploadId!;
  await processUpload(officersUpload);
  // One value a browser would run as markup if the page rendered it as HTML.
  const b = await uploadFile(technician, {
    fileName: "own-round.csv",
    body: csv("2025-03-01T00:00:00Z", 4, ["2025-03-01T01:00:00Z,<img src=x onerror=alert(1)>,12"]),
    siteId,
    loggerId,
    profileId: wrongProfileId,
  });
  ownUpload = b.uploadId!;
  await processUpload(ownUpload);
});

describe("who may see an upload", () => {
  it("a technician opens their own upload but gets 403 for another person's", async () => {
    const own = await request(`/uploads/${ownUpload}`, { jar: technician });
    expect(own.status).toBe(200);
    expect(await own.text()).toContain("own-round.csv");

    const other = await request(`/uploads/${officersUpload}`, { jar: technician });
    expect(other.status).toBe(403);
    // Nor through the editor's "Fix the profile", nor by re-processing it.
    expect((await request(`/import-profiles/new?upload=${officersUpload}`, { jar: technician })).status).toBe(403);
    const post = await request(`/uploads/${officersUpload}`, { jar: technician, form: { intent: "reprocess", profileId: wrongProfileId } });
    expect(post.status).toBe(403);
  });

  it("an officer opens anyone's upload", async () => {
    const res = await request(`/uploads/${ownUpload}`, { jar: officer });
    expect(res.status).toBe(200);
    expect(await res.text()).toContain("own-round.csv");
  });

  it("status polling leaves out other people's uploads for a technician", async () => {
    const ids = `${ownUpload},${officersUpload}`;
    const mine = (await (await request(`/api/uploads?ids=${ids}`, { jar: technician })).json()) as { uploads: { id: string }[] };
    expect(mine.uploads.map((u) => u.id)).toEqual([ownUpload]);
    const all = (await (await request(`/api/uploads?ids=${ids}`, { jar: officer })).json()) as { uploads: { id: string }[] };
    expect(all.uploads.map((u) => u.id).sort()).toEqual([ownUpload, officersUpload].sort());
  });

  it("the uploads list shows a technician only their own uploads", async () => {
    const html = await (await request("/uploads", { jar: technician })).text();
    expect(html).toContain("own-round.csv");
    expect(html).not.toContain("officer-round.csv");
    const all = await (await request("/uploads", { jar: officer })).text();
    expect(all).toContain("officer-round.csv");
  });

  it("shows a rejected value from the file as text, never as markup", async () => {
    const html = await (await request(`/uploads/${ownUpload}`, { jar: technician })).text();
    expect(html).toContain("&lt;img src=x onerror=alert(1)&gt;");
    expect(html).not.toContain("<img src=x");
    expect(html).toContain(`/api/uploads/${ownUpload}/errors.csv`);
  });
});

describe("times at the site's clock", () => {
  it("shows an upload's readings and times in the site's time zone, on the pages and in status polling", async () => {
    const london = (
      await db
        .insertInto("site")
        .values({ code: "UPG2", name: "Upload page spring", kind: "spring", latitude: 54.2, longitude: -2.9, time_zone: "Europe/London" })
        .returning("id")
        .executeTakeFirstOrThrow()
    ).id;
    const logger = (await db.insertInto("logger").values({ serial: "UPG-0002" }).returning("id").executeTakeFirstOrThrow()).id;
    const up = await uploadFile(technician, { fileName: "summer-round.csv", body: csv("2025-06-02T00:00:00Z", 4), siteId: london, loggerId: logger, profileId: wrongProfileId });
    await processUpload(up.uploadId!);
    // 00:00–00:45 UTC on 2 June is 01:00–01:45 British Summer Time (UTC+1 from the last Sunday of
    // March to the last Sunday of October: the Summer Time Order in force in the UK).
    const html = await (await request(`/uploads/${up.uploadId}`, { jar: technician })).text();
    expect(html).toContain("2 Jun 2025, 01:00 BST to 2 Jun 2025, 01:45 BST");
    const status = (await (await request(`/api/uploads?ids=${up.uploadId}`, { jar: technician })).json()) as { uploads: { siteTimeZone: string }[] };
    expect(status.uploads[0].siteTimeZone).toBe("Europe/London");
    // A site on UTC keeps UTC (its last row, at 01:00, was rejected).
    expect(await (await request(`/uploads/${ownUpload}`, { jar: technician })).text()).toContain("1 Mar 2025, 00:00 UTC to 1 Mar 2025, 00:45 UTC");
  });
});

describe("the profile editor's save", () => {
  it("refuses dates that read either way until day-first or month-first is chosen", async () => {
    const res = await request("/import-profiles/new", { jar: technician, form: editorForm() });
    expect(res.status).toBe(400);
    const html = await res.text();
    expect(html).toContain("The dates in this file read either way: choose day-first or month-first");
    // The error sits on the field: the select is marked invalid and points at the message.
    expect(html).toMatch(/<select[^>]*id="profile-new-timeFormat"[^>]*aria-invalid="true"/);

    // ISO is no answer for such dates either.
    const iso = await request("/import-profiles/new", { jar: technician, form: editorForm({ timeFormat: "iso" }) });
    expect(iso.status).toBe(400);
    expect(await db.selectFrom("import_profile").select("id").where("name", "=", "Quell bridge export").executeTakeFirst()).toBeUndefined();
  });

  it("saves with day-first chosen, with the header signature and an audit row", async () => {
    const res = await request("/import-profiles/new", { jar: technician, form: editorForm({ timeFormat: "dmy" }) });
    expect(res.status).toBe(302);
    const row = await db
      .selectFrom("import_profile")
      .select(["id", "settings", "header_signature"])
      .where("name", "=", "Quell bridge export")
      .executeTakeFirstOrThrow();
    expect(res.headers.get("Location")).toBe(`/import-profiles/${row.id}?saved=created`);
    const settings = row.settings as ImportProfile;
    expect(settings.timestamp).toEqual({ kind: "single", column: 0, order: "dmy" });
    expect(settings.headerRow).toBe(0); // header line 1 in the form
    expect(settings.missingValues).toEqual(["", "-9999"]);
    // Lower-cased header fields joined with "|" (headerSignature in app/lib/import/sniff.ts).
    expect(row.header_signature).toBe("date/time|cond (us/cm)");
    const audit = await db.selectFrom("audit_event").select(["action", "entity"]).where("entity_id", "=", row.id).execute();
    expect(audit).toEqual([{ action: "create", entity: "import_profile" }]);

    // The list names it with a summary of the columns it reads (PARAMETER_LABELS and the unit).
    const list = await (await request("/import-profiles", { jar: technician })).text();
    expect(list).toContain("Quell bridge export");
    expect(list).toContain("date and time · conductivity (µS/cm)");
  });

  it("refuses a name another profile has, whatever its case", async () => {
    const res = await request("/import-profiles/new", { jar: technician, form: editorForm({ timeFormat: "dmy", name: "QUELL BRIDGE export" }) });
    expect(res.status).toBe(400);
    const html = await res.text();
    expect(html).toContain("Another profile already has this name");
    expect(html).toMatch(/<input[^>]*id="profile-new-name"[^>]*aria-invalid="true"/);
    const count = await db.selectFrom("import_profile").select((eb) => eb.fn.countAll<number>().as("n")).where("name", "ilike", "quell bridge export").executeTakeFirstOrThrow();
    expect(Number(count.n)).toBe(1);
  });

  it("updates a profile and audits the change", async () => {
    const { id } = await db.selectFrom("import_profile").select("id").where("name", "=", "Quell bridge export").executeTakeFirstOrThrow();
    const res = await request(`/import-profiles/${id}`, { jar: officer, form: editorForm({ timeFormat: "mdy", ambiguousDates: "on" }) });
    expect(res.status).toBe(302);
    const row = await db.selectFrom("import_profile").select("settings").where("id", "=", id).executeTakeFirstOrThrow();
    expect((row.settings as ImportProfile).timestamp).toEqual({ kind: "single", column: 0, order: "mdy" });
    const actions = await db.selectFrom("audit_event").select("action").where("entity_id", "=", id).orderBy("at").execute();
    expect(actions.map((a) => a.action)).toEqual(["create", "update"]);
  });
});

describe("Process again", () => {
  it("the editor opened from an upload shows the stored file's first lines", async () => {
    const res = await request(`/import-profiles/${wrongProfileId}?upload=${ownUpload}`, { jar: technician });
    expect(res.status).toBe(200);
    const html = await res.text();
    // A timestamp from the file's second line, read back from storage (bytes 0–65535).
    expect(html).toContain("2025-03-01T00:15:00.000Z");
  });

  it("re-reads the file with another profile, replacing only this upload's readings", async () => {
    const before = await db.selectFrom("readings").select(["conductivity_us_cm"]).where("upload_id", "=", ownUpload).orderBy("time").execute();
    // 500…503 read as mS/m are 5000…5030 µS/cm.
    expect(before.map((r) => r.conductivity_us_cm)).toEqual([5000, 5010, 5020, 5030]);
    const officersBefore = await db.selectFrom("readings").select(["time", "conductivity_us_cm"]).where("upload_id", "=", officersUpload).orderBy("time").execute();
    expect(officersBefore).toHaveLength(4);

    const corrected = (
      await db
        .insertInto("import_profile")
        .values({
          name: "Conductivity in µS/cm",
          header_signature: "timestamp (utc)|cond (us/cm)|temp",
          settings: JSON.stringify({ ...WRONG_UNIT, columns: WRONG_UNIT.columns.map((c) => (c.index === 1 ? { ...c, unit: "µS/cm" } : c)) }),
        })
        .returning("id")
        .executeTakeFirstOrThrow()
    ).id;

    // Without a profile chosen the action says so.
    const missing = await request(`/uploads/${ownUpload}`, { jar: technician, form: { intent: "reprocess", profileId: "" } });
    expect(missing.status).toBe(400);
    expect(await missing.text()).toContain("Choose an import profile");

    const res = await request(`/uploads/${ownUpload}`, { jar: technician, form: { intent: "reprocess", profileId: corrected } });
    expect(res.status).toBe(302);
    expect(res.headers.get("Location")).toBe(`/uploads/${ownUpload}?saved=reprocess`);
    const queued = await db.selectFrom("upload").select(["status", "profile_id"]).where("id", "=", ownUpload).executeTakeFirstOrThrow();
    expect(queued).toEqual({ status: "queued", profile_id: corrected });

    const done = await processUpload(ownUpload);
    expect(done.status).toBe("done");
    // Four good rows; the fifth has markup for conductivity and stays rejected.
    expect(done.rows_accepted).toBe(4);
    expect(done.rows_rejected).toBe(1);
    const after = await db.selectFrom("readings").select(["conductivity_us_cm"]).where("upload_id", "=", ownUpload).orderBy("time").execute();
    expect(after.map((r) => r.conductivity_us_cm)).toEqual([500, 501, 502, 503]);
    // The officer's upload of the same logger and site is untouched.
    const officersAfter = await db.selectFrom("readings").select(["time", "conductivity_us_cm"]).where("upload_id", "=", officersUpload).orderBy("time").execute();
    expect(officersAfter).toEqual(officersBefore);
  });
});
