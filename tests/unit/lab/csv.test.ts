import { describe, expect, it } from "vitest";
import { LAB_CSV_MAX_ROWS, labCsvTemplate, parseLabCsv } from "#app/lib/lab/csv.ts";

// The lab-analysis CSV import: every row checked before anything is saved. Expected instants follow
// the published UK clock-change rule (GMT = UTC in winter, BST = UTC+1 from the last Sunday of March,
// 30 March in 2025, at 01:00 UTC). Analyses are invented.
const SITES = [
  { id: "11111111-1111-4111-8111-111111111111", code: "QF2", timeZone: "Europe/London" },
  { id: "22222222-2222-4222-8222-222222222222", code: "AB7", timeZone: "UTC" },
];
const NOW = new Date("2025-06-01T12:00:00Z");
const HEADER = "site_code,sampled_at,Ca,Mg,Na,Cl,SO4,HCO3";

function parse(lines: string[]) {
  return parseLabCsv(lines.join("\n"), SITES, NOW);
}

function errorsOf(result: ReturnType<typeof parse>) {
  if (result.ok) throw new Error("expected problems, got none");
  return result.errors.map((e) => `${e.row}:${e.column}:${e.reason}`);
}

describe("parseLabCsv", () => {
  it("reads good rows, matching column names ignoring case and a unit in brackets", () => {
    const result = parse(["SITE_CODE,Sampled_At,ca (mg/L),MG,Na,cl [mg/L],so4,hco3,EC (µS/cm)", "qf2,2025-01-15 09:30,40,5,12,20,15,120,300"]);
    expect(result.ok).toBe(true);
    if (!result.ok) return;
    expect(result.rows).toHaveLength(1);
    expect(result.rows[0]).toMatchObject({ row: 2, siteId: SITES[0].id, siteCode: "QF2" });
    expect(result.rows[0].sampledAt.toISOString()).toBe("2025-01-15T09:30:00.000Z"); // GMT in January
    expect(result.rows[0].values.ions).toMatchObject({ Ca: 40, Mg: 5, Na: 12, Cl: 20, SO4: 15, HCO3: 120 });
    expect(result.rows[0].values.measuredEc).toBe(300);
  });

  it("reads site time in summer as UTC+1 and honours an explicit offset", () => {
    const result = parse([HEADER, "QF2,2025-05-02 10:15,40,5,12,20,15,120", "QF2,2025-05-02T10:15+02:00,40,5,12,20,15,120", "QF2,2025-05-02T10:15Z,40,5,12,20,15,120"]);
    if (!result.ok) throw new Error(JSON.stringify(result.errors));
    expect(result.rows.map((r) => r.sampledAt.toISOString())).toEqual([
      "2025-05-02T09:15:00.000Z",
      "2025-05-02T08:15:00.000Z",
      "2025-05-02T10:15:00.000Z",
    ]);
  });

  it("counts the header as row 1 and keeps file line numbers across blank lines", () => {
    const result = parse([HEADER, "QF2,2025-05-02 10:15,40,5,12,20,15,120", "", "QF2,2025-05-03 10:15,40,5,-12,20,15,120"]);
    expect(errorsOf(result)).toEqual(["4:Na:The sodium concentration cannot be negative"]);
  });

  it("names each problem's row and column and saves no row at all", () => {
    const result = parse([
      HEADER,
      "QF2,2025-05-02 10:15,40,5,12,20,15,120",
      "ZZ9,2025-05-02 10:15,40,5,12,20,15,120",
      "AB7,2025-05-02 10:15,<0.05,5,12,20,15,120",
      "AB7,2031-01-01 00:00,40,5,12,20,15,120",
      "AB7,,40,5,12,20,15,120",
      "AB7,2025-05-02 10:15,,,12,20,,",
    ]);
    expect(result.ok).toBe(false);
    expect(errorsOf(result)).toEqual([
      "3:site_code:No site has this code",
      "4:Ca:Not a number: enter the value (0 for below the detection limit) or leave the cell empty",
      "5:sampled_at:The sampling time is in the future",
      "6:sampled_at:Enter when the sample was taken",
      "7:ions:Enter at least 2 cations and 2 anions (values above 0): the checks need both sides of the balance",
    ]);
    if (!result.ok) expect(result.message).toContain("Nothing was saved");
  });

  it("refuses a time the clocks skipped at the site", () => {
    const result = parse([HEADER, "QF2,2025-03-30 01:30,40,5,12,20,15,120"]);
    expect(errorsOf(result)[0]).toMatch(/^2:sampled_at:That time did not exist in Europe\/London/);
  });

  it("checks the header: unknown, repeated and missing columns", () => {
    expect(errorsOf(parse(["site_code,sampled_at,Ca2+,Ca,ca", "QF2,2025-05-02 10:15,1,2,3"]))).toEqual([
      "1:Ca2+:Not a column Ripplemark knows; see the layout on this page",
      "1:ca:This column appears twice",
    ]);
    expect(errorsOf(parse(["site_code,Ca,Mg", "QF2,1,2"]))).toEqual(["1:sampled_at:This column is required"]);
  });

  it("refuses a decimal comma with a hint, and an empty or oversized file", () => {
    expect(errorsOf(parse(['site_code,sampled_at,Ca,Mg,Na,Cl,SO4,HCO3', 'QF2,2025-05-02 10:15,"40,5",5,12,20,15,120']))[0]).toBe(
      "2:Ca:Not a number: use a decimal point, without thousands separators",
    );
    const empty = parseLabCsv("  \n", SITES, NOW);
    expect(empty.ok).toBe(false);
    const many = parse([HEADER, ...Array.from({ length: LAB_CSV_MAX_ROWS + 1 }, () => "QF2,2025-05-02 10:15,40,5,12,20,15,120")]);
    expect(many.ok).toBe(false);
    if (!many.ok) expect(many.message).toContain(`at most ${LAB_CSV_MAX_ROWS}`);
  });

  it("accepts its own template once the site code exists", () => {
    const template = labCsvTemplate();
    const result = parseLabCsv(template, [{ id: SITES[0].id, code: "QF2", timeZone: "Europe/London" }], NOW);
    if (!result.ok) throw new Error(JSON.stringify(result.errors));
    expect(result.rows).toHaveLength(1);
    expect(result.rows[0].values).toMatchObject({ labReference: "MWC-25-0412", measuredEc: 410, measuredTds: 262, pH: 7.8, silica: 9.5 });
  });
});
