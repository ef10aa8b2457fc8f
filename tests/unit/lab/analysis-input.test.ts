import { describe, expect, it } from "vitest";
import { draftAnalysis, labEntrySchema, labSampleColumns } from "#app/lib/lab/analysis-input.ts";
import { labCheck } from "#app/lib/water/index.ts";

// The entry schema, the live-preview draft and the stored columns. Analyses are invented.
const SITE = { id: "11111111-1111-4111-8111-111111111111", timeZone: "Europe/London" };
const NOW = () => new Date("2025-06-01T12:00:00Z");

describe("labEntrySchema", () => {
  const schema = labEntrySchema([SITE], NOW);
  const base = { siteId: SITE.id, sampledAt: "2025-05-02T10:15", ions: { Ca: 40, Mg: 5, Cl: 20, SO4: 15 }, notes: "" };

  it("turns the site's wall time into an instant (BST is UTC+1 in May, the UK clock-change rule)", () => {
    const result = schema.safeParse(base);
    expect(result.success && result.data.sampledAtInstant.toISOString()).toBe("2025-05-02T09:15:00.000Z");
  });

  it("reports every problem at once, each on its field", () => {
    const result = schema.safeParse({ ...base, sampledAt: "2025-06-02T10:00", ions: { Ca: -1, Mg: 5, Na: 12, Cl: 20, SO4: 15 }, pH: 14.5, measuredEc: 0 });
    expect(result.success).toBe(false);
    const issues = result.success ? [] : result.error.issues.map((i) => i.path.join("."));
    expect(issues.sort()).toEqual(["ions.Ca", "measuredEc", "pH", "sampledAt"]);
  });

  it("wants two cations and two anions above zero", () => {
    const result = schema.safeParse({ ...base, ions: { Ca: 40, Mg: 0, Cl: 20, SO4: 15 } });
    expect(result.success ? [] : result.error.issues.map((i) => i.path.join("."))).toEqual(["ions"]);
  });

  it("refuses a site not in the list", () => {
    expect(schema.safeParse({ ...base, siteId: "22222222-2222-4222-8222-222222222222" }).success).toBe(false);
  });
});

describe("draftAnalysis (the live preview)", () => {
  it("waits for two cations and two anions", () => {
    expect(draftAnalysis({ ions: { Ca: "40", Cl: "20", SO4: "15" } })).toBeNull();
  });

  it("leaves out fields that are not valid yet, and says which", () => {
    const draft = draftAnalysis({ ions: { Ca: "40", Mg: "5", Na: "-3", Cl: "20", SO4: "15" }, measuredEc: "abc", pH: "7.2" });
    expect(draft?.analysis).toEqual({ ionsMgPerL: { Ca: 40, Mg: 5, Cl: 20, SO4: 15 }, pH: 7.2 });
    expect(draft?.skipped).toEqual(["Na⁺", "measured EC"]);
  });
});

describe("labSampleColumns", () => {
  it("copies labCheck's figures into the columns; no EC ratio without a measured EC", () => {
    const values = { ions: { Ca: 40, Mg: 5, Na: 12, Cl: 20, SO4: 15, HCO3: 120 }, notes: "" };
    const { columns, check } = labSampleColumns(values);
    const expected = labCheck({ ionsMgPerL: values.ions });
    expect(check).toEqual(expected);
    expect(columns.calculated_ec_us_cm).toBe(expected.calculatedConductivity.calculatedEcUsPerCm);
    expect(columns.ec_ratio).toBeNull();
    expect(columns.verdict).toBe(expected.overall);
    const withEc = labSampleColumns({ ...values, measuredEc: 300 });
    expect(withEc.columns.ec_ratio).toBe(withEc.check.calculatedConductivity.calculatedEcUsPerCm / 300);
  });
});
