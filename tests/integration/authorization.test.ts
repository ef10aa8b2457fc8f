import { beforeAll, describe, expect, it } from "vitest";
import routes from "#app/routes.ts";
import type { RouteConfigEntry } from "@react-router/dev/routes";
import { db } from "#app/utils/db.server.ts";
import { request, signIn, type Jar } from "../support/app.ts";
import { createPeople, TEST_PASSWORD } from "../support/people.ts";
import { createFixedRecords, FIXED } from "../support/fixed-records.ts";
import { createFixedUploadRecords, FIXED_UPLOAD } from "../support/fixed-uploads.ts";
import { createFixedAlertRecords, FIXED_ALERTS } from "../support/fixed-alerts.ts";
import { createFixedVisitRecords, FIXED_VISIT } from "../support/fixed-visits.ts";
import type { RoleName } from "#db/schema.ts";

// The authorisation table: every route in app/routes.ts × every role × signed out. Adding a route
// without a row here fails the "covers every route" test below.
const ALL: RoleName[] = ["technician", "officer", "manager", "admin"];
const FIELD: RoleName[] = ["technician", "officer", "admin"];
type Row = {
  pattern: string; // as written in routes.ts (path params as :name)
  path?: string; // a concrete path to request; defaults to pattern
  public?: true; // reachable signed out
  get?: RoleName[]; // roles that get 200 on GET
  post?: RoleName[]; // roles whose POST passes the role check (anything but 302-to-sign-in/401/403)
  api?: true; // answers 401 JSON instead of redirecting when signed out
  skip?: string; // why the generic checks do not apply
};

export const AUTH_TABLE: Row[] = [
  { pattern: "sign-in", public: true },
  { pattern: "sign-out", public: true, skip: "POST-only sign-out; GET redirects home" },
  { pattern: "forgot-password", public: true },
  { pattern: "reset-password/:token", path: "reset-password/not-a-real-token", public: true },
  { pattern: "/", get: ALL },
  { pattern: "account", get: ALL, post: ALL },
  { pattern: "sites/:siteCode", path: "sites/FX-01", get: ALL },
  { pattern: "sites/:siteCode/settings", path: "sites/FX-01/settings", get: ["officer", "admin"], post: ["officer", "admin"] },
  { pattern: "compare", path: "compare?sites=FX-01", get: ALL },
  { pattern: "uploads", get: FIELD, post: FIELD },
  // The fixed upload belongs to technician@test.example, so the technician gets 200 here.
  { pattern: "uploads/:uploadId", path: `uploads/${FIXED_UPLOAD.uploadId}`, get: FIELD, post: FIELD },
  { pattern: "import-profiles", get: FIELD, post: FIELD },
  { pattern: "import-profiles/new", get: FIELD, post: FIELD },
  { pattern: "import-profiles/:profileId", path: `import-profiles/${FIXED_UPLOAD.profileId}`, get: FIELD, post: FIELD },
  { pattern: "admin/people", get: ["admin"], post: ["admin"] },
  { pattern: "admin/people/:personId", path: `admin/people/${FIXED.personId}`, get: ["admin"], post: ["admin"] },
  { pattern: "admin/sites", get: ["admin"], post: ["admin"] },
  { pattern: "admin/sites/new", get: ["admin"], post: ["admin"] },
  { pattern: "admin/sites/:siteId", path: `admin/sites/${FIXED.siteId}`, get: ["admin"], post: ["admin"] },
  { pattern: "admin/loggers", get: ["admin"], post: ["admin"] },
  { pattern: "admin/loggers/new", get: ["admin"], post: ["admin"] },
  { pattern: "admin/loggers/:loggerId", path: `admin/loggers/${FIXED.loggerId}`, get: ["admin"], post: ["admin"] },
  { pattern: "admin/outbox", get: ["admin"], post: ["admin"] },
  { pattern: "lab", get: ["officer", "admin"], post: ["officer", "admin"] },
  { pattern: "lab/new", get: ["officer", "admin"], post: ["officer", "admin"] },
  { pattern: "lab/:sampleId", path: `lab/${FIXED.labSampleId}`, get: ["officer", "admin"], post: ["officer", "admin"] },
  { pattern: "lab/:sampleId/edit", path: `lab/${FIXED.labSampleId}/edit`, get: ["officer", "admin"], post: ["officer", "admin"] },
  { pattern: "visits", get: FIELD, post: FIELD },
  { pattern: "visits/new", get: FIELD, post: FIELD },
  // The fixed visit was recorded by technician@test.example, who may see and change it.
  { pattern: "visits/:visitId", path: `visits/${FIXED_VISIT.visitId}`, get: FIELD, post: FIELD },
  { pattern: "visits/:visitId/edit", path: `visits/${FIXED_VISIT.visitId}/edit`, get: FIELD, post: FIELD },
  { pattern: "corrections", get: ["officer", "admin"], post: ["officer", "admin"] },
  { pattern: "sites/:siteCode/corrections", path: "sites/FX-01/corrections", get: ["officer", "admin"], post: ["officer", "admin"] },
  { pattern: "summaries", get: ["officer", "manager", "admin"], post: ["admin"] },
  { pattern: "summaries/sites/:siteCode", path: "summaries/sites/FX-01", get: ["officer", "manager", "admin"] },
  { pattern: "summaries/:week/print", path: "summaries/2025-W11/print", get: ["officer", "manager", "admin"] },
  { pattern: "reports/site", path: "reports/site?site=FX-01&from=2025-03-10&to=2025-03-16", get: ["officer", "manager", "admin"] },
  // Alert rules: every role lists the rules that tell it; officers and admins change them. The fixed
  // rule tells officers and managers. Events: officers and admins; a manager opens the fixed event
  // because they were told about it.
  { pattern: "alert-rules", get: ALL, post: ["officer", "admin"] },
  { pattern: "alert-rules/new", get: ["officer", "admin"], post: ["officer", "admin"] },
  { pattern: "alert-rules/:ruleId", path: `alert-rules/${FIXED_ALERTS.ruleId}`, get: ["officer", "manager", "admin"], post: ["officer", "admin"] },
  { pattern: "exceedances", get: ["officer", "admin"], post: ["officer", "admin"] },
  { pattern: "exceedances/:exceedanceId", path: `exceedances/${FIXED_ALERTS.exceedanceId}`, get: ["officer", "manager", "admin"], post: ["officer", "admin"] },
  { pattern: "notifications", get: ALL, post: ALL },
  { pattern: "api/health", public: true },
  { pattern: "api/uploads", get: ["technician", "officer", "admin"], post: ["technician", "officer", "admin"], api: true },
  {
    pattern: "api/uploads/:uploadId/errors.csv",
    path: "api/uploads/00000000-0000-4000-8000-000000000000/errors.csv",
    api: true,
    skip: "needs an upload; covered in ingest.test.ts (404 for an unknown id after the role check)",
  },
  {
    pattern: "api/sites/:siteId/series",
    path: `api/sites/${FIXED.siteId}/series?parameter=sc25&from=2025-01-01T00:00:00Z&to=2025-01-02T00:00:00Z`,
    get: ALL,
    api: true,
  },
  {
    pattern: "api/sites/:siteId/export.csv",
    path: `api/sites/${FIXED.siteId}/export.csv?from=2025-01-01T00:00:00Z&to=2025-01-02T00:00:00Z`,
    get: ALL,
    api: true,
  },
  { pattern: "api/lab/template.csv", get: ["officer", "admin"], post: ["officer", "admin"], api: true },
  { pattern: "api/visits/photos", get: FIELD, post: FIELD, api: true },
  { pattern: "api/summaries/:week/table.csv", path: "api/summaries/2025-W11/table.csv", get: ["officer", "manager", "admin"], api: true },
  { pattern: "*", path: "no/such/page", public: true, skip: "catch-all answers 404 to everyone" },
];

function flatten(entries: RouteConfigEntry[], parent = ""): string[] {
  return entries.flatMap((e) => {
    const here = e.index ? parent || "/" : e.path ? [parent, e.path].filter(Boolean).join("/") : parent;
    const own = e.path || e.index ? [here] : [];
    return [...own, ...(e.children ? flatten(e.children, here) : [])];
  });
}

// A POST to an index route goes to "?index" (React Router's convention).
const postPath = (path: string) => (path === "/" ? "/?index" : path);

let jars: Record<RoleName, Jar>;

beforeAll(async () => {
  await createPeople(db);
  await createFixedRecords(db);
  await createFixedUploadRecords(db);
  await createFixedAlertRecords(db);
  await createFixedVisitRecords(db);
  jars = Object.fromEntries(
    await Promise.all(ALL.map(async (r) => [r, await signIn(`${r}@test.example`, TEST_PASSWORD)] as const)),
  ) as Record<RoleName, Jar>;
});

describe("authorisation table", () => {
  it("covers every route in app/routes.ts", async () => {
    const declared = new Set(flatten(await routes));
    const covered = new Set(AUTH_TABLE.map((r) => r.pattern));
    expect([...declared].filter((p) => !covered.has(p))).toEqual([]);
    expect([...covered].filter((p) => !declared.has(p))).toEqual([]);
  });

  for (const row of AUTH_TABLE.filter((r) => !r.public && !r.skip)) {
    const path = "/" + (row.path ?? row.pattern).replace(/^\//, "");
    it(`${path}: signed out is sent to sign-in`, async () => {
      const res = await request(path);
      if (row.api) expect(res.status).toBe(401);
      else {
        expect(res.status).toBe(302);
        expect(res.headers.get("Location")).toMatch(/^\/sign-in/);
      }
    });
    for (const role of ALL) {
      const getAllowed = row.get?.includes(role) ?? false;
      it(`${path}: GET as ${role} → ${getAllowed ? 200 : 403}`, async () => {
        const res = await request(path, { jar: jars[role] });
        expect(res.status).toBe(getAllowed ? 200 : 403);
      });
      const postAllowed = row.post?.includes(role) ?? false;
      it(`${path}: POST as ${role} ${postAllowed ? "passes the role check" : "→ 403"}`, async () => {
        const res = await request(postPath(path), { jar: jars[role], form: { intent: "__probe__" } });
        if (postAllowed) expect([200, 204, 302, 400, 404, 405]).toContain(res.status);
        else expect([403, 405]).toContain(res.status);
      });
    }
    it(`${path}: POST signed out is refused`, async () => {
      const res = await request(postPath(path), { form: { intent: "__probe__" } });
      expect([302, 401, 405]).toContain(res.status);
      if (res.status === 302) expect(res.headers.get("Location")).toMatch(/^\/sign-in/);
    });
  }

  for (const row of AUTH_TABLE.filter((r) => r.public && !r.skip)) {
    const path = "/" + (row.path ?? row.pattern).replace(/^\//, "");
    it(`${path}: public page answers signed out`, async () => {
      const res = await request(path);
      expect(res.status).toBe(200);
    });
  }

  it("unknown pages answer 404 for everyone", async () => {
    expect((await request("/no/such/page")).status).toBe(404);
    expect((await request("/no/such/page", { jar: jars.admin })).status).toBe(404);
  });
});
