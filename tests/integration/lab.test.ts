import { beforeAll, describe, expect, it } from "vitest";
import { labCheck } from "#app/lib/water/index.ts";
import { db } from "#app/utils/db.server.ts";
import { request, signIn, type Jar } from "../support/app.ts";
import { createFixedRecords, FIXED } from "../support/fixed-records.ts";
import { createPeople, TEST_PASSWORD } from "../support/people.ts";

// Lab checks driven through the production build, as a browser without JavaScript would post the
// forms. The analyses are invented (Marrowby-style river water); the expected check results come
// from labCheck itself (this file tests the wiring: what the server computes and stores), except
// where a comment names another source.

let officer: Jar;
let technician: Jar;
let people: Awaited<ReturnType<typeof createPeople>>;

beforeAll(async () => {
  people = await createPeople(db);
  await createFixedRecords(db);
  officer = await signIn("officer@test.example", TEST_PASSWORD);
  technician = await signIn("technician@test.example", TEST_PASSWORD);
});

const RIVER = { Ca: 54, Mg: 6.6, Na: 20.5, K: 3.2, NH4: 0.05, Cl: 31, SO4: 30, HCO3: 146, CO3: 0, NO3: 12.4, F: 0.11 };

function entryForm(overrides: Record<string, string> = {}) {
  const form: Record<string, string> = {
    intent: "save",
    siteId: FIXED.siteId,
    // The fixture site keeps Europe/London time; 14 July is in British Summer Time (UTC+1, the
    // published UK clock-change rule), so this is 08:30 UTC.
    sampledAt: "2025-07-14T09:30",
    labReference: "MWC-25-0711",
    measuredEc: "410",
    measuredTds: "262",
    pH: "7.8",
    notes: "Low flow after a dry week.",
  };
  for (const [ion, mg] of Object.entries(RIVER)) form[`ions.${ion}`] = String(mg);
  return { ...form, ...overrides };
}

async function sampleCount() {
  const row = await db.selectFrom("lab_sample").select((eb) => eb.fn.countAll<number>().as("n")).executeTakeFirstOrThrow();
  return Number(row.n);
}

function csvUpload(text: string, jar: Jar = officer) {
  const body = new FormData();
  body.set("intent", "upload");
  body.set("file", new File([text], "analyses.csv", { type: "text/csv" }));
  return request("/lab/new", { jar, method: "POST", body });
}

describe("entering an analysis", () => {
  it("stores the analysis with the checks labCheck gives, and shows them on the result page", async () => {
    const res = await request("/lab/new", { jar: officer, form: entryForm() });
    expect(res.status).toBe(302);
    const location = res.headers.get("Location")!;
    expect(location).toMatch(/^\/lab\/[0-9a-f-]{36}\?saved=created$/);
    const id = location.slice("/lab/".length, location.indexOf("?"));

    const row = await db
      .selectFrom("lab_sample")
      .select(["site_id", "sampled_at", "lab_reference", "ions_mg_l", "measured_ec_us_cm", "calculated_ec_us_cm", "calculated_tds_mg_l", "ec_ratio", "ion_balance_percent", "verdict", "results", "entered_by"])
      .where("id", "=", id)
      .executeTakeFirstOrThrow();
    const expected = labCheck({ ionsMgPerL: RIVER, measuredEcUsPerCm: 410, measuredTdsMgPerL: 262, pH: 7.8 });
    expect(row.site_id).toBe(FIXED.siteId);
    expect(row.sampled_at.toISOString()).toBe("2025-07-14T08:30:00.000Z");
    expect(row.ions_mg_l).toEqual(RIVER);
    expect(row.entered_by).toBe(people.officer.id);
    expect(row.calculated_ec_us_cm).toBeCloseTo(expected.calculatedConductivity.calculatedEcUsPerCm, 9);
    expect(row.calculated_tds_mg_l).toBeCloseTo(expected.calculatedTdsMgPerL, 9);
    expect(row.ec_ratio).toBeCloseTo(expected.calculatedConductivity.calculatedEcUsPerCm / 410, 9);
    expect(row.ion_balance_percent).toBeCloseTo(expected.ionBalance.percentDifference, 9);
    expect(row.verdict).toBe(expected.overall);
    expect(row.results).toEqual(JSON.parse(JSON.stringify(expected)));
    const verdicts = (row.results as typeof expected).checks.map((c) => [c.id, c.verdict]);
    expect(verdicts).toEqual(expected.checks.map((c) => [c.id, c.verdict]));

    const audit = await db.selectFrom("audit_event").select(["action", "person_id"]).where("entity", "=", "lab_sample").where("entity_id", "=", id).execute();
    expect(audit).toEqual([{ action: "create", person_id: people.officer.id }]);

    const page = await request(location, { jar: officer });
    expect(page.status).toBe(200);
    const html = await page.text();
    expect(html).toContain("Lab check saved.");
    expect(html).toContain("Screening estimate.");
    expect(html).toContain("Anion–cation balance");
    expect(html).toContain("Davies activity coefficient");
    // Every check labCheck returned is a row of the table, with its verdict word.
    for (const c of expected.checks) expect(html).toContain(`data-check="${c.id}"`);

    const listed = await (await request("/lab?site=FX-01", { jar: officer })).text();
    expect(listed).toContain(`href="/lab/${id}"`);
  });

  it("answers 400 with an inline error beside each bad field and saves nothing", async () => {
    const before = await sampleCount();
    const res = await request("/lab/new", {
      jar: officer,
      form: entryForm({ "ions.Ca": "-4", pH: "15", measuredEc: "0", sampledAt: "2999-01-01T10:00" }),
    });
    expect(res.status).toBe(400);
    const html = await res.text();
    expect(html).toContain("The calcium concentration cannot be negative");
    expect(html).toContain("The pH must be between 0 and 14");
    expect(html).toContain("The measured EC must be more than 0 µS/cm");
    expect(html).toContain("The sampling time is in the future");
    for (const name of ["ions.Ca", "pH", "measuredEc", "sampledAt"]) {
      const input = new RegExp(`<input[^>]*name="${name.replace(".", "\\.")}"[^>]*>`).exec(html)?.[0] ?? "";
      expect(input, name).toContain('aria-invalid="true"');
    }
    expect(await sampleCount()).toBe(before);
  });

  it("asks for two cations and two anions", async () => {
    const only: Record<string, string> = { intent: "save", siteId: FIXED.siteId, sampledAt: "2025-07-14T09:30", "ions.Na": "20", "ions.Cl": "31", "ions.Ca": "0" };
    const res = await request("/lab/new", { jar: officer, form: only });
    expect(res.status).toBe(400);
    expect(await res.text()).toContain("Enter at least 2 cations and 2 anions");
  });

  it("refuses a technician, for the page and the save", async () => {
    const before = await sampleCount();
    expect((await request("/lab/new", { jar: technician })).status).toBe(403);
    expect((await request("/lab/new", { jar: technician, form: entryForm() })).status).toBe(403);
    expect((await csvUpload(`site_code,sampled_at,Ca,Mg,Cl,SO4\nFX-01,2025-07-01 10:00,10,2,8,6\n`, technician)).status).toBe(403);
    expect(await sampleCount()).toBe(before);
  });
});

describe("importing a CSV", () => {
  const header = "site_code,sampled_at,lab_reference,Ca,Mg,Na,K,NH4,Cl,SO4,HCO3,CO3,NO3,F,EC,TDS,pH";
  const good1 = "FX-01,2025-05-02 10:15,MWC-25-0501,54,6.6,20.5,3.2,0.05,31,30,146,0,12.4,0.11,410,262,7.8";
  const good2 = "fx-01,2025-05-09T11:00Z,MWC-25-0502,48,6.1,18.5,3.2,,31,28,146,0,12.4,0.11,420,268,7.8";

  it("saves nothing when one row is bad, and names its row and column", async () => {
    const before = await sampleCount();
    const bad = "FX-01,2025-05-16 09:00,MWC-25-0503,51,6.3,-19,3.1,0.04,30,29,140,0,11.9,0.1,405,259,7.7";
    const res = await csvUpload([header, good1, bad, good2].join("\n"));
    expect(res.status).toBe(400);
    const html = await res.text();
    // Row 3: the column names are row 1, as a spreadsheet counts.
    expect(html).toMatch(/data-row="3" data-column="Na"/);
    expect(html).toContain("The sodium concentration cannot be negative");
    expect(html).toContain("Nothing was saved");
    expect(html).not.toMatch(/data-row="2"/);
    expect(await sampleCount()).toBe(before);
  });

  it("reports an unknown site code and an unreadable number", async () => {
    const res = await csvUpload([header, good1.replace("FX-01", "ZZ-99"), good2.replace(",420,", ",<5,")].join("\r\n"));
    expect(res.status).toBe(400);
    const html = await res.text();
    expect(html).toMatch(/data-row="2" data-column="site_code"/);
    expect(html).toContain("No site has this code");
    expect(html).toMatch(/data-row="3" data-column="EC"/);
  });

  it("saves every row in one go when all are good, each checked by labCheck", async () => {
    const before = await sampleCount();
    const res = await csvUpload([header, good1, "", good2].join("\n"));
    expect(res.status).toBe(302);
    expect(res.headers.get("Location")).toBe("/lab?imported=2");
    const rows = await db
      .selectFrom("lab_sample")
      .select(["id", "sampled_at", "calculated_ec_us_cm", "verdict", "lab_reference"])
      .where("lab_reference", "in", ["MWC-25-0501", "MWC-25-0502"])
      .orderBy("sampled_at")
      .execute();
    expect(rows.map((r) => r.sampled_at.toISOString())).toEqual([
      "2025-05-02T09:15:00.000Z", // site time in BST (UTC+1)
      "2025-05-09T11:00:00.000Z", // given in UTC
    ]);
    const second = labCheck({
      ionsMgPerL: { Ca: 48, Mg: 6.1, Na: 18.5, K: 3.2, Cl: 31, SO4: 28, HCO3: 146, CO3: 0, NO3: 12.4, F: 0.11 },
      measuredEcUsPerCm: 420,
      measuredTdsMgPerL: 268,
      pH: 7.8,
    });
    expect(rows[1].calculated_ec_us_cm).toBeCloseTo(second.calculatedConductivity.calculatedEcUsPerCm, 9);
    expect(rows[1].verdict).toBe(second.overall);
    expect(await sampleCount()).toBe(before + 2);
    const audits = await db.selectFrom("audit_event").select(["action", "reason"]).where("entity_id", "in", rows.map((r) => r.id)).execute();
    expect(audits).toEqual([
      { action: "create", reason: "CSV import" },
      { action: "create", reason: "CSV import" },
    ]);
  });

  it("offers a template that imports as it is once the site code is one of ours", async () => {
    const res = await request("/api/lab/template.csv", { jar: officer });
    expect(res.status).toBe(200);
    expect(res.headers.get("Content-Type")).toContain("text/csv");
    const text = (await res.text()).replace(/^\uFEFF/, "");
    expect(text.split("\r\n")[0]).toContain("site_code,sampled_at,lab_reference,Ca,Mg,Na,K,NH4,Cl,SO4,HCO3,CO3,NO3,F,EC,TDS,pH");
    const upload = await csvUpload(text.replace("QF2", "FX-01").replace("MWC-25-0412", "TEMPLATE-ROW"));
    expect(upload.status).toBe(302);
  });
});

describe("editing and deleting", () => {
  it("recomputes on edit and leaves an audit row for the edit and for the delete", async () => {
    const created = await request("/lab/new", { jar: officer, form: entryForm({ labReference: "MWC-25-EDIT" }) });
    const id = created.headers.get("Location")!.split("/")[2].split("?")[0];

    const edited = await request(`/lab/${id}/edit`, { jar: officer, form: entryForm({ labReference: "MWC-25-EDIT", "ions.Na": "60" }) });
    expect(edited.status).toBe(302);
    expect(edited.headers.get("Location")).toBe(`/lab/${id}?saved=saved`);
    const row = await db.selectFrom("lab_sample").select(["calculated_ec_us_cm", "verdict", "ions_mg_l"]).where("id", "=", id).executeTakeFirstOrThrow();
    const expected = labCheck({ ionsMgPerL: { ...RIVER, Na: 60 }, measuredEcUsPerCm: 410, measuredTdsMgPerL: 262, pH: 7.8 });
    expect(row.ions_mg_l.Na).toBe(60);
    expect(row.calculated_ec_us_cm).toBeCloseTo(expected.calculatedConductivity.calculatedEcUsPerCm, 9);
    expect(row.verdict).toBe(expected.overall);

    const again = await request(`/lab/${id}/edit`, { jar: officer, form: entryForm({ labReference: "MWC-25-EDIT", "ions.Na": "60" }) });
    expect(again.headers.get("Location")).toBe(`/lab/${id}?saved=unchanged`);

    const deleted = await request(`/lab/${id}`, { jar: officer, form: { intent: "delete", reason: "Entered twice" } });
    expect(deleted.status).toBe(302);
    expect(await db.selectFrom("lab_sample").select("id").where("id", "=", id).executeTakeFirst()).toBeUndefined();
    const audit = await db
      .selectFrom("audit_event")
      .select(["action", "before", "after", "reason"])
      .where("entity", "=", "lab_sample")
      .where("entity_id", "=", id)
      .orderBy("id")
      .execute();
    expect(audit.map((a) => a.action)).toEqual(["create", "update", "delete"]);
    expect(audit[1].before).toMatchObject({ ions_mg_l: { Na: 20.5 } });
    expect(audit[1].after).toMatchObject({ ions_mg_l: { Na: 60 } });
    expect(audit[2]).toMatchObject({ reason: "Entered twice", after: null, before: { lab_reference: "MWC-25-EDIT" } });
    expect((await request(`/lab/${id}`, { jar: officer })).status).toBe(404);
  });
});
