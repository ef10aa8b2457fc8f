import { describe, expect, test } from "vitest";
import { assessVisitInput, draftNumbers, visitSchema } from "#app/lib/visits/visit-input.ts";

// The visit form's schema, shared by the browser and the server.
const SITE = { id: "11111111-1111-4111-8111-111111111111", timeZone: "Europe/London", loggerIds: ["22222222-2222-4222-8222-222222222222"] };
const NOW = new Date("2025-07-14T12:00:00Z");
const schema = visitSchema([SITE], () => NOW);

function form(over: Record<string, unknown> = {}) {
  return { siteId: SITE.id, loggerId: SITE.loggerIds[0], visitedAt: "2025-07-14T10:00", beforeSc: 540, afterSc: 612, checks: [], ...over };
}

describe("visit form schema", () => {
  test("reads the time at the site's clock (10:00 BST is 09:00 UTC)", () => {
    const v = schema.parse(form());
    expect(v.visitedAtInstant.toISOString()).toBe("2025-07-14T09:00:00.000Z");
  });

  test("refuses a time in the future, a logger not at the site, and a reading before cleaning without one after", () => {
    const r = schema.safeParse(form({ visitedAt: "2025-07-14T18:00", loggerId: "33333333-3333-4333-8333-333333333333", afterSc: undefined }));
    expect(r.success).toBe(false);
    const paths = r.error!.issues.map((i) => i.path.join("."));
    expect(paths).toEqual(expect.arrayContaining(["visitedAt", "loggerId", "afterSc"]));
  });

  test("a custom standard needs its value; a KCl standard outside 0–50 °C is refused", () => {
    const r = schema.safeParse(form({ checks: [{ standard: "custom", temperature: 20, sensor: 500 }, { standard: "1413", temperature: 55, sensor: 1413 }] }));
    expect(r.success).toBe(false);
    const paths = r.error!.issues.map((i) => i.path.join("."));
    expect(paths).toEqual(expect.arrayContaining(["checks.0.customValue", "checks.1.temperature"]));
  });
});

describe("live assessment from what the fields hold", () => {
  test("blank and half-typed fields are left out, commas read as decimal points", () => {
    const n = draftNumbers({ beforeSc: "540", afterSc: "612,0", meterSc: "", checks: [{ standard: "1413", temperature: "25", sensor: "14" }] });
    expect(n.afterSc).toBe(612);
    expect(n.meterSc).toBeUndefined();
    const a = assessVisitInput(n);
    expect(a.fouling!.errorUsPerCm).toBe(72);
    expect(a.checks[0]!.passed).toBe(false); // 14 µS/cm in a 1413 standard: a half-typed number fails, visibly
  });

  test("an unfinished check is not computed", () => {
    const a = assessVisitInput(draftNumbers({ checks: [{ standard: "1413", temperature: "", sensor: "1400" }] }));
    expect(a.checks).toEqual([null]);
    expect(a.passed).toBeNull();
  });
});
