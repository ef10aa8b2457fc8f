import { beforeAll, describe, expect, it } from "vitest";
import { db } from "#app/utils/db.server.ts";
import { ensureBucket } from "#app/utils/storage.server.ts";
import { request, signIn, type Jar } from "../support/app.ts";
import { createPeople, TEST_PASSWORD } from "../support/people.ts";
import { processUpload, sha256, uploadFile } from "../support/uploads.ts";

// Security checks across features: injection, escaping, object keys, presigned URLs.
const PROFILE = {
  delimiter: ",", decimalMark: ".", headerRow: 0, dataStartRow: 1,
  timestamp: { kind: "single", column: 0, order: "iso" }, utcOffsetMinutes: 0, missingValues: [""],
  columns: [
    { index: 0, header: "Timestamp (UTC)", parameter: "timestamp", unit: null },
    { index: 1, header: "Cond (uS/cm)", parameter: "conductivity", unit: "µS/cm" },
    { index: 2, header: "Temp (C)", parameter: "temperature", unit: "°C" },
  ],
};
const XSS = `<script>alert("x")</script><img src=x onerror=alert(1)>`;

let tech: Jar;
let admin: Jar;
let siteId: string;
let loggerId: string;
let profileId: string;

beforeAll(async () => {
  await ensureBucket();
  await createPeople(db);
  tech = await signIn("technician@test.example", TEST_PASSWORD);
  admin = await signIn("admin@test.example", TEST_PASSWORD);
  siteId = (await db.insertInto("site").values({ code: "SEC1", name: XSS, kind: "river", latitude: 54, longitude: -3, notes: XSS }).returning("id").executeTakeFirstOrThrow()).id;
  loggerId = (await db.insertInto("logger").values({ serial: "SEC-1", model: XSS }).returning("id").executeTakeFirstOrThrow()).id;
  profileId = (await db.insertInto("import_profile").values({ name: "sec", header_signature: "s", settings: JSON.stringify(PROFILE) }).returning("id").executeTakeFirstOrThrow()).id;
});

async function presign(jar: Jar, fileName: string, sizeBytes: number, body = "x") {
  const res = await request("/api/uploads", {
    jar,
    form: { intent: "presign", fileName, sizeBytes: String(sizeBytes), contentType: "text/csv", sha256: sha256(body + fileName), siteId, loggerId, profileId },
  });
  return { status: res.status, json: (await res.json()) as { ok: boolean; uploadId: string; url: string; headers: Record<string, string>; errors?: Record<string, string[]> } };
}

describe("object keys and presigned URLs", () => {
  it("keeps a path-traversal file name inside the upload's own folder", async () => {
    const { json } = await presign(tech, "../../../etc/passwd\\..\\boot.ini", 10);
    const upload = await db.selectFrom("upload").select(["object_key", "file_name"]).where("id", "=", json.uploadId).executeTakeFirstOrThrow();
    expect(upload.object_key.startsWith(`uploads/${json.uploadId}/`)).toBe(true);
    expect(upload.object_key.slice(`uploads/${json.uploadId}/`.length)).not.toMatch(/[\\/]|\.\./);
    expect(new URL(json.url).pathname).not.toContain("..");
  });

  it("signs a short-lived URL for one key, length and type", async () => {
    const { json } = await presign(tech, "short.csv", 5);
    const url = new URL(json.url);
    expect(Number(url.searchParams.get("X-Amz-Expires"))).toBeLessThanOrEqual(300);
    expect(url.searchParams.get("X-Amz-SignedHeaders")).toMatch(/content-length/);
    expect(url.searchParams.get("X-Amz-SignedHeaders")).toMatch(/content-type/);
  });

  it("refuses a PUT larger than the size signed", async () => {
    const { json } = await presign(tech, "small.csv", 5);
    const res = await fetch(json.url, { method: "PUT", body: "much more than five bytes", headers: json.headers });
    expect(res.status).toBe(403);
    expect(await res.text()).toContain("SignatureDoesNotMatch");
  });

  it("refuses a presigned URL re-aimed at another key", async () => {
    const { json } = await presign(tech, "mine.csv", 5);
    const url = new URL(json.url);
    url.pathname = url.pathname.replace(/[^/]+$/, "someone-elses.csv");
    const res = await fetch(url, { method: "PUT", body: "12345", headers: json.headers });
    expect(res.status).toBe(403);
  });

  it("refuses to presign a file over the size limit", async () => {
    const { status, json } = await presign(tech, "huge.csv", 2 * 1024 ** 3);
    expect(status).toBe(413);
    expect(json.errors?.size?.[0]).toMatch(/limit/);
  });
});

describe("escaping", () => {
  it("never renders stored markup as HTML on the overview", async () => {
    const html = await (await request("/", { jar: admin })).text();
    expect(html).not.toContain("<script>alert");
    expect(html).not.toContain("<img src=x");
    expect(html).toContain("&lt;script&gt;");
  });

  it("neutralises spreadsheet formulas in the error report CSV", async () => {
    const body = [
      "Timestamp (UTC),Cond (uS/cm),Temp (C)",
      "2025-02-01T00:00:00Z,400,12",
      '2025-02-01T00:15:00Z,"=HYPERLINK(""http://example.invalid"",""x"")",12',
      "2025-02-01T00:30:00Z,@SUM(A1),12",
      "2025-02-01T00:45:00Z,401,12",
      "2025-02-01T01:00:00Z,402,12",
    ].join("\n");
    const up = await uploadFile(tech, { fileName: "formula.csv", body, siteId, loggerId, profileId });
    await processUpload(up.uploadId!);
    const csv = await (await request(`/api/uploads/${up.uploadId}/errors.csv`, { jar: tech })).text();
    // Every line is file,row,column,value,reason; no cell may start with = + - @ once parsed.
    expect(csv).not.toMatch(/(^|,)"?=HYPERLINK/m);
    expect(csv).not.toMatch(/(^|,)"?@SUM/m);
    expect(csv).toContain("'=HYPERLINK");
    expect(csv).toContain("'@SUM");
  });
});

describe("SQL injection attempts in free-text filters", () => {
  const attempts = ["' or 1=1 --", "%'; drop table person; --", "\\' union select password_hash from person --", "_%"];
  for (const q of attempts) {
    it(`people search treats ${JSON.stringify(q)} as text`, async () => {
      const res = await request(`/admin/people?q=${encodeURIComponent(q)}`, { jar: admin });
      expect(res.status).toBe(200);
      const html = await res.text();
      // Nobody's e-mail contains these characters, so no row may match; and no hash leaks.
      expect(html).not.toContain("technician@test.example");
      expect(html).not.toMatch(/scrypt\$/);
      const people = await db.selectFrom("person").select((eb) => eb.fn.countAll<number>().as("n")).executeTakeFirstOrThrow();
      expect(Number(people.n)).toBe(4);
    });
  }
});

describe("what pages send to the browser", () => {
  // Every page's HTML and its loader data (the `.data` a client navigation fetches) as each role
  // sees it, searched for secrets: password hashes, live session ids (stored as SHA-256), reset
  // token hashes, the cookie-signing secret, the S3 secret key and the database password.
  it("holds no secret, whoever asks", async () => {
    const people = await db.selectFrom("person").select(["id", "password_hash"]).execute();
    const technician = await db.selectFrom("person").select("id").where("role", "=", "technician").executeTakeFirstOrThrow();
    const jars: Record<string, Jar> = {
      technician: tech,
      officer: await signIn("officer@test.example", TEST_PASSWORD),
      manager: await signIn("manager@test.example", TEST_PASSWORD),
      admin,
    };
    await request("/forgot-password", { form: { email: "manager@test.example" } });
    const sessions = await db.selectFrom("session").select("id").execute();
    const tokens = await db.selectFrom("password_token").select("token_hash").execute();
    const secrets = [
      ...people.map((p) => p.password_hash).filter((h): h is string => Boolean(h)),
      "scrypt$",
      ...sessions.map((s) => s.id),
      ...tokens.map((t) => t.token_hash),
      ...process.env.SESSION_SECRET!.split(","),
      process.env.S3_SECRET_ACCESS_KEY!,
      new URL(process.env.DATABASE_URL!).password,
    ].filter((s) => s.length >= 6);
    expect(sessions.length).toBeGreaterThanOrEqual(4);
    expect(tokens.length).toBeGreaterThan(0);

    const pages: Record<string, string[]> = {
      technician: ["/", "/account", "/uploads", "/visits", "/sites/SEC1", "/notifications"],
      officer: ["/", "/exceedances", "/corrections", "/lab", "/alert-rules", "/summaries"],
      manager: ["/", "/summaries", "/sites/SEC1", "/compare"],
      admin: ["/", "/admin/people", `/admin/people/${technician.id}`, "/admin/sites", "/admin/loggers", "/admin/outbox"],
    };
    let checked = 0;
    for (const [role, paths] of Object.entries(pages)) {
      for (const path of paths) {
        for (const url of [path, path === "/" ? "/_root.data" : `${path}.data`]) {
          const res = await request(url, { jar: jars[role] });
          expect(res.status, `${role} ${url}`).toBe(200);
          const body = await res.text();
          for (const secret of secrets) expect(body.includes(secret), `${role} ${url} contains a secret`).toBe(false);
          checked++;
        }
      }
    }
    expect(checked).toBe(44);
  });
});
